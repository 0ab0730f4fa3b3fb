// A gas absorption table (k-distribution) in memory: the content of one table in the text
// format of docs/gas-tables.md.
#pragma once

#include <string>
#include <vector>

namespace solstrata::optics {

/// One spectral bin of a table: its terms (weights and cross sections on the table's nodes).
struct KTableBin {
  double lower_nm = 0.0;        ///< nm: lower edge of the bin
  double upper_nm = 0.0;        ///< nm: upper edge (> lower_nm)
  std::vector<double> weights;  ///< dimensionless: weight of each term, > 0, summing to 1
  /// cm2 molecule-1: k[term][x * np * nt + p * nt + t], on the table's h2o_vmr (x), pressure (p)
  /// and temperature (t) nodes, t fastest
  std::vector<std::vector<double>> k;
};

/// One gas's table.
struct KTable {
  std::string gas;                     ///< molecule formula, e.g. "H2O"
  std::string title;                   ///< one line
  std::vector<std::string> source;     ///< provenance lines
  std::vector<std::string> generator;  ///< how the table was made, one or more lines
  std::string weighting;               ///< "wavenumber" or "solar <spectrum name>"
  std::vector<double> pressure_hpa;    ///< hPa: pressure nodes, strictly increasing, > 0
  std::vector<double> temperature_k;   ///< K: temperature nodes, strictly increasing, > 0
  std::vector<double> h2o_vmr;  ///< dimensionless (mol/mol): water-vapour nodes; empty = one node
  std::vector<KTableBin> bins;  ///< ordered, non-overlapping bins
};

}  // namespace solstrata::optics
