// Gas absorption tables: correlated k-distributions per spectral bin (docs/gas-tables.md).
#pragma once

#include <cstddef>
#include <filesystem>
#include <stdexcept>
#include <string>
#include <vector>

namespace solstrata::optics {

/// One spectral bin of a k-table: terms (k_i, w_i) with k tabulated on the table's node grid.
struct KTableBin {
  double lower_nm = 0.0;                ///< nm: lower edge of the bin
  double upper_nm = 0.0;                ///< nm: upper edge of the bin (> lower_nm)
  std::vector<double> weights;          ///< dimensionless: share of the bin per term, sum 1
  /// cm2 molecule-1: k[term][x * n_p * n_t + p * n_t + t], >= 0
  std::vector<std::vector<double>> k;
};

/// A k-distribution table of one gas (the text format of docs/gas-tables.md, or built in).
struct KTable {
  std::string gas;                       ///< molecule formula: "H2O", "O2", "CO2"
  std::string title;                     ///< one line describing the table
  std::vector<std::string> source;       ///< provenance lines
  std::vector<std::string> generator;    ///< how it was made
  std::string weighting;                 ///< "wavenumber" or "solar <name>"
  std::vector<double> pressure_hpa;      ///< hPa: pressure nodes, strictly increasing
  std::vector<double> temperature_k;     ///< K: temperature nodes, strictly increasing
  std::vector<double> h2o_vmr;           ///< mol/mol: self-broadening nodes (empty = one node)
  std::vector<KTableBin> bins;           ///< ordered, non-overlapping bins
  std::string origin;                    ///< file it was read from, or "built in"

  [[nodiscard]] std::size_t n_x() const { return h2o_vmr.empty() ? 1 : h2o_vmr.size(); }
  [[nodiscard]] std::size_t n_nodes() const { return n_x() * pressure_hpa.size() * temperature_k.size(); }
  /// Empty when valid, else a sentence naming the bin/term and the rule broken.
  [[nodiscard]] std::string validate() const;
};

/// A problem in a k-table file: the file, the 1-based line and what is wrong.
class KTableError : public std::runtime_error {
 public:
  KTableError(const std::string& file, std::size_t line, const std::string& message);
  [[nodiscard]] std::size_t line() const { return line_; }

 private:
  std::size_t line_;
};

/// Reads a table in the text format of docs/gas-tables.md (version 1). Throws KTableError naming
/// the file and line on any problem (missing file, unknown keyword, bad number, wrong count, a
/// broken rule of validate()).
KTable read_ktable(const std::filesystem::path& path);

/// Interpolation weights of one layer state on a table's node grid (see interpolate_k).
struct NodeWeights {
  std::size_t p0 = 0, t0 = 0, x0 = 0;     ///< lower bracketing node indices
  double fp_log = 0.0;  ///< ln(p / p_lower) / ln(p_upper / p_lower), [0, 1]
  double fp_lin = 0.0;  ///< (p - p_lower) / (p_upper - p_lower), [0, 1] (where a node's k is 0)
  double ft = 0.0, fx = 0.0;  ///< fractions towards the upper T and x node, [0, 1]
};
/// Brackets (p, T, x) on the table's nodes, clamped to the node range.
NodeWeights node_weights(const KTable& t, double p_hpa, double t_k, double h2o_vmr);

/// cm2 molecule-1: k of one term at a layer state: log k linear in log p (linear in k where a
/// bracketing node is 0), then linear in T, then linear in x (docs/gas-tables.md, "Use").
double interpolate_k(const KTable& t, const std::vector<double>& k_nodes, const NodeWeights& w);

}  // namespace solstrata::optics
