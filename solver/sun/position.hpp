// Solar position from site and time: Julian day, ISO 8601 times, Michalsky (1988).
#pragma once

#include <string>
#include <string_view>

namespace solstrata::sun {

/// An instant in UTC.
struct UtcTime {
  double unix_seconds = 0.0;  ///< s: seconds since 1970-01-01T00:00:00Z (no leap seconds, as POSIX)
  int utc_offset_minutes = 0; ///< min: the UTC offset the time was written with (east positive)
  /// d: Julian day (UT) of the instant, unix_seconds / 86400 + 2440587.5
  [[nodiscard]] double julian_day() const { return unix_seconds / 86400.0 + 2440587.5; }
};

/// s: seconds since 1970-01-01T00:00:00Z of a proleptic Gregorian UTC date and time.
double unix_seconds(int year, int month, int day, int hour, int minute, double second);

/// Parses an ISO 8601 date-time with its UTC offset: "2003-10-17T12:30:30-07:00", "...+0530",
/// "...Z"; seconds and their fraction are optional, a space may stand for the "T". A time without
/// an offset is refused (it would be ambiguous). Throws std::invalid_argument naming the text and
/// the expected form.
UtcTime parse_iso8601(std::string_view text);

/// "YYYY-MM-DDTHH:MM:SSZ" of an instant (seconds rounded to the nearest whole second).
std::string format_iso8601_utc(const UtcTime& t);

/// "YYYY-MM-DDTHH:MM:SS+HH:MM" of an instant in local time at `utc_offset_minutes` ("Z" for 0).
std::string format_iso8601_local(double unix_seconds, int utc_offset_minutes);

/// Where the observer is and the air that refracts the sun's light.
struct Site {
  double latitude_deg = 0.0;    ///< degrees north, [-90, 90]
  double longitude_deg = 0.0;   ///< degrees east, [-180, 360)
  double pressure_hpa = 1013.25;  ///< hPa: surface pressure, for refraction (0 = no refraction)
  double temperature_c = 15.0;    ///< degrees Celsius: surface air temperature, for refraction
};

/// The sun seen from a site.
struct SolarPosition {
  double zenith_deg = 0.0;          ///< degrees: apparent (refracted) topocentric zenith angle
  double true_zenith_deg = 0.0;     ///< degrees: topocentric zenith angle without refraction
  double azimuth_deg = 0.0;         ///< degrees: from north, eastward, [0, 360)
  double declination_deg = 0.0;     ///< degrees: geocentric declination
  double hour_angle_deg = 0.0;      ///< degrees: local hour angle, (-180, 180], positive after noon
  double distance_au = 1.0;         ///< AU: Earth-Sun distance
  double distance_factor = 1.0;     ///< dimensionless: (1 AU / distance)^2, the TOA irradiance factor
};

/// Solar position by the algorithm of Michalsky (1988), Solar Energy 40, 227-235, from the
/// Astronomical Almanac's low-precision formulas (stated accuracy about 0.01 deg for 1950-2050):
///   n = JD - 2451545, L = 280.460 + 0.9856474 n, g = 357.528 + 0.9856003 n (deg),
///   ecliptic longitude = L + 1.915 sin g + 0.020 sin 2g, obliquity = 23.439 - 4e-7 n,
///   GMST = 6.697375 + 0.0657098242 n + UT (h), R = 1.00014 - 0.01671 cos g - 0.00014 cos 2g (AU);
/// the azimuth by the quadrant-safe atan2 form; parallax 8.794 arcsec / R x sin(zenith); and
/// atmospheric refraction of Saemundsson (1986), Sky & Telescope 72, 70 (as in Meeus 1998,
/// "Astronomical Algorithms", eq. 16.4): R' = 1.02 / tan(h + 10.3 / (h + 5.11)) arcmin scaled by
/// (P / 1010 hPa)(283 K / T), applied above -1 deg apparent elevation (from memory).
/// Throws std::invalid_argument for a latitude outside [-90, 90] or non-finite input.
SolarPosition solar_position(const Site& site, const UtcTime& t);

}  // namespace solstrata::sun
