#include "sun/daily.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "sun/earth_sun.hpp"

using namespace solstrata::sun;

namespace {
constexpr double kRad = M_PI / 180.0;
}

TEST_CASE("daily-mean TOA insolation matches the table of check values", "[sun]") {
  // checkvalues section 13 (computed from the textbook daily-mean form with Spencer's (r0/r)^2
  // and declination, S0 = 1361 W m-2), W m-2; rows days 1, 80, 172, 266, 355.
  const double lat[] = {90, 60, 30, 0, -30, -60, -90};
  const int day[] = {1, 80, 172, 266, 355};
  const double table[5][7] = {{0.0, 26.5, 230.2, 412.6, 506.1, 504.4, 551.8},
                              {0.0, 217.6, 377.7, 436.6, 378.5, 219.0, 1.6},
                              {524.0, 476.6, 474.5, 384.5, 212.5, 22.8, 0.0},
                              {5.9, 217.6, 374.0, 430.2, 371.1, 212.6, 0.0},
                              {0.0, 24.5, 227.4, 411.1, 507.1, 509.0, 559.4}};
  for (int d = 0; d < 5; ++d)
    for (int l = 0; l < 7; ++l) {
      const double q = daily_mean_toa(1361, earth_sun_factor(day[d]), lat[l] * kRad, solar_declination(day[d]));
      INFO("day " << day[d] << ", latitude " << lat[l]);
      CHECK(q == Approx(table[d][l]).margin(0.1));
    }
}

TEST_CASE("the area-weighted global mean of the daily TOA insolation is S0 f / 4", "[sun]") {
  // Exact (geometry: the disc intercepts pi R^2 S, the sphere has 4 pi R^2), checkvalues section 8.
  for (double dec_deg : {-23.44, -10.0, 0.0, 15.0, 23.44}) {
    double s = 0, w = 0;
    for (int i = 0; i < 2000; ++i) {
      const double lat = (-90.0 + (i + 0.5) * 180.0 / 2000) * kRad;
      s += daily_mean_toa(1360.8, 1.0, lat, dec_deg * kRad) * std::cos(lat);
      w += std::cos(lat);
    }
    CHECK(s / w == Approx(1360.8 / 4).epsilon(1e-5));
  }
}

TEST_CASE("quadrature over daylight converges to the daily mean and to 0.1 % with 8 nodes", "[sun]") {
  // The instantaneous TOA flux S0 cos(zenith) integrated over the day's hour angle / 2 pi is the
  // daily mean (the closed form above); doubling the nodes shows convergence.
  const double lat = 47.3 * kRad, dec = 18.0 * kRad;
  const auto toa = [&](double h) {
    return std::max(0.0, 1361 * (std::sin(lat) * std::sin(dec) + std::cos(lat) * std::cos(dec) * std::cos(h)));
  };
  const double exact = daily_mean_toa(1361, 1.0, lat, dec);
  const double q8 = integrate_daylight(toa, lat, dec, 8) / (2 * M_PI);
  const double q16 = integrate_daylight(toa, lat, dec, 16) / (2 * M_PI);
  CHECK(std::abs(q8 / exact - 1) < 1e-3);
  CHECK(std::abs(q16 / exact - 1) < std::abs(q8 / exact - 1) + 1e-15);
  CHECK(q16 == Approx(exact).epsilon(1e-6));
  // Polar night gives 0; polar day integrates the whole circle.
  CHECK(integrate_daylight(toa, 80 * kRad, -20 * kRad, 8) == 0.0);
  CHECK(sunset_hour_angle(80 * kRad, 20 * kRad) == Approx(M_PI));
  CHECK(sunset_hour_angle(0.0, 0.3) == Approx(M_PI / 2));  // 12 h day on the equator
}
