// Daily sums: daylight length, daily-mean top-of-atmosphere insolation, quadrature over daylight.
#pragma once

#include <functional>
#include <utility>
#include <vector>

#include "sun/position.hpp"

namespace solstrata::sun {

/// rad: sunset hour angle h0 with cos h0 = -tan(latitude) tan(declination), 0 in polar night and
/// pi in polar day (textbook spherical astronomy, e.g. Iqbal 1983, "An Introduction to Solar
/// Radiation", ch. 1).
double sunset_hour_angle(double latitude_rad, double declination_rad);

/// W m-2: daily-mean insolation at the top of the atmosphere on a horizontal surface,
/// Q = (S0 / pi) f [h0 sin(lat) sin(dec) + cos(lat) cos(dec) sin h0], with S0 the solar constant
/// (W m-2), f = (r0/r)^2 and h0 the sunset hour angle (textbook form; e.g. Iqbal 1983; Hartmann
/// 1994, "Global Physical Climatology", eq. 2.15). Declination and distance held for the day.
double daily_mean_toa(double solar_constant_w_m2, double distance_factor, double latitude_rad, double declination_rad);

/// The day-integral of f(hour_angle) over daylight [-h0, h0] by Gauss-Legendre quadrature with
/// `nodes` points (f is evaluated only while the sun is up), in the unit of f times radians of
/// hour angle; divide by 2 pi for a daily mean. Returns 0 in polar night.
double integrate_daylight(const std::function<double(double)>& f, double latitude_rad, double declination_rad,
                          int nodes);

/// Gauss-Legendre quadrature on [-1, 1]: nodes x (increasing) and weights w, n in [1, 1000].
struct GaussLegendre {
  std::vector<double> x, w;
};
GaussLegendre gauss_legendre(int n);

/// The intervals [rise, set] (s since 1970-01-01T00:00:00Z) within [from, to] during which the
/// centre of the sun is above the horizon at `site`: apparent elevation (with refraction) when
/// `refracted`, else the geometric one (for extraterrestrial sums). An interval that begins
/// or ends at `from`/`to` is cut there. Found by sampling every 5 minutes and bisection to 0.01 s.
/// With `min_elevation_deg`, the intervals with the sun higher than that elevation.
std::vector<std::pair<double, double>> daylight_intervals(const Site& site, double from_unix, double to_unix,
                                                          bool refracted = true, double min_elevation_deg = 0.0);

/// The instants in (from, to) where f changes sign: f sampled every 5 minutes (300 s), each
/// change refined by bisection to 0.01 s. Increasing.
std::vector<double> sign_changes(const std::function<double(double)>& f, double from_unix, double to_unix);

/// J m-2: extraterrestrial insolation on a horizontal surface over [from, to] (s since
/// 1970-01-01T00:00:00Z), integral of S0 (r0/r)^2 max(0, cos Z) dt with the geometric zenith angle
/// and distance of solar_position (Michalsky 1988), by `nodes`-point Gauss-Legendre quadrature over
/// each geometric daylight interval. `solar_constant_w_m2` is S0 at mean distance.
double extraterrestrial_insolation(const Site& site, double from_unix, double to_unix, double solar_constant_w_m2,
                                   int nodes = 24);

}  // namespace solstrata::sun
