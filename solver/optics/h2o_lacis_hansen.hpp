// The built-in water-vapour k-distribution: the Lacis & Hansen (1974) exponential sum for the
// absorptance of the whole solar spectrum, spread over the bins of a spectral grid.
#pragma once

#include <array>
#include <vector>

#include "optics/ktable.hpp"
#include "spectrum/grid.hpp"

namespace solstrata::optics {

/// cm2 g-1: absorption coefficients of the exponential sum of Lacis & Hansen (1974),
/// J. Atmos. Sci. 31, 118, Table 2 - FROM MEMORY (checked only in that the sum reproduces their
/// absorptance formula, kLacisHansenAbsorptance, to ~1e-4 for y = 0.01..10 g cm-2).
inline constexpr std::array<double, 8> kLacisHansenK = {4e-5, 0.002, 0.035, 0.377,
                                                        1.95, 9.40,  44.6,  190.0};
/// dimensionless: their weights, fractions of the TOTAL solar flux (from memory, as above).
inline constexpr std::array<double, 8> kLacisHansenWeights = {0.6470, 0.0698, 0.1443, 0.0584,
                                                              0.0335, 0.0225, 0.0158, 0.0087};
/// hPa, K: reference state of the pressure scaling y = integral (p/p0)(T0/T)^(1/2) rho_w dz
/// (Lacis & Hansen 1974; from memory).
inline constexpr double kLacisHansenP0 = 1013.0;
inline constexpr double kLacisHansenT0 = 273.0;
/// g mol-1: molar mass of water used for the cm2 g-1 -> cm2 molecule-1 conversion.
inline constexpr double kLacisHansenWaterMolarMass = 18.015;

/// dimensionless: fraction of the total solar flux absorbed by an effective water path `y_g_cm2`
/// (g cm-2), A(y) = 2.9 y / ((1 + 141.5 y)^0.635 + 5.925 y) (Lacis & Hansen 1974, eq. 18).
double lacis_hansen_absorptance(double y_g_cm2);

/// The built-in H2O table on the bins of `grid`, with `bin_solar_w_m2` (W m-2, the solar
/// irradiance of each bin, e.g. ASTM E490 integrated onto the grid) as the weighting spectrum.
///
/// Every bin of the grid is one table bin. Per bin the weights w_i(bin) >= 0 sum to 1, and over
/// the grid sum_bins S_bin w_i(bin) = w_i S_total for every term i, so that the whole-grid
/// absorptance is exactly the exponential sum. The split is found by iterative proportional
/// fitting (Deming & Stephan 1940; Sinkhorn 1964) of a prior that, in bins of 700 nm and above,
/// favours strong terms near the water-vapour band centres (0.72, 0.82, 0.94, 1.13, 1.38, 1.87,
/// 2.7, 3.2 um) and the weakest term in the windows between them (near 0.87, 1.05, 1.25, 1.6,
/// 2.2, 3.9 um) - band positions from memory; bins below 700 nm carry only the weakest term.
/// Terms with a weight below 1e-6 in a bin are dropped (the fit is repeated on what is left).
/// A broadband representation: spectral detail in the near infrared is approximate.
///
/// k(p, T) = k_i (p/p0)(T0/T)^(1/2) on the table's nodes (pressures 1e-5 .. 1100 hPa including
/// p0, temperatures 153 .. 353 K every 10 K including T0), in cm2 molecule-1 with
/// M = kLacisHansenWaterMolarMass. Throws std::invalid_argument when the sizes differ, the grid
/// has no bin of 700 nm or above, or the fit fails.
KTable h2o_lacis_hansen(const spectrum::Grid& grid, const std::vector<double>& bin_solar_w_m2,
                        const std::string& spectrum_name = "ASTM E490-00a");

}  // namespace solstrata::optics
