#include "atmos/standard_atmosphere.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <fstream>
#include <sstream>
#include <stdexcept>

using namespace solstrata::atmos;

namespace {
constexpr double kR0 = 6356766.0;  // m: U.S. Standard Atmosphere 1976 Earth radius
// m: geometric altitude of geopotential height H (inverse of H = r0 z / (r0 + z)).
double geometric(double H) { return kR0 * H / (kR0 - H); }
}  // namespace

TEST_CASE("standard atmosphere reproduces the published layer-base pressures and temperatures", "[atmos]") {
  // U.S. Standard Atmosphere 1976 layer bases (shared/checkvalues.md section 9) [published], the
  // 71 km pressure [memory]. The standard rounds its own tables: 22632.10 Pa at 11 km comes out
  // 22632.06 from its constants (2e-6), hence 1e-5.
  struct Row {
    double H, p, T, rel;
  };
  const Row rows[] = {{0, 101325.00, 288.15, 1e-9},   {11000, 22632.10, 216.65, 1e-5},
                      {20000, 5474.89, 216.65, 1e-5}, {32000, 868.02, 228.65, 1e-5},
                      {47000, 110.91, 270.65, 5e-5},  {51000, 66.94, 270.65, 1e-4},
                      {71000, 3.9564, 214.65, 1e-4}};
  for (const Row& r : rows) {
    const StandardState s = us_standard_1976(geometric(r.H));
    INFO("H = " << r.H << " m: p " << s.pressure_pa << " Pa, T " << s.temperature_k << " K");
    CHECK(s.pressure_pa == Approx(r.p).epsilon(r.rel));
    CHECK(s.temperature_k == Approx(r.T).margin(1e-6));
  }
}

TEST_CASE("standard atmosphere matches its tabulated values at geometric altitudes", "[atmos]") {
  // U.S. Standard Atmosphere 1976 tables at geometric altitude, from memory (tolerance 0.2 %).
  struct Row {
    double z, p, T;
  };
  const Row rows[] = {{5000, 54048, 255.676}, {10000, 26500, 223.252}, {20000, 5529.3, 216.65},
                      {30000, 1197.0, 226.509}, {50000, 79.78, 270.65}};
  for (const Row& r : rows) {
    const StandardState s = us_standard_1976(r.z);
    INFO("z = " << r.z << " m: p " << s.pressure_pa << " Pa, T " << s.temperature_k << " K");
    CHECK(s.pressure_pa == Approx(r.p).epsilon(2e-3));
    CHECK(s.temperature_k == Approx(r.T).epsilon(2e-4));
  }
  CHECK_THROWS_AS(us_standard_1976(90000), std::invalid_argument);
}

TEST_CASE("generated profile carries the documented ozone and water shapes", "[atmos]") {
  const Profile p = make_us_standard_1976();
  REQUIRE(p.validate().empty());
  CHECK(p.n_levels() == 42);
  CHECK(p.pressure_hpa.back() == Approx(1013.25));
  CHECK(total_ozone_du(p) == Approx(343.0).epsilon(1e-12));
  // Green (1964): the share of the column above the peak b is u(b)/a = (1 + exp(-b/c))/2.
  const OzoneShape o;
  const LayerColumns c = layer_columns(p);
  double above = 0.0;
  for (std::size_t i = 0; i < p.n_layers(); ++i) {
    if (p.altitude_km[i + 1] >= o.peak_km - 1e-9) above += c.ozone_du[i];
  }
  const double expected = 0.5 * (1.0 + std::exp(-o.peak_km / o.width_km));
  CHECK(above / 343.0 == Approx(expected).epsilon(0.02));  // level-discretisation error
  // Water: the exponential holds 1.42 cm; the 4 ppmv floor and the level discretisation add
  // a little.
  CHECK(total_h2o_cm(p) == Approx(1.42).epsilon(0.02));
}

TEST_CASE("the committed standard profile equals the generator's output", "[atmos]") {
  std::ifstream in(std::string(SOLSTRATA_SOURCE_DIR) + "/profiles/us_standard_1976.yaml");
  REQUIRE(in);
  std::stringstream text;
  text << in.rdbuf();
  CHECK(text.str() == us_standard_1976_yaml());
}

TEST_CASE("profile YAML text lists every field top level first", "[atmos]") {
  Profile p;
  p.name = "invented";
  p.pressure_hpa = {100, 1000};
  p.temperature_k = {220, 290};
  p.altitude_km = {16, 0};
  const std::string y = to_yaml_text(p, "line one\n\nline two");
  CHECK(y.find("# line one\n#\n# line two\n") == 0);
  CHECK(y.find("pressure_hpa: [100, 1000]") != std::string::npos);
  CHECK(y.find("altitude_km: [16, 0]") != std::string::npos);
  CHECK(y.find("ozone_ppmv") == std::string::npos);
}
