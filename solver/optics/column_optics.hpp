// Optical properties of a whole column on a spectral grid, in the two-stream solver's layout.
#pragma once

#include <cstddef>
#include <memory>
#include <string>
#include <vector>

#include "atmos/profile.hpp"
#include "optics/aerosol.hpp"
#include "optics/ktable.hpp"
#include "spectrum/grid.hpp"

namespace solstrata::optics {

/// Which components enter the optics, and how.
struct OpticsOptions {
  /// include Rayleigh scattering by air (Bodhaine et al. 1999)
  bool rayleigh = true;
  /// include ozone absorption (table in optics/ozone.hpp)
  bool ozone = true;
  /// include the aerosol of the AerosolSpec (its tau_ref may still be 0)
  bool aerosol = true;
  /// apply the ozone cross sections' temperature coefficients at each layer's mean temperature
  /// (on by default: every profile carries temperatures)
  bool ozone_temperature_dependence = true;
  /// DU: when > 0, the profile's ozone is rescaled to this total column first
  double total_ozone_du = 0.0;
  /// k-distribution tables of the absorbing gases (H2O, O2, CO2); each adds k-terms as spectral
  /// points (optics/gas_absorption.hpp). Empty: no gas absorption but ozone.
  std::vector<std::shared_ptr<const KTable>> gas_tables;

  /// Empty when valid, else a sentence naming the field, its value and the rule.
  [[nodiscard]] std::string validate() const;
};

/// Column optics on a set of spectral points: one per bin (weight 1) where no gas table
/// absorbs, else one per k-term (weights of a bin sum to 1). Per-layer arrays use the solver's layout [layer * n_points + point], layer 0 at the
/// top, so the points can be passed as the "problems" of one rt::solve_columns call.
struct ColumnOptics {
  std::size_t n_layers = 0;
  std::size_t n_points = 0;
  std::vector<double> tau;    ///< dimensionless: layer optical depth [layer * n_points + point]
  std::vector<double> omega;  ///< dimensionless: layer single-scattering albedo, same layout
  std::vector<double> g;      ///< dimensionless: layer asymmetry parameter, same layout
  std::vector<std::size_t> point_bin;  ///< index of each point's bin in the grid [point]
  std::vector<double> point_weight;    ///< dimensionless: share of the bin's irradiance [point]
  std::vector<double> wavelength_nm;   ///< nm: wavelength at which each point's optics were taken
  std::vector<double> column_tau_rayleigh;  ///< dimensionless: column Rayleigh optical depth [point]
  std::vector<double> column_tau_ozone;     ///< dimensionless: column ozone optical depth [point]
  std::vector<double> column_tau_aerosol;   ///< dimensionless: column aerosol optical depth [point]
  std::vector<double> column_tau_gas;       ///< dimensionless: column k-term gas optical depth [point]
  /// dimensionless: share of each layer's scattering optical depth due to Rayleigh scattering,
  /// [layer * n_points + point] (for the Rayleigh phase function of the multi-stream reference)
  std::vector<double> rayleigh_fraction;
};

/// Where the mixed per-layer optics of one column go inside a batch of solver problems (several
/// columns can share one batch): element (layer, point) at [layer * stride + offset + point].
struct MixedTarget {
  double* tau = nullptr;
  double* omega = nullptr;
  double* g = nullptr;
  double* rayleigh_fraction = nullptr;  ///< null: not written (only the multi-stream reference needs it)
  std::size_t stride = 0;
  std::size_t offset = 0;
};

/// A column's optics in two steps, so that a batch of columns can be sized before it is filled:
/// the constructor does everything per bin (cross sections, aerosol, gas k-terms, all cached
/// between columns that share them) and fills the per-point values of per_point() (its per-layer
/// arrays stay empty); mix_into() then writes the per-layer mixed optics into the caller's batch.
class PreparedColumn {
 public:
  /// Same inputs, checks and exceptions as build_column_optics.
  PreparedColumn(const atmos::Profile& profile, const spectrum::Grid& grid, const AerosolSpec& aerosol,
                 const OpticsOptions& options);
  ~PreparedColumn();
  PreparedColumn(PreparedColumn&&) noexcept;
  PreparedColumn& operator=(PreparedColumn&&) noexcept;

  [[nodiscard]] std::size_t n_points() const { return meta_.n_points; }
  [[nodiscard]] std::size_t n_layers() const { return meta_.n_layers; }
  /// Points, weights, wavelengths and column optical depths per component (per-layer arrays empty).
  [[nodiscard]] const ColumnOptics& per_point() const { return meta_; }
  /// Writes tau, omega, g (and the Rayleigh fraction when asked) of every layer and point.
  void mix_into(const MixedTarget& target) const;

 private:
  struct Tables;
  ColumnOptics meta_;
  std::unique_ptr<Tables> tables_;
};

/// Builds the optics of `profile` at every bin of `grid` (optics at each bin's centre):
/// Rayleigh tau = cross section x layer air column; ozone tau = cross section (optionally at the
/// layer temperature) x layer ozone column; aerosol tau = Ångström column value x layer share,
/// with its omega and g; gases of `options.gas_tables` as k-terms (gas_points); mixed by OpticsMixer. Throws std::invalid_argument (message names the
/// field) when the profile, grid, aerosol or options are invalid, or a bin centre is outside
/// the optics' range (230 nm .. 100 um).
ColumnOptics build_column_optics(const atmos::Profile& profile, const spectrum::Grid& grid,
                                 const AerosolSpec& aerosol, const OpticsOptions& options);

}  // namespace solstrata::optics
