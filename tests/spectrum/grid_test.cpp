#include "spectrum/grid.hpp"

#include <catch2/catch.hpp>
#include <stdexcept>

using namespace solstrata::spectrum;

TEST_CASE("the default grid covers 250-4000 nm with at most 5 nm bins below 400 nm", "[spectrum]") {
  const Grid g = make_grid(default_segments(), default_bands());
  REQUIRE(g.size() > 100);
  CHECK(g.lower_nm() == 250.0);
  CHECK(g.upper_nm() == 4000.0);
  double total = 0.0;
  for (std::size_t i = 0; i < g.size(); ++i) {
    const Bin& b = g.bins()[i];
    if (b.upper_nm <= 400.0) CHECK(b.width_nm() <= 5.0 + 1e-12);
    if (i > 0) CHECK(b.lower_nm == g.bins()[i - 1].upper_nm);
    CHECK(b.center_nm == Approx(0.5 * (b.lower_nm + b.upper_nm)));
    total += b.width_nm();
  }
  // The widths are the quadrature weights: they sum to the covered interval.
  CHECK(total == Approx(3750.0).epsilon(1e-13));
}

TEST_CASE("bands aggregate whole bins and bins are split at band edges", "[spectrum]") {
  // Segment 300-320 nm in 7 nm steps gives edges 300, 307, 314, 320; a band 303-310 nm splits
  // two bins, giving edges 300, 303, 307, 310, 314, 320.
  const Grid g = make_grid({{300, 320, 7}}, {{"custom", 303, 310}, {"all", 300, 320}});
  const std::vector<double> edges{300, 303, 307, 310, 314, 320};
  REQUIRE(g.size() == edges.size() - 1);
  for (std::size_t i = 0; i < g.size(); ++i) {
    CHECK(g.bins()[i].lower_nm == Approx(edges[i]));
    CHECK(g.bins()[i].upper_nm == Approx(edges[i + 1]));
  }
  const BinRange r = g.band_bins(0);
  CHECK(r.first == 1);
  CHECK(r.last == 3);
  CHECK(g.band_bins(1).first == 0);
  CHECK(g.band_bins(1).last == 5);
}

TEST_CASE("every default band is covered exactly by its bins", "[spectrum]") {
  const Grid g = make_grid(default_segments(), default_bands());
  for (std::size_t b = 0; b < g.bands().size(); ++b) {
    const BinRange r = g.band_bins(b);
    double width = 0.0;
    for (std::size_t i = r.first; i < r.last; ++i) width += g.bins()[i].width_nm();
    CHECK(width == Approx(g.bands()[b].upper_nm - g.bands()[b].lower_nm).epsilon(1e-13));
  }
}

TEST_CASE("band sums add up the bins of each band", "[spectrum]") {
  // Bin widths summed per band give the band widths (exact arithmetic on these edges).
  const Grid g = make_grid({{300, 320, 7}}, {{"custom", 303, 310}, {"all", 300, 320}});
  std::vector<double> widths;
  for (const Bin& b : g.bins()) widths.push_back(b.width_nm());
  CHECK(band_sums(g, widths) == std::vector<double>{7.0, 20.0});
  CHECK_THROWS_AS(band_sums(g, {1.0}), std::invalid_argument);
}

TEST_CASE("grid and band validation name the field, the value and the rule", "[spectrum]") {
  CHECK(validate(std::vector<GridSegment>{}).find("at least one segment") != std::string::npos);
  CHECK(validate({{300, 400, 0}}).find("step_nm 0") != std::string::npos);
  CHECK(validate({{300, 400, 5}, {410, 500, 5}}).find("from_nm 410") != std::string::npos);
  CHECK(validate({{400, 300, 5}}).find("to_nm 300") != std::string::npos);
  CHECK(validate({{"PAR", 700, 400}}, 250, 4000).find("upper_nm 400") != std::string::npos);
  CHECK(validate({{"far", 100, 200}}, 250, 4000).find("inside the spectral grid") != std::string::npos);
  CHECK(validate({{"a", 300, 400}, {"a", 400, 500}}, 250, 4000).find("used twice") !=
        std::string::npos);
  CHECK_THROWS_AS(make_grid({{300, 400, 5}}, {{"x", 200, 350}}), std::invalid_argument);
}

TEST_CASE("plain spectral points give each bin weight one", "[spectrum]") {
  const Grid g = make_grid({{400, 500, 50}});
  const auto p = plain_points(g);
  REQUIRE(p.size() == 2);
  CHECK(p[1].bin == 1);
  CHECK(p[1].weight == 1.0);
}
