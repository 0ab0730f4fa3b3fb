#include "sun/position.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <cstdio>
#include <numbers>
#include <stdexcept>

namespace solstrata::sun {
namespace {

constexpr double kDeg = std::numbers::pi / 180.0;

/// Days from 1970-01-01 of a proleptic Gregorian date (the civil-from-days inverse of
/// H. Hinnant's date algorithms, public domain; common practice).
long days_from_civil(long y, unsigned m, unsigned d) {
  y -= m <= 2;
  const long era = (y >= 0 ? y : y - 399) / 400;
  const unsigned yoe = static_cast<unsigned>(y - era * 400);
  const unsigned doy = (153 * (m + (m > 2 ? -3 : 9)) + 2) / 5 + d - 1;
  const unsigned doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
  return era * 146097 + static_cast<long>(doe) - 719468;
}

int days_in_month(int y, int m) {
  static const int kDays[] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
  const bool leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
  return m == 2 && leap ? 29 : kDays[m - 1];
}

double wrap360(double x) {
  x = std::fmod(x, 360.0);
  return x < 0 ? x + 360.0 : x;
}

[[noreturn]] void bad_time(std::string_view text, const char* why) {
  throw std::invalid_argument("'" + std::string(text) + "' is not an ISO 8601 date-time with a UTC offset (" + why +
                              "); expected e.g. 2003-10-17T12:30:30-07:00 or 2003-10-17T19:30:30Z");
}

}  // namespace

double unix_seconds(int year, int month, int day, int hour, int minute, double second) {
  return double(days_from_civil(year, static_cast<unsigned>(month), static_cast<unsigned>(day))) * 86400.0 +
         hour * 3600.0 + minute * 60.0 + second;
}

UtcTime parse_iso8601(std::string_view s) {
  std::size_t i = 0;
  const auto digits = [&](std::size_t n) -> int {
    if (i + n > s.size()) bad_time(s, "too short");
    int v = 0;
    for (std::size_t k = 0; k < n; ++k) {
      const char c = s[i + k];
      if (c < '0' || c > '9') bad_time(s, "a digit was expected");
      v = v * 10 + (c - '0');
    }
    i += n;
    return v;
  };
  const auto expect = [&](char c, const char* why) {
    if (i >= s.size() || s[i] != c) bad_time(s, why);
    ++i;
  };
  const int year = digits(4);
  expect('-', "date as YYYY-MM-DD");
  const int month = digits(2);
  expect('-', "date as YYYY-MM-DD");
  const int day = digits(2);
  if (i >= s.size() || (s[i] != 'T' && s[i] != ' ')) bad_time(s, "a time after the date, e.g. T12:00");
  ++i;
  const int hour = digits(2);
  expect(':', "time as HH:MM");
  const int minute = digits(2);
  double second = 0.0;
  if (i < s.size() && s[i] == ':') {
    ++i;
    second = digits(2);
    if (i < s.size() && (s[i] == '.' || s[i] == ',')) {
      ++i;
      double scale = 0.1;
      if (i >= s.size() || s[i] < '0' || s[i] > '9') bad_time(s, "digits after the decimal point");
      while (i < s.size() && s[i] >= '0' && s[i] <= '9') {
        second += scale * (s[i] - '0');
        scale /= 10;
        ++i;
      }
    }
  }
  if (month < 1 || month > 12 || day < 1 || day > days_in_month(year, month)) bad_time(s, "no such date");
  if (hour > 24 || minute > 59 || second >= 61.0 || (hour == 24 && (minute || second > 0))) bad_time(s, "no such time");
  double offset = 0.0;  // s east of UTC
  if (i >= s.size()) bad_time(s, "the UTC offset is missing: add Z or e.g. -07:00");
  if (s[i] == 'Z') {
    ++i;
  } else if (s[i] == '+' || s[i] == '-') {
    const double sign = s[i] == '+' ? 1.0 : -1.0;
    ++i;
    const int oh = digits(2);
    if (i < s.size() && s[i] == ':') ++i;
    const int om = i < s.size() ? digits(2) : 0;
    if (oh > 18 || om > 59) bad_time(s, "offset out of range");
    offset = sign * (oh * 3600.0 + om * 60.0);
  } else {
    bad_time(s, "the UTC offset is missing: add Z or e.g. -07:00");
  }
  if (i != s.size()) bad_time(s, "unexpected text after the offset");
  return {unix_seconds(year, month, day, hour, minute, second) - offset, static_cast<int>(std::lround(offset / 60.0))};
}

std::string format_iso8601_utc(const UtcTime& t) {
  const double secs = std::round(t.unix_seconds);
  long days = static_cast<long>(std::floor(secs / 86400.0));
  long rest = static_cast<long>(secs - double(days) * 86400.0);
  // civil_from_days (Hinnant).
  days += 719468;
  const long era = (days >= 0 ? days : days - 146096) / 146097;
  const unsigned doe = static_cast<unsigned>(days - era * 146097);
  const unsigned yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
  long y = static_cast<long>(yoe) + era * 400;
  const unsigned doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
  const unsigned mp = (5 * doy + 2) / 153;
  const unsigned d = doy - (153 * mp + 2) / 5 + 1;
  const unsigned m = mp < 10 ? mp + 3 : mp - 9;
  y += m <= 2;
  char buf[96];
  std::snprintf(buf, sizeof buf, "%04ld-%02u-%02uT%02d:%02d:%02dZ", y, m, d, static_cast<int>(rest / 3600),
                static_cast<int>((rest / 60) % 60), static_cast<int>(rest % 60));
  return buf;
}

std::string format_iso8601_local(double unix_s, int utc_offset_minutes) {
  std::string local = format_iso8601_utc({unix_s + 60.0 * utc_offset_minutes});
  if (utc_offset_minutes == 0) return local;
  local.pop_back();  // the 'Z'
  const int a = std::abs(utc_offset_minutes);
  char buf[16];
  std::snprintf(buf, sizeof buf, "%c%02d:%02d", utc_offset_minutes < 0 ? '-' : '+', a / 60, a % 60);
  return local + buf;
}

SolarPosition solar_position(const Site& site, const UtcTime& t) {
  if (!(site.latitude_deg >= -90.0 && site.latitude_deg <= 90.0) || !std::isfinite(site.longitude_deg) ||
      !std::isfinite(t.unix_seconds) || !std::isfinite(site.pressure_hpa) || !std::isfinite(site.temperature_c)) {
    throw std::invalid_argument("solar_position: latitude must be in [-90, 90] and every input finite");
  }
  const double jd = t.julian_day();
  const double n = jd - 2451545.0;
  const double ut_hours = std::fmod(t.unix_seconds / 3600.0, 24.0) + (t.unix_seconds < 0 ? 24.0 : 0.0);
  const double L = wrap360(280.460 + 0.9856474 * n);
  const double g = wrap360(357.528 + 0.9856003 * n) * kDeg;
  const double lambda = wrap360(L + 1.915 * std::sin(g) + 0.020 * std::sin(2 * g)) * kDeg;
  const double eps = (23.439 - 4e-7 * n) * kDeg;
  const double ra = std::atan2(std::cos(eps) * std::sin(lambda), std::cos(lambda));  // rad
  const double dec = std::asin(std::sin(eps) * std::sin(lambda));
  double gmst = std::fmod(6.697375 + 0.0657098242 * n + ut_hours, 24.0);
  if (gmst < 0) gmst += 24.0;
  const double lmst_deg = wrap360(gmst * 15.0 + site.longitude_deg);
  double ha = lmst_deg - ra / kDeg;  // deg
  ha = std::fmod(ha + 540.0, 360.0) - 180.0;
  if (ha <= -180.0) ha += 360.0;
  const double lat = site.latitude_deg * kDeg, h = ha * kDeg;
  const double sin_el = std::clamp(std::sin(dec) * std::sin(lat) + std::cos(dec) * std::cos(lat) * std::cos(h), -1.0, 1.0);
  double el = std::asin(sin_el) / kDeg;
  double az = std::atan2(-std::sin(h), std::tan(dec) * std::cos(lat) - std::sin(lat) * std::cos(h)) / kDeg;
  az = wrap360(az);
  const double r = 1.00014 - 0.01671 * std::cos(g) - 0.00014 * std::cos(2 * g);
  // Parallax: the topocentric sun stands lower by 8.794 arcsec / R x cos(elevation).
  el -= 8.794 / 3600.0 / r * std::cos(el * kDeg);
  SolarPosition p;
  p.true_zenith_deg = 90.0 - el;
  double apparent = el;
  if (site.pressure_hpa > 0.0 && el > -1.0) {
    const double arcmin = 1.02 / std::tan((el + 10.3 / (el + 5.11)) * kDeg);
    apparent += arcmin / 60.0 * (site.pressure_hpa / 1010.0) * (283.0 / (273.0 + site.temperature_c));
  }
  p.zenith_deg = 90.0 - apparent;
  p.azimuth_deg = az;
  p.declination_deg = dec / kDeg;
  p.hour_angle_deg = ha;
  p.distance_au = r;
  p.distance_factor = 1.0 / (r * r);
  return p;
}

}  // namespace solstrata::sun
