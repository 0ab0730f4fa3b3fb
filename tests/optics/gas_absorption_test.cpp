#include "optics/gas_absorption.hpp"

#include <catch2/catch.hpp>
#include <cmath>

using namespace solstrata;
using namespace solstrata::optics;

namespace {

/// A table with one node and given terms in [lo, hi).
std::shared_ptr<const KTable> table(const char* gas, double lo, double hi, std::vector<double> w, std::vector<double> k) {
  KTable t;
  t.gas = gas;
  t.pressure_hpa = {500};
  t.temperature_k = {250};
  KTableBin b{lo, hi, std::move(w), {}};
  for (double v : k) b.k.push_back({v});
  t.bins.push_back(b);
  return std::make_shared<const KTable>(t);
}

/// Mean transmission of bin `bin` for the whole column: sum over its points w exp(-sum_l tau).
double transmission(const GasPoints& g, std::size_t bin) {
  double s = 0.0;
  for (std::size_t q = 0; q < g.n_points(); ++q) {
    if (g.points[q].bin != bin) continue;
    double tau = 0.0;
    for (std::size_t l = 0; l < g.n_layers; ++l) tau += g.tau[l * g.n_points() + q];
    s += g.points[q].weight * std::exp(-tau);
  }
  return s;
}

const LayerState kTwoLayers{{300, 700}, {250, 250}, {}};

}  // namespace

TEST_CASE("k-terms become spectral points whose weights sum to 1 in every bin", "[optics]") {
  const spectrum::Grid grid = spectrum::make_grid({{740, 800, 20}});
  const auto t = table("O2", 760, 780, {0.5, 0.3, 0.2}, {1e-24, 1e-23, 1e-22});
  const GasPoints g = gas_points(grid, kTwoLayers, {{t, {1e22, 3e22}}});
  REQUIRE(g.n_points() == 1 + 3 + 1);  // bins without the gas keep one point
  for (std::size_t b = 0; b < grid.size(); ++b) {
    double w = 0;
    for (const auto& p : g.points) w += p.bin == b ? p.weight : 0.0;
    CHECK(w == Approx(1.0).epsilon(1e-15));
  }
  // Exact: the bin's transmission is the table's sum w exp(-k u) (Beer-Lambert per term).
  const double u = 4e22;
  CHECK(transmission(g, 1) == Approx(0.5 * std::exp(-1e-24 * u) + 0.3 * std::exp(-1e-23 * u) + 0.2 * std::exp(-1e-22 * u)).epsilon(1e-14));
  CHECK(transmission(g, 0) == 1.0);
}

TEST_CASE("a grid bin spanning part of a table bin takes the overlapped share, the rest unabsorbed", "[optics]") {
  // Grid bin 750-790 covers the table bin 760-780 by half: half of its width sees the table's
  // terms, the other half k = 0 (docs: mapping of table bins to the grid).
  const spectrum::Grid grid = spectrum::make_grid({{750, 790, 40}});
  const auto t = table("O2", 760, 780, {0.5, 0.5}, {1e-23, 1e-22});
  const GasPoints g = gas_points(grid, kTwoLayers, {{t, {1e22, 1e22}}});
  CHECK(transmission(g, 0) == Approx(0.5 + 0.25 * std::exp(-2e-1) + 0.25 * std::exp(-2.0)).epsilon(1e-14));
}

TEST_CASE("two gases overlap randomly: with one grey gas the product is exact", "[optics]") {
  const spectrum::Grid grid = spectrum::make_grid({{760, 780, 20}});
  const auto a = table("O2", 760, 780, {0.6, 0.4}, {1e-24, 1e-22});
  const auto b = table("H2O", 760, 780, {1.0}, {2e-23});
  const GasPoints g = gas_points(grid, kTwoLayers, {{a, {1e22, 1e22}}, {b, {1e21, 2e21}}});
  // Random overlap (Lacis & Oinas 1991): T = T_a T_b exactly when one gas has one term.
  const double ta = 0.6 * std::exp(-2e-2) + 0.4 * std::exp(-2.0), tb = std::exp(-2e-23 * 3e21);
  CHECK(transmission(g, 0) == Approx(ta * tb).epsilon(1e-14));
}

TEST_CASE("resort-rebin keeps the weight and stays close to the full random-overlap product", "[optics]") {
  const spectrum::Grid grid = spectrum::make_grid({{760, 780, 20}});
  const auto a = table("O2", 760, 780, {0.4, 0.3, 0.2, 0.1}, {1e-25, 1e-24, 1e-23, 1e-22});
  const auto b = table("H2O", 760, 780, {0.5, 0.3, 0.2}, {1e-24, 2e-23, 3e-22});
  const std::vector<double> ua{2e22, 2e22}, ub{1e21, 1e21};
  const GasPoints g = gas_points(grid, kTwoLayers, {{a, ua}, {b, ub}});
  CHECK(g.n_points() == 4);  // the larger term set's count (Amundsen et al. 2017)
  double w = 0;
  for (const auto& p : g.points) w += p.weight;
  CHECK(w == Approx(1.0).epsilon(1e-15));
  const auto tr = [](const std::vector<double>& ws, const std::vector<double>& ks, double u) {
    double s = 0;
    for (std::size_t i = 0; i < ws.size(); ++i) s += ws[i] * std::exp(-ks[i] * u);
    return s;
  };
  const double exact = tr({0.4, 0.3, 0.2, 0.1}, {1e-25, 1e-24, 1e-23, 1e-22}, 4e22) *
                       tr({0.5, 0.3, 0.2}, {1e-24, 2e-23, 3e-22}, 2e21);
  // Re-binning replaces the mean of exp over a group by exp of the group's mean optical depth:
  // by Jensen's inequality (exp is convex) the result can only fall, here by ~1 %.
  CHECK(transmission(g, 0) <= exact);
  CHECK(transmission(g, 0) == Approx(exact).epsilon(0.05));
}

TEST_CASE("a gas too weak to matter in a bin becomes one grey term", "[optics]") {
  const spectrum::Grid grid = spectrum::make_grid({{760, 780, 20}});
  const auto a = table("O2", 760, 780, {0.5, 0.5}, {1e-30, 3e-30});
  const GasPoints g = gas_points(grid, kTwoLayers, {{a, {1e22, 1e22}}});
  REQUIRE(g.n_points() == 1);
  // Column optical depth 2e-8 x 2: the grey term is the weighted mean.
  CHECK(g.tau[0] + g.tau[1] == Approx(0.5 * 2e-8 + 0.5 * 6e-8).epsilon(1e-12));
}
