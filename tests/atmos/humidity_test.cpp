#include "atmos/humidity.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <stdexcept>

#include "atmos/standard_atmosphere.hpp"

using namespace solstrata::atmos;

TEST_CASE("saturation vapour pressure over water matches published values", "[atmos][humidity]") {
  // Triple point 611.657 Pa (IAPWS 2011 release on the melting and sublimation curves; from
  // memory); 0 C 611.2 Pa (the 6.112 hPa of the WMO Magnus form; from memory);
  // 20 C 2339.3 Pa and 40 C 7384.9 Pa (Wagner & Pruss 2002, IAPWS-95 saturation table; from
  // memory). Murphy & Koop (2005) state agreement with IAPWS-95 to 0.05 % above 273 K.
  CHECK(saturation_pressure_water_pa(273.16) == Approx(611.657).epsilon(5e-4));
  CHECK(saturation_pressure_water_pa(273.15) == Approx(611.2).epsilon(5e-4));
  CHECK(saturation_pressure_water_pa(293.15) == Approx(2339.3).epsilon(5e-4));
  CHECK(saturation_pressure_water_pa(313.15) == Approx(7384.9).epsilon(5e-4));
  CHECK_THROWS_AS(saturation_pressure_water_pa(90.0), std::invalid_argument);
}

TEST_CASE("saturation vapour pressure over ice matches published values", "[atmos][humidity]") {
  // Triple point as above; -20 C: 103.26 Pa (Wagner, Riethmann, Feistel & Harvey 2011 /
  // IAPWS sublimation curve; from memory). Below 0 C ice saturates at a lower pressure than
  // supercooled water (exact physical ordering).
  CHECK(saturation_pressure_ice_pa(273.16) == Approx(611.657).epsilon(5e-4));
  CHECK(saturation_pressure_ice_pa(253.15) == Approx(103.26).epsilon(1e-3));
  CHECK(saturation_pressure_ice_pa(253.15) < saturation_pressure_water_pa(253.15));
}

TEST_CASE("specific humidity converts to mole fraction and back", "[atmos][humidity]") {
  // x = q / (q + (1 - q) eps): q = 0.01 kg/kg -> x = 0.01 / (0.01 + 0.99 * 0.62198) = 0.015981
  // (computed by hand from the definition).
  CHECK(ppmv_from_specific_humidity(0.01) == Approx(15980.6).epsilon(1e-5));
  CHECK(ppmv_from_specific_humidity(0.0) == 0.0);
  for (double q : {1e-6, 1e-4, 0.003, 0.02, 0.04}) {
    CHECK(specific_humidity_from_ppmv(ppmv_from_specific_humidity(q)) == Approx(q).epsilon(1e-12));
  }
  CHECK_THROWS_AS(ppmv_from_specific_humidity(-0.1), std::invalid_argument);
}

TEST_CASE("relative humidity converts to mole fraction and back", "[atmos][humidity]") {
  // 50 % at 20 C and 1000 hPa: e = 0.5 * 2339.3 Pa -> x = 1169.65 / 100000 = 11697 ppmv
  // (computed from the definition with the IAPWS-95 value, from memory).
  CHECK(ppmv_from_relative_humidity(50, 293.15, 1000) == Approx(11697).epsilon(1e-3));
  for (double rh : {1.0, 30.0, 80.0, 100.0}) {
    for (double t : {230.0, 273.15, 300.0}) {
      const double x = ppmv_from_relative_humidity(rh, t, 850);
      CHECK(relative_humidity_from_ppmv(x, t, 850) == Approx(rh).epsilon(1e-12));
    }
  }
  // Vapour pressure at 40 C (73.8 hPa) exceeds a total pressure of 50 hPa: impossible.
  CHECK_THROWS_AS(ppmv_from_relative_humidity(100, 313.15, 50), std::invalid_argument);
}

TEST_CASE("the default water-vapour shape has a 2 km density scale height and the asked column",
          "[atmos][humidity]") {
  Profile p = make_us_standard_1976();
  p.h2o_ppmv = default_h2o_ppmv(p, 1.4);
  CHECK(total_h2o_cm(p) == Approx(1.4).epsilon(1e-12));
  // Vapour density from the ideal gas law at two levels: ratio exp(-dz / 2 km) (the shape's
  // definition).
  const std::size_t s = p.n_levels() - 1;
  std::size_t k = s;
  while (k > 0 && p.altitude_km[k] < 4.0) --k;
  const auto rho = [&](std::size_t i) {
    return p.h2o_ppmv[i] * p.pressure_hpa[i] / p.temperature_k[i];
  };
  CHECK(rho(k) / rho(s) ==
        Approx(std::exp(-(p.altitude_km[k] - p.altitude_km[s]) / 2.0)).epsilon(1e-12));
}

TEST_CASE("rescaling to a precipitable water is exact", "[atmos][humidity]") {
  Profile p = make_us_standard_1976();
  REQUIRE(total_h2o_cm(p) > 0.0);
  for (double target : {0.1, 2.5, 7.0}) {
    scale_h2o_to(p, target);
    CHECK(total_h2o_cm(p) == Approx(target).epsilon(1e-13));
  }
  Profile dry = p;
  dry.h2o_ppmv.clear();
  CHECK_THROWS_AS(scale_h2o_to(dry, 1.0), std::invalid_argument);
  CHECK_THROWS_AS(scale_h2o_to(p, 0.0), std::invalid_argument);
}
