// Gas absorption by correlated k-distributions on the run's spectral grid: k-terms as extra
// spectral points, several gases combined by random overlap.
#pragma once

#include <cstddef>
#include <memory>
#include <string>
#include <vector>

#include "optics/ktable.hpp"
#include "spectrum/grid.hpp"

namespace solstrata::optics {

/// The state of each layer (top first) at which tables are interpolated.
struct LayerState {
  std::vector<double> pressure_hpa;   ///< hPa: mass-weighted mean pressure (mean of the level pressures)
  std::vector<double> temperature_k;  ///< K: mean temperature
  std::vector<double> h2o_vmr;        ///< mol/mol: water-vapour volume mixing ratio (self-broadening)
};

/// One absorbing gas of a run: its table and its column per layer.
struct GasColumn {
  std::shared_ptr<const KTable> table;  ///< the gas's k-distribution
  std::vector<double> molecules;        ///< molecules cm-2: column of the gas in each layer, top first
};

/// The spectral points of a grid with their gas absorption optical depths.
struct GasPoints {
  std::size_t n_layers = 0;
  std::vector<spectrum::SpectralPoint> points;  ///< ordered by bin; weights of one bin sum to 1
  std::vector<double> tau;  ///< dimensionless: gas absorption optical depth [layer * n_points + point]
  [[nodiscard]] std::size_t n_points() const { return points.size(); }
};

/// Column optical depth below which a gas's terms in a bin are merged into one grey term (its
/// weighted-mean optical depth per layer): the transmission then changes by < tau^2/2 = 5e-9.
inline constexpr double kGreyGasTau = 1e-4;

/// Builds the points of `grid`. Each grid bin takes, from every table bin it overlaps, that bin's
/// terms with their weights times the overlapped share of the grid bin's width (the rest of the
/// width: k = 0). Exact when grid bins are table bins or unions of them; a grid bin narrower than
/// a table bin gets the table bin's distribution (an approximation). Several gases in one bin:
/// random overlap (Lacis & Oinas 1991, J. Geophys. Res. 96, 9027: products of the terms, optical
/// depths added), then re-sorted by column optical depth and re-binned into as many points as the
/// gas with the most terms has, at its cumulative weights (resort-rebin of Amundsen et al. 2017,
/// Astron. Astrophys. 598, A97), optical depth per layer the weighted mean in each new point.
/// A bin without gas absorption is one point of weight 1. Throws std::invalid_argument when a
/// column has the wrong length.
GasPoints gas_points(const spectrum::Grid& grid, const LayerState& state, const std::vector<GasColumn>& gases);

}  // namespace solstrata::optics
