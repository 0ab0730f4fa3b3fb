#include "spectrum/grid.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>
#include <stdexcept>

namespace solstrata::spectrum {
namespace {

constexpr double kMaxNm = 1e6;
// nm: edges closer than this are the same edge (guards against 0.1 + 0.2 style round-off).
constexpr double kEdgeTol = 1e-9;

std::string num(double x) {
  std::ostringstream s;
  s << x;
  return s.str();
}

}  // namespace

std::vector<GridSegment> default_segments() {
  return {{250, 280, 5},   {280, 340, 1},    {340, 400, 5},    {400, 700, 10},
          {700, 1000, 20}, {1000, 2000, 50}, {2000, 4000, 100}};
}

std::vector<Band> default_bands() {
  return {{"UV-B", 280, 315}, {"UV-A", 315, 400}, {"PAR", 400, 700}, {"NIR", 700, 4000}};
}

std::string validate(const std::vector<GridSegment>& segments) {
  if (segments.empty()) return "the spectral grid needs at least one segment";
  for (std::size_t i = 0; i < segments.size(); ++i) {
    const GridSegment& s = segments[i];
    const std::string where = "grid segment " + std::to_string(i) + ": ";
    if (!std::isfinite(s.from_nm) || !(s.from_nm > 0.0) || !(s.to_nm < kMaxNm)) {
      return where + "edges " + num(s.from_nm) + ".." + num(s.to_nm) + " nm must lie in (0, 1e6) nm";
    }
    if (!(s.to_nm > s.from_nm)) {
      return where + "to_nm " + num(s.to_nm) + " must exceed from_nm " + num(s.from_nm);
    }
    if (!(s.step_nm > 0.0) || s.step_nm > s.to_nm - s.from_nm + kEdgeTol) {
      return where + "step_nm " + num(s.step_nm) + " must be > 0 and no larger than the segment (" +
             num(s.to_nm - s.from_nm) + " nm)";
    }
    if ((s.to_nm - s.from_nm) / s.step_nm > 1e6) {
      return where + "step_nm " + num(s.step_nm) + " makes more than 1e6 bins";
    }
    if (i > 0 && std::abs(s.from_nm - segments[i - 1].to_nm) > kEdgeTol) {
      return where + "from_nm " + num(s.from_nm) + " must equal the previous segment's to_nm " +
             num(segments[i - 1].to_nm) + " (segments are contiguous)";
    }
  }
  return {};
}

std::string validate(const std::vector<Band>& bands, double lower_nm, double upper_nm) {
  for (std::size_t i = 0; i < bands.size(); ++i) {
    const Band& b = bands[i];
    const std::string where = "band '" + b.name + "': ";
    if (b.name.empty()) return "band " + std::to_string(i) + ": the name must not be empty";
    if (!(b.upper_nm > b.lower_nm)) {
      return where + "upper_nm " + num(b.upper_nm) + " must exceed lower_nm " + num(b.lower_nm);
    }
    if (b.lower_nm < lower_nm - kEdgeTol || b.upper_nm > upper_nm + kEdgeTol) {
      return where + num(b.lower_nm) + ".." + num(b.upper_nm) +
             " nm must lie inside the spectral grid " + num(lower_nm) + ".." + num(upper_nm) + " nm";
    }
    for (std::size_t j = 0; j < i; ++j) {
      if (bands[j].name == b.name) return where + "the name is used twice";
    }
  }
  return {};
}

Grid::Grid(std::vector<Bin> bins, std::vector<Band> bands)
    : bins_(std::move(bins)), bands_(std::move(bands)) {
  for (std::size_t i = 0; i < bins_.size(); ++i) {
    const Bin& b = bins_[i];
    if (!(b.upper_nm > b.lower_nm) || b.center_nm < b.lower_nm || b.center_nm > b.upper_nm ||
        (i > 0 && std::abs(b.lower_nm - bins_[i - 1].upper_nm) > kEdgeTol)) {
      throw std::invalid_argument("bin " + std::to_string(i) + " (" + num(b.lower_nm) + ".." +
                                  num(b.upper_nm) + " nm) is not ordered and contiguous");
    }
  }
  if (const std::string msg = validate(bands_, lower_nm(), upper_nm()); !msg.empty()) {
    throw std::invalid_argument(msg);
  }
  for (const Band& band : bands_) {
    BinRange r{bins_.size(), 0};
    for (std::size_t i = 0; i < bins_.size(); ++i) {
      if (std::abs(bins_[i].lower_nm - band.lower_nm) <= kEdgeTol) r.first = i;
      if (std::abs(bins_[i].upper_nm - band.upper_nm) <= kEdgeTol) r.last = i + 1;
    }
    if (r.first >= r.last) {
      throw std::invalid_argument("band '" + band.name + "': its edges do not fall on bin edges");
    }
    band_bins_.push_back(r);
  }
}

std::vector<double> Grid::centers_nm() const {
  std::vector<double> c(bins_.size());
  for (std::size_t i = 0; i < bins_.size(); ++i) c[i] = bins_[i].center_nm;
  return c;
}

Grid make_grid(const std::vector<GridSegment>& segments, const std::vector<Band>& bands) {
  if (const std::string msg = validate(segments); !msg.empty()) throw std::invalid_argument(msg);
  std::vector<double> edges{segments.front().from_nm};
  for (const GridSegment& s : segments) {
    // Edges as from + k * step (not repeated addition) so that round-off does not accumulate.
    for (std::size_t k = 1;; ++k) {
      const double e = s.from_nm + static_cast<double>(k) * s.step_nm;
      if (e >= s.to_nm - kEdgeTol) break;
      edges.push_back(e);
    }
    edges.push_back(s.to_nm);
  }
  if (const std::string msg = validate(bands, edges.front(), edges.back()); !msg.empty()) {
    throw std::invalid_argument(msg);
  }
  for (const Band& b : bands) {
    for (double e : {b.lower_nm, b.upper_nm}) {
      const auto it = std::lower_bound(edges.begin(), edges.end(), e - kEdgeTol);
      if (it == edges.end() || std::abs(*it - e) > kEdgeTol) edges.insert(it, e);
    }
  }
  std::vector<Bin> bins;
  bins.reserve(edges.size() - 1);
  for (std::size_t i = 0; i + 1 < edges.size(); ++i) {
    bins.push_back({edges[i], edges[i + 1], 0.5 * (edges[i] + edges[i + 1])});
  }
  return Grid(std::move(bins), bands);
}

std::vector<double> band_sums(const Grid& grid, const std::vector<double>& per_bin) {
  if (per_bin.size() != grid.size()) {
    throw std::invalid_argument("band_sums: " + std::to_string(per_bin.size()) +
                                " values for a grid of " + std::to_string(grid.size()) + " bins");
  }
  std::vector<double> out;
  for (std::size_t b = 0; b < grid.bands().size(); ++b) {
    const BinRange r = grid.band_bins(b);
    double s = 0.0;
    for (std::size_t i = r.first; i < r.last; ++i) s += per_bin[i];
    out.push_back(s);
  }
  return out;
}

std::vector<SpectralPoint> plain_points(const Grid& grid) {
  std::vector<SpectralPoint> p(grid.size());
  for (std::size_t i = 0; i < p.size(); ++i) p[i] = {i, 1.0};
  return p;
}

}  // namespace solstrata::spectrum
