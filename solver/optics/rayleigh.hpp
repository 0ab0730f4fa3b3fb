// Rayleigh scattering by air after Bodhaine, Wood, Dutton & Slusser (1999).
#pragma once

namespace solstrata::optics {

/// dimensionless: refractive index of dry air at 288.15 K, 1013.25 hPa and CO2 at `co2_ppmv`.
/// Peck & Reeder (1972) for 300 ppm CO2, sigma = 1/lambda in um-1:
///   (n300 - 1) 1e8 = 8060.51 + 2480990/(132.274 - sigma^2) + 17455.7/(39.32957 - sigma^2),
/// scaled for CO2 after Edlén (1966): (n - 1) = (n300 - 1)(1 + 0.54 (C - 0.0003)), C in parts per
/// volume (as used by Bodhaine et al. 1999). Peck & Reeder measured over about 0.23-1.7 um (from
/// memory); beyond that the formula is extrapolated (Rayleigh optical depth is tiny there);
/// `wavelength_nm` must be > 200 nm.
double air_refractive_index(double wavelength_nm, double co2_ppmv);

/// dimensionless: King correction factor (6 + 3 rho)/(6 - 7 rho) of air with CO2 at `co2_ppmv`,
/// weighting those of N2, O2, Ar and CO2 by volume (Bates 1984; Bodhaine et al. 1999).
double air_king_factor(double wavelength_nm, double co2_ppmv);

/// cm2 molecule-1: Rayleigh scattering cross section of one air molecule,
///   sigma = 24 pi^3 (n^2 - 1)^2 / (lambda^4 Ns^2 (n^2 + 2)^2) F_air,
/// lambda in cm, Ns = 2.546899e19 cm-3 (air at 288.15 K, 1013.25 hPa) (Bodhaine et al. 1999).
double rayleigh_cross_section(double wavelength_nm, double co2_ppmv);

/// dimensionless: Rayleigh optical depth of the whole column above a surface at pressure
/// `pressure_hpa`, latitude `latitude_deg`, altitude `surface_altitude_m`:
/// tau = sigma P A / (m_a g) (Bodhaine et al. 1999) with gravity taken at the column's
/// mass-weighted height z_c = 0.73737 z + 5517.56 m (as Bodhaine et al. 1999 recommend).
double rayleigh_column_optical_depth(double wavelength_nm, double pressure_hpa,
                                     double latitude_deg, double surface_altitude_m,
                                     double co2_ppmv);

/// dimensionless: depolarisation ratio rho of air implied by the King factor F: F = (6 + 3 rho)/(6 - 7 rho).
double depolarisation_ratio(double king_factor);

}  // namespace solstrata::optics
