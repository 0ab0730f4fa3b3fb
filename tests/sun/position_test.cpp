#include "sun/position.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "sun/earth_sun.hpp"

using namespace solstrata::sun;

TEST_CASE("ISO 8601 times with offsets give the Julian day of the instant", "[sun]") {
  // Julian day of 2003-10-17 19:30:30 UT = 2452930.312847 (checkvalues section 12, computed, exact).
  const UtcTime a = parse_iso8601("2003-10-17T12:30:30-07:00");
  CHECK(a.julian_day() == Approx(2452930.312847).margin(1e-6));
  CHECK(parse_iso8601("2003-10-17T19:30:30Z").unix_seconds == a.unix_seconds);
  CHECK(parse_iso8601("2003-10-17 21:00:30+0130").unix_seconds == a.unix_seconds);
  CHECK(parse_iso8601("2003-10-17T19:30:30.5Z").unix_seconds == a.unix_seconds + 0.5);
  // J2000.0 is JD 2451545.0 = 2000-01-01T12:00:00 TT; in UT (common practice, ignoring Delta T).
  CHECK(parse_iso8601("2000-01-01T12:00Z").julian_day() == 2451545.0);
  CHECK(format_iso8601_utc(a) == "2003-10-17T19:30:30Z");
  CHECK(format_iso8601_utc(parse_iso8601("1969-12-31T23:59:59Z")) == "1969-12-31T23:59:59Z");
  for (const char* bad : {"2003-10-17T12:30:30", "2003-13-01T00:00Z", "2003-02-29T00:00Z", "2003-10-17", "yesterday",
                          "2003-10-17T25:00Z", "2003-10-17T12:30:30-07:00 extra"}) {
    INFO(bad);
    CHECK_THROWS_WITH(parse_iso8601(bad), Catch::Contains("ISO 8601") && Catch::Contains(bad));
  }
}

TEST_CASE("solar position of the Reda & Andreas (2004) example within 0.01 degree", "[sun]") {
  // Reda & Andreas (2004), Solar Energy 76, 577, worked example: 2003-10-17 12:30:30 local time
  // (UTC-7) at 39.742476 N, 105.1786 W, 820 hPa, 11 C: topocentric zenith 50.11162 deg, azimuth
  // 194.34024 deg (from memory; checkvalues section 12 gives Michalsky 1988 as 50.1127 / 194.3370,
  // computed). Michalsky's stated accuracy is about 0.01 deg.
  const Site site{39.742476, -105.1786, 820.0, 11.0};
  const SolarPosition p = solar_position(site, parse_iso8601("2003-10-17T12:30:30-07:00"));
  CHECK(p.zenith_deg == Approx(50.11162).margin(0.01));
  CHECK(p.azimuth_deg == Approx(194.34024).margin(0.01));
  // Refraction lifts the sun: the apparent zenith is smaller, by about 1 arcmin here.
  CHECK(p.true_zenith_deg - p.zenith_deg == Approx(0.8 / 60 * 820 / 1010 * 283 / 284 * 1.45).epsilon(0.3));
}

TEST_CASE("declination and Earth-Sun factor agree with Spencer (1971) through the year", "[sun]") {
  // Spencer (1971) on days 1, 80, 172, 266, 355 (checkvalues section 13) at noon UT of 2023. His
  // series is a fit for a typical year: the equinoxes of a given year fall up to ~6 h from it (the
  // leap-year cycle), i.e. up to ~0.1 deg of declination at 0.4 deg per day, so the tolerance is
  // 0.15 deg; his (r0/r)^2 peaks at 1.0351 where the orbit's eccentricity gives 1.0343 (from
  // memory), so the tolerance there is 1.5e-3.
  const int days[] = {1, 80, 172, 266, 355};
  const int months[] = {1, 3, 6, 9, 12}, mdays[] = {1, 21, 21, 23, 21};
  for (int k = 0; k < 5; ++k) {
    const UtcTime t{unix_seconds(2023, months[k], mdays[k], 12, 0, 0)};
    const SolarPosition p = solar_position(Site{0, 0, 0, 15}, t);
    INFO("day " << days[k]);
    CHECK(p.declination_deg == Approx(solar_declination(days[k] + 0.5) * 180 / M_PI).margin(0.15));
    CHECK(p.distance_factor == Approx(earth_sun_factor(days[k] + 0.5)).margin(1.5e-3));
  }
  // Perihelion (early January) and aphelion (early July): 0.98329 and 1.01671 AU (Astronomical
  // Almanac, common practice, from memory) -> factors 1.0343 and 0.9674.
  CHECK(solar_position(Site{}, parse_iso8601("2023-01-04T16:17Z")).distance_factor == Approx(1.0343).margin(3e-4));
  CHECK(solar_position(Site{}, parse_iso8601("2023-07-06T20:07Z")).distance_factor == Approx(0.9674).margin(3e-4));
}

TEST_CASE("the sun culminates due south at local solar noon north of the tropics", "[sun]") {
  // Exact geometry: at the hour angle's zero the azimuth is 180 deg and the true zenith angle is
  // |latitude - declination| (plus parallax, < 0.003 deg).
  const Site site{52.0, 13.0, 0.0, 15.0};
  double best = 1e9;
  SolarPosition noon{};
  for (int minute = 9 * 60; minute < 13 * 60; ++minute) {
    const SolarPosition p = solar_position(site, UtcTime{unix_seconds(2023, 3, 10, 0, minute, 0)});
    if (std::abs(p.hour_angle_deg) < best) best = std::abs(p.hour_angle_deg), noon = p;
  }
  CHECK(best < 0.26);  // within a minute of time
  CHECK(noon.azimuth_deg == Approx(180.0).margin(0.5));
  CHECK(noon.true_zenith_deg == Approx(52.0 - noon.declination_deg).margin(0.01));
}
