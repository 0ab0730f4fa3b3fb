// Daily sums: daylight length, daily-mean top-of-atmosphere insolation, quadrature over daylight.
#pragma once

#include <functional>

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

}  // namespace solstrata::sun
