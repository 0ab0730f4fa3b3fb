#include "sun/earth_sun.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>
#include <stdexcept>

using namespace solstrata::sun;

namespace {
// Orbital eccentricity of the Earth, e = 0.0167 (e.g. the Astronomical Almanac; common practice).
constexpr double kEccentricity = 0.0167;
constexpr double kDeg = std::numbers::pi / 180.0;
}  // namespace

TEST_CASE("Earth-Sun factor averages to 1/sqrt(1 - e^2) over the year", "[sun]") {
  // Exact for a Kepler orbit: the time mean of (a/r)^2 is 1/sqrt(1 - e^2) = 1.000140.
  // Spencer (1971) states an accuracy of about 1e-4.
  double sum = 0.0;
  for (int d = 1; d <= 365; ++d) sum += earth_sun_factor(d);
  const double expected = 1.0 / std::sqrt(1.0 - kEccentricity * kEccentricity);
  INFO("mean " << sum / 365 << " expected " << expected);
  CHECK(std::abs(sum / 365 - expected) < 1e-4);
}

TEST_CASE("Earth-Sun factor peaks at perihelion and is least at aphelion", "[sun]") {
  // Perihelion is about 3 January, aphelion about 4 July (common practice); the extremes of
  // (a/r)^2 are (1 -+ e)^-2 = 1.03426 and 0.96746.
  int day_max = 0, day_min = 0;
  double fmax = 0.0, fmin = 2.0;
  for (int d = 1; d <= 365; ++d) {
    const double f = earth_sun_factor(d);
    if (f > fmax) fmax = f, day_max = d;
    if (f < fmin) fmin = f, day_min = d;
  }
  CHECK(day_max >= 1);
  CHECK(day_max <= 7);
  CHECK(day_min >= 180);
  CHECK(day_min <= 190);
  CHECK(fmax == Approx(std::pow(1.0 - kEccentricity, -2)).margin(1e-3));
  CHECK(fmin == Approx(std::pow(1.0 + kEccentricity, -2)).margin(1e-3));
}

TEST_CASE("solar declination reaches the obliquity at the solstices and zero at the equinoxes", "[sun]") {
  // Obliquity of the ecliptic 23.44 degrees (common practice). Spencer's series is accurate to
  // about 0.035 degrees; the calendar day of the solstice/equinox shifts by up to a day, which
  // moves the declination by up to 0.4 degrees near the equinoxes.
  CHECK(solar_declination(172) / kDeg == Approx(23.44).margin(0.1));
  CHECK(solar_declination(355) / kDeg == Approx(-23.44).margin(0.1));
  CHECK(std::abs(solar_declination(80) / kDeg) < 0.8);
  CHECK(std::abs(solar_declination(266) / kDeg) < 0.8);
}

TEST_CASE("distance spec resolves a given factor, a day, or the mean distance", "[sun]") {
  CHECK(DistanceSpec{}.resolve() == 1.0);
  CHECK(DistanceSpec{0.0, 1.02}.resolve() == 1.02);
  CHECK(DistanceSpec{100.0, 0.0}.resolve() == earth_sun_factor(100.0));
  CHECK(DistanceSpec{400.0, 0.0}.validate().find("day_of_year 400") != std::string::npos);
  CHECK(DistanceSpec{0.0, 2.0}.validate().find("distance factor 2") != std::string::npos);
  CHECK_THROWS_AS(earth_sun_factor(0.5), std::invalid_argument);
}
