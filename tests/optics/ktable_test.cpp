#include "optics/ktable.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <fstream>

#include "support/temp_dir.hpp"

using namespace solstrata::optics;
using solstrata::testing::TempDir;

namespace {

const std::string kSmall = R"(# a two-node test table
solstrata_ktable 1
gas O2
title test
source invented numbers for the reader test
weighting wavenumber
pressure_hpa 100 1000
temperature_k 200 300
bins 1
bin 760 780 2
weights 0.25 0.75
k 1e-24 2e-24 1e-23 2e-23   # [p][t]: k proportional to p, doubling from 200 to 300 K
k 0 0 4e-24 4e-24
end
)";

std::filesystem::path write(const TempDir& d, const std::string& text) {
  const auto p = d / "t.ktab";
  std::ofstream(p) << text;
  return p;
}

std::string error_of(const std::string& text) {
  TempDir d("ktable");
  try {
    (void)read_ktable(write(d, text));
  } catch (const KTableError& e) {
    return e.what();
  }
  return "";
}

}  // namespace

TEST_CASE("a k-table file is read with every field", "[optics]") {
  TempDir d("ktable");
  const KTable t = read_ktable(write(d, kSmall));
  CHECK(t.gas == "O2");
  CHECK(t.source.size() == 1);
  REQUIRE(t.bins.size() == 1);
  CHECK(t.bins[0].weights == std::vector<double>{0.25, 0.75});
  CHECK(t.bins[0].k[0][3] == 2e-23);
  CHECK(t.n_nodes() == 4);
}

TEST_CASE("k is interpolated log-linearly in pressure and linearly in temperature", "[optics]") {
  TempDir d("ktable");
  const KTable t = read_ktable(write(d, kSmall));
  // k proportional to p between the nodes is reproduced exactly by log k linear in log p
  // (docs/gas-tables.md); linear in T between 200 and 300 K.
  for (double p : {100.0, 200.0, 316.2, 999.0}) {
    const NodeWeights w = node_weights(t, p, 250.0, 0.0);
    CHECK(interpolate_k(t, t.bins[0].k[0], w) == Approx(1.5e-26 * p).epsilon(1e-12));
  }
  // Where a node is 0, linear in p: halfway between 100 and 1000 hPa gives half of 4e-24.
  CHECK(interpolate_k(t, t.bins[0].k[1], node_weights(t, 550.0, 250.0, 0.0)) == Approx(2e-24).epsilon(1e-12));
  // Outside the nodes the state is clamped.
  CHECK(interpolate_k(t, t.bins[0].k[0], node_weights(t, 5000.0, 400.0, 0.0)) == Approx(2e-23));
  CHECK(interpolate_k(t, t.bins[0].k[0], node_weights(t, 1.0, 100.0, 0.0)) == Approx(1e-24));
}

TEST_CASE("bad k-table files name the line and the rule", "[optics]") {
  const auto replace = [](std::string s, const std::string& a, const std::string& b) {
    s.replace(s.find(a), a.size(), b);
    return s;
  };
  CHECK_THAT(error_of(replace(kSmall, "solstrata_ktable 1", "solstrata_ktable 2")),
             Catch::Contains("t.ktab:2:") && Catch::Contains("version"));
  CHECK_THAT(error_of(replace(kSmall, "k 0 0 4e-24 4e-24", "k 0 0 4e-24 x")),
             Catch::Contains("t.ktab:13:") && Catch::Contains("'x'"));
  CHECK_THAT(error_of(replace(kSmall, "k 0 0 4e-24 4e-24", "k 0 0 4e-24")),
             Catch::Contains("t.ktab:13:") && Catch::Contains("needs 4 values"));
  CHECK_THAT(error_of(replace(kSmall, "weights 0.25 0.75", "weights 0.25 0.7")), Catch::Contains("sum"));
  CHECK_THAT(error_of(replace(kSmall, "end\n", "")), Catch::Contains("ends early"));
  CHECK_THAT(error_of(replace(kSmall, "temperature_k 200 300", "temperature_k 300 200")), Catch::Contains("increasing"));
  CHECK_THAT(error_of(replace(kSmall, "k 1e-24", "k -1e-24")), Catch::Contains(">= 0"));
  TempDir d("ktable");
  CHECK_THROWS_WITH(read_ktable(d / "missing.ktab"), Catch::Contains("cannot open"));
}

TEST_CASE("the shipped O2 table reproduces line-by-line A-band transmittance within 0.5 %", "[optics]") {
  const KTable t = read_ktable(std::string(SOLSTRATA_SOURCE_DIR) + "/solver/data/gases/o2_hitran2012.ktab");
  CHECK(t.gas == "O2");
  const KTableBin* a = nullptr;
  for (const KTableBin& b : t.bins)
    if (b.lower_nm == 760.0 && b.upper_nm == 780.0) a = &b;
  REQUIRE(a != nullptr);
  // Line-by-line reference, computed from the HITRAN2012 O2 lines (Rothman et al. 2013) with
  // `scripts/ktable_gen.py lbl --bin-nm 760 780 --p-hpa 485.784 --t-k 260` (Voigt, 25 cm-1
  // cut-off): an independent path (no k-distribution, no table interpolation).
  const std::pair<double, double> lbl[] = {
      {4.5e22, 0.98372531}, {4.5e23, 0.94313536}, {4.5e24, 0.83597770}, {9.0e24, 0.78934423}};
  const NodeWeights w = node_weights(t, 485.784, 260.0, 0.0);
  for (const auto& [u, tr] : lbl) {
    double s = 0.0;
    for (std::size_t i = 0; i < a->weights.size(); ++i) s += a->weights[i] * std::exp(-interpolate_k(t, a->k[i], w) * u);
    INFO("column " << u << " molecules cm-2: table " << s << ", line by line " << tr);
    CHECK(std::abs(s - tr) / tr < 0.005);
  }
}
