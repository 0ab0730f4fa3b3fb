// Derived products of level fluxes: heating rate, PAR, UV index, irradiance components.
#pragma once

#include <span>

namespace solstrata::products {

/// m s-2: standard acceleration of gravity (3rd CGPM 1901, exact by definition).
inline constexpr double kStandardGravity = 9.80665;
/// J kg-1 K-1: specific heat of dry air at constant pressure, 1004.64 (common practice in
/// atmospheric models; within 0.1 % of the tabulated 1005 at 300 K).
inline constexpr double kDryAirCp = 1004.64;
/// J s: Planck constant (SI 2019, exact).
inline constexpr double kPlanck = 6.62607015e-34;
/// m s-1: speed of light in vacuum (exact).
inline constexpr double kSpeedOfLight = 299792458.0;
/// mol-1: Avogadro constant (SI 2019, exact).
inline constexpr double kAvogadroConstant = 6.02214076e23;
/// m2 W-1: UV index per W m-2 of erythemally weighted irradiance (WHO/WMO/UNEP/ICNIRP 2002,
/// "Global Solar UV Index: A Practical Guide": UVI = 40 m2 W-1 x E_ery).
inline constexpr double kUvIndexPerWattPerM2 = 40.0;

/// K day-1: heating rate of a layer that absorbs `absorbed_w_m2` (W m-2, the net-flux
/// divergence F_net(top) - F_net(bottom)) and spans `dp_hpa` (hPa, > 0) of pressure:
/// dT/dt = (g / c_p) dF/dp (hydrostatic first law, e.g. Liou 2002 eq. 3.8.1), times 86400 s day-1.
double heating_rate_k_per_day(double absorbed_w_m2, double dp_hpa);

/// Dimensionless: CIE erythema reference action spectrum (ISO 17166:1999 / CIE S 007/E:1998) at
/// wavelength `nm`: 1 for 250-298 nm, 10^(0.094 (298 - nm)) for 298-328 nm,
/// 10^(0.015 (140 - nm)) for 328-400 nm, 0 above 400 nm (and, by our choice, 0 below 250 nm,
/// where the standard does not define it and no sunlight reaches the ground).
double erythema_action(double nm);

/// Dimensionless: mean of erythema_action over [lower_nm, upper_nm] (exact integral of the
/// piecewise exponential divided by the width); the weight for a bin whose spectral irradiance
/// is flat across it.
double erythema_action_mean(double lower_nm, double upper_nm);

/// umol m-2 s-1: photon flux of `energy_w_m2` (W m-2) spread evenly over [lower_nm, upper_nm]:
/// integral of E lambda / (h c N_A) d lambda (McCree 1972; SI constants); for an even spread the
/// mean wavelength is the bin midpoint.
double photon_flux_umol(double energy_w_m2, double lower_nm, double upper_nm);

/// Irradiance components at the surface from horizontal fluxes (W m-2).
struct SurfaceIrradiance {
  double direct_normal;       ///< W m-2: direct-normal irradiance (DNI) = direct horizontal / mu0
  double diffuse_horizontal;  ///< W m-2: diffuse horizontal irradiance (DHI)
  double global_horizontal;   ///< W m-2: global horizontal irradiance (GHI) = direct + diffuse
};

/// The usual decomposition GHI = DNI mu0 + DHI (closure relation of solar resource
/// assessment, common practice). mu0 in (0, 1].
SurfaceIrradiance surface_irradiance(double direct_horizontal, double diffuse_horizontal,
                                     double mu0);

}  // namespace solstrata::products
