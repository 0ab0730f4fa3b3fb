// Wavelength grid of bins, spectral points and reporting bands.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

namespace solstrata::spectrum {

/// One wavelength bin [lower_nm, upper_nm). The optics are evaluated at `center_nm`; fluxes of
/// the bin are bin-integrated (W m-2), so summing bins gives broadband.
struct Bin {
  double lower_nm;   ///< nm: lower edge
  double upper_nm;   ///< nm: upper edge (> lower_nm)
  double center_nm;  ///< nm: representative wavelength at which the optics are evaluated

  /// nm: bin width, the quadrature weight that turns W m-2 nm-1 into W m-2.
  [[nodiscard]] double width_nm() const { return upper_nm - lower_nm; }
};

/// A stretch of the grid with uniform bin width.
struct GridSegment {
  double from_nm;  ///< nm: first edge
  double to_nm;    ///< nm: last edge (> from_nm)
  double step_nm;  ///< nm: bin width; the last bin of the segment is shortened to end at to_nm
};

/// A named reporting interval [lower_nm, upper_nm) that aggregates whole bins.
struct Band {
  std::string name;  ///< user's label, e.g. "PAR"
  double lower_nm;   ///< nm: lower edge
  double upper_nm;   ///< nm: upper edge (> lower_nm)
};

/// Bins [first, last) of the grid that make up a band.
struct BinRange {
  std::size_t first = 0;
  std::size_t last = 0;
};

/// The default segments: 250-280 nm in 5 nm, 280-340 nm in 1 nm (ozone cross section and hence
/// UV-B transmittance change by a factor of e within a few nm there), 340-400 nm in 5 nm, 400-700
/// nm in 10 nm, 700-1000 nm in 20 nm, 1000-2000 nm in 50 nm, 2000-4000 nm in 100 nm: 163 bins.
std::vector<GridSegment> default_segments();

/// Commonly used bands: UV-B 280-315, UV-A 315-400, PAR 400-700, NIR 700-4000 nm (CIE / ISO 21348
/// style divisions, common practice).
std::vector<Band> default_bands();

/// Contiguous, ordered bins covering one wavelength interval, with the reporting bands that
/// aggregate them. Construct with make_grid; bins never straddle a band edge.
class Grid {
 public:
  Grid() = default;
  /// Takes ordered, contiguous bins and bands whose edges coincide with bin edges (as make_grid
  /// produces); throws std::invalid_argument otherwise.
  Grid(std::vector<Bin> bins, std::vector<Band> bands);

  [[nodiscard]] const std::vector<Bin>& bins() const { return bins_; }
  [[nodiscard]] std::size_t size() const { return bins_.size(); }
  [[nodiscard]] const std::vector<Band>& bands() const { return bands_; }
  /// nm: the grid's first and last edge.
  [[nodiscard]] double lower_nm() const { return bins_.empty() ? 0.0 : bins_.front().lower_nm; }
  [[nodiscard]] double upper_nm() const { return bins_.empty() ? 0.0 : bins_.back().upper_nm; }
  /// The bins of band `b` (index into bands()).
  [[nodiscard]] BinRange band_bins(std::size_t b) const { return band_bins_.at(b); }
  /// nm: representative wavelengths of all bins, in order.
  [[nodiscard]] std::vector<double> centers_nm() const;

 private:
  std::vector<Bin> bins_;
  std::vector<Band> bands_;
  std::vector<BinRange> band_bins_;
};

/// Empty when valid, else a sentence naming the segment/field, its value and the rule. Segments
/// must be ordered, contiguous (each from_nm equals the previous to_nm), with 0 < step <= width
/// and wavelengths in (0, 1e6) nm.
std::string validate(const std::vector<GridSegment>& segments);
/// Empty when every band is valid for a grid covering [lower_nm, upper_nm], else a sentence
/// naming the band, its value and the rule (edges ordered and inside the grid, names unique).
std::string validate(const std::vector<Band>& bands, double lower_nm, double upper_nm);

/// Builds the bins of `segments`, then splits any bin that straddles a band edge so that every
/// band is made of whole bins (design choice: split rather than approximate a band by the nearest
/// bin edges). Bin centres are the arithmetic midpoints. Throws std::invalid_argument with the
/// validate() message on bad input.
Grid make_grid(const std::vector<GridSegment>& segments, const std::vector<Band>& bands = {});

/// Sums of a per-bin quantity over each band of the grid (e.g. W m-2 per bin -> W m-2 per band):
/// band results are always sums of bin results, never computed from band-mean optical depth.
/// `per_bin` must have grid.size() values; throws std::invalid_argument otherwise.
std::vector<double> band_sums(const Grid& grid, const std::vector<double>& per_bin);

/// One spectral point at which the solver runs: a bin, or later a (bin, k-term) pair. The weight
/// is the fraction of the bin's solar irradiance the point carries (1 for a plain bin; the
/// weights of one bin's k-terms would sum to 1).
struct SpectralPoint {
  std::size_t bin = 0;  ///< index into Grid::bins()
  double weight = 1.0;  ///< dimensionless: share of the bin's irradiance, (0, 1]
};

/// One point per bin with weight 1 (no gas needs k-terms yet).
std::vector<SpectralPoint> plain_points(const Grid& grid);

}  // namespace solstrata::spectrum
