#include "products/surface_products.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

using namespace solstrata::products;

TEST_CASE("heating rate of 1 W m-2 absorbed in 1 hPa is about 8.43 K per day", "[products]") {
  // dT/dt = g/c_p dF/dp: 9.80665 / 1004.64 / 100 Pa * 86400 s = 8.4338 K day-1 per W m-2 per hPa
  // (the rule of thumb "about 8.4 K/day per W m-2 per hPa" is common practice).
  CHECK(heating_rate_k_per_day(1.0, 1.0) == Approx(8.4338).epsilon(1e-4));
  // Linear in absorbed flux, inverse in pressure thickness (exact).
  CHECK(heating_rate_k_per_day(10.0, 50.0) == Approx(heating_rate_k_per_day(1.0, 1.0) / 5.0).epsilon(1e-14));
  CHECK(heating_rate_k_per_day(0.0, 10.0) == 0.0);
}

TEST_CASE("erythema action spectrum follows the CIE/ISO reference formula", "[products]") {
  // ISO 17166:1999 / CIE S 007/E:1998 piecewise definition [published], values computed from it.
  CHECK(erythema_action(260.0) == 1.0);
  CHECK(erythema_action(298.0) == 1.0);
  CHECK(erythema_action(300.0) == Approx(0.6486).epsilon(1e-4));    // 10^(-0.188); tabulated 0.6486 (from memory)
  CHECK(erythema_action(310.0) == Approx(0.07447).epsilon(1e-3));   // 10^(-1.128)
  CHECK(erythema_action(330.0) == Approx(1.4125e-3).epsilon(1e-3)); // 10^(-2.85)
  CHECK(erythema_action(400.0) == Approx(1.2589e-4).epsilon(1e-3)); // 10^(-3.9)
  CHECK(erythema_action(400.5) == 0.0);
  CHECK(erythema_action(200.0) == 0.0);
  // The two exponential pieces meet at 328 nm (10^-2.82 both), so the spectrum is continuous.
  CHECK(erythema_action(328.0 - 1e-9) == Approx(erythema_action(328.0 + 1e-9)).epsilon(1e-8));
}

TEST_CASE("bin-mean erythema weight equals a fine numerical average", "[products]") {
  // Independent check of the analytic integral: composite midpoint rule with 60000 panels
  // (the jumps at 250 and 400 nm fall on panel edges for these intervals).
  for (auto [lo, hi] : {std::pair{290.0, 300.0}, std::pair{295.0, 335.0}, std::pair{320.0, 330.0},
                        std::pair{390.0, 420.0}, std::pair{240.0, 260.0}}) {
    const int n = 60000;
    double sum = 0;
    for (int i = 0; i < n; ++i) sum += erythema_action(lo + (hi - lo) * (i + 0.5) / n);
    CHECK(erythema_action_mean(lo, hi) == Approx(sum / n).epsilon(1e-6));
  }
}

namespace {
std::vector<std::vector<double>> read_csv(const std::string& path) {
  std::ifstream in(path);
  std::vector<std::vector<double>> rows;
  std::string line;
  std::getline(in, line);  // header
  while (std::getline(in, line)) {
    std::stringstream ss(line);
    std::string cell;
    std::vector<double> row;
    while (std::getline(ss, cell, ',')) row.push_back(std::stod(cell));
    rows.push_back(row);
  }
  return rows;
}
}  // namespace

TEST_CASE("PAR photon conversion of the G173 extraterrestrial spectrum is 4.553 umol per joule", "[products]") {
  // shared/checkvalues.md section 5: 4.553 umol J-1 for the ASTM G173 extraterrestrial column
  // over 400-700 nm [computed]; the usual daylight figure is about 4.57 (McCree 1972, from memory).
  const auto rows = read_csv(std::string(SOLSTRATA_TEST_DATA) + "/astm-g173-03.csv");
  REQUIRE(rows.size() > 1000);
  double energy = 0, photons = 0;
  for (std::size_t i = 0; i + 1 < rows.size(); ++i) {
    const double a = rows[i][0], b = rows[i + 1][0];
    if (a < 400.0 || b > 700.0) continue;
    // Trapezoid on the native grid; each panel's photons at its mean wavelength.
    const double e = 0.5 * (rows[i][1] + rows[i + 1][1]) * (b - a);
    energy += e;
    photons += photon_flux_umol(e, a, b);
  }
  CHECK(photons / energy == Approx(4.553).margin(0.002));
  CHECK(photons / energy == Approx(4.57).margin(0.03));
}

TEST_CASE("global horizontal irradiance is direct normal times mu0 plus diffuse", "[products]") {
  // Closure relation GHI = DNI cos(zenith) + DHI (common practice in solar resource assessment).
  const SurfaceIrradiance s = surface_irradiance(600.0, 150.0, 0.8);
  CHECK(s.direct_normal == Approx(750.0).epsilon(1e-15));
  CHECK(s.diffuse_horizontal == 150.0);
  CHECK(s.global_horizontal == Approx(s.direct_normal * 0.8 + s.diffuse_horizontal).epsilon(1e-15));
}
