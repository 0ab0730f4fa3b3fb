// Water vapour amount: saturation vapour pressure, humidity conversions, a default profile shape
// and rescaling to a total precipitable water.
#pragma once

#include <vector>

#include "atmos/profile.hpp"

namespace solstrata::atmos {

/// dimensionless: ratio of the molar masses of water and dry air, 18.01528 / 28.9645 = 0.62198
/// (computed from the molar masses; the dry-air value of the WMO Guide No. 8).
inline constexpr double kWaterAirMassRatio = 0.62198;
/// km: scale height of water-vapour density in the default shape (design choice: a common
/// round value for mid-latitudes, vapour density ~ exp(-z / 2 km)).
inline constexpr double kDefaultWaterScaleHeightKm = 2.0;

/// Pa: saturation vapour pressure over plane liquid water at `t_k` (K), Murphy & Koop (2005),
/// Q. J. R. Meteorol. Soc. 131, 1539, eq. (10), valid 123 < T < 332 K:
/// ln e_w = 54.842763 - 6763.22/T - 4.210 ln T + 0.000367 T
///          + tanh(0.0415 (T - 218.8)) (53.878 - 1331.22/T - 9.44523 ln T + 0.014025 T).
/// Throws std::invalid_argument outside (100, 400) K.
double saturation_pressure_water_pa(double t_k);

/// Pa: saturation vapour pressure over plane ice at `t_k` (K), Murphy & Koop (2005), eq. (7),
/// valid T > 110 K: ln e_i = 9.550426 - 5723.265/T + 3.53068 ln T - 0.00728332 T.
/// Throws std::invalid_argument outside (100, 400) K.
double saturation_pressure_ice_pa(double t_k);

/// ppmv: water-vapour mole fraction of moist air from specific humidity `q_kg_kg` (kg of vapour
/// per kg of moist air, [0, 1)): x = q / (q + (1 - q) eps), eps = kWaterAirMassRatio (from the
/// definitions of the two quantities, e.g. WMO Guide No. 8, 2008, Annex 4.B).
double ppmv_from_specific_humidity(double q_kg_kg);
/// kg kg-1: the inverse, q = eps x / (1 - x + eps x), x = ppmv 1e-6.
double specific_humidity_from_ppmv(double ppmv);

/// ppmv: mole fraction from relative humidity `rh_percent` (%, with respect to liquid water at
/// every temperature, the WMO convention) at temperature `t_k` (K) and total pressure
/// `p_hpa` (hPa): x = (RH/100) e_w(T) / p (ideal gas, enhancement factor ~1.004 neglected).
/// Throws std::invalid_argument when the vapour pressure reaches the total pressure.
double ppmv_from_relative_humidity(double rh_percent, double t_k, double p_hpa);
/// %: the inverse, RH = 100 x p / e_w(T).
double relative_humidity_from_ppmv(double ppmv, double t_k, double p_hpa);

/// ppmv at each level of `p` (valid pressures, temperatures, altitudes) for the default shape:
/// vapour density rho_v(z) = rho_0 exp(-(z - z_s) / H), H = kDefaultWaterScaleHeightKm, z_s the
/// surface altitude, converted with the ideal gas law (x = rho_v R T / (M_w p)) and scaled so
/// that the column is `total_cm` (cm of precipitable water, > 0). Not capped at saturation.
std::vector<double> default_h2o_ppmv(const Profile& p, double total_cm);

/// Multiplies the water-vapour mixing ratios so that the total precipitable water becomes
/// `target_cm` (cm, in (0, 100]); exact, since layer columns are linear in the mixing ratios.
/// Throws std::invalid_argument when the profile has no water vapour or the target is invalid.
void scale_h2o_to(Profile& p, double target_cm);

}  // namespace solstrata::atmos
