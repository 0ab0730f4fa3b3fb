// Relative optical air mass and the slant paths of a spherical-shell atmosphere.
#pragma once

#include <vector>

namespace solstrata::sun {

/// km: mean Earth radius (IUGG, 6371.0 km; common practice).
inline constexpr double kEarthRadiusKm = 6371.0;

/// dimensionless: relative optical air mass of Kasten & Young (1989), Appl. Opt. 28, 4735:
/// m = 1 / [cos Z + 0.50572 (96.07995 - Z)^-1.6364], Z the apparent zenith angle in degrees,
/// [0, 90] (formula from memory). Throws std::invalid_argument outside that range.
double kasten_young_air_mass(double zenith_deg);

/// dimensionless: the geometric slant-path factor of each layer of a spherical-shell atmosphere
/// (path length of a straight ray through the shell / the shell's vertical thickness), for levels
/// at `altitude_km` (top first, strictly decreasing) and a ray reaching the lowest level at
/// `zenith_deg` (degrees, [0, 90]). With r the radii and s = r_sfc sin Z, the path in the shell
/// [r_b, r_t] is sqrt(r_t^2 - s^2) - sqrt(r_b^2 - s^2) (plane geometry of a circle). Refraction is
/// ignored. Finite at 90 deg (grazing incidence at the lowest level). Throws
/// std::invalid_argument on bad input.
std::vector<double> layer_slant_factors(const std::vector<double>& altitude_km, double zenith_deg,
                                        double earth_radius_km = kEarthRadiusKm);

}  // namespace solstrata::sun
