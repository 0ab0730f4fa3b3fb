// Exact multi-stream reference: discrete ordinates for the azimuthally averaged fluxes.
#pragma once

#include <string>

#include "rt/two_stream.hpp"

namespace solstrata::rt {

/// Options of the multi-stream reference solver.
struct ReferenceOptions {
  /// Total number of streams 2N (dimensionless, even, 4..64): N Gauss-Legendre directions per
  /// hemisphere. The phase function keeps Legendre moments 0..2N-1.
  int streams = 16;
  /// Delta-M scaling (Wiscombe 1977): fold the Legendre moment of order 2N into the forward peak.
  bool delta_m = true;
  /// Depolarisation factor rho_n of the Rayleigh phase function (dimensionless, [0, 0.5]), used
  /// where ColumnBatch::rayleigh_fraction > 0. Default 0.0279 for dry air (Young 1980, Appl. Opt.
  /// 19, 3427, from memory).
  double depolarization = 0.0279;

  /// Empty when valid, else a sentence naming the field, its value and the rule.
  [[nodiscard]] std::string validate() const;
};

/// Solves every column of the batch with the discrete-ordinate method (Chandrasekhar 1960;
/// Stamnes, Tsay, Wiscombe & Jayaweera 1988) for the azimuthally averaged (m = 0) intensity,
/// which is all that the fluxes need. Same inputs, output layout and direct-beam convention as
/// solve_columns: `direct_down` is the unscattered beam of the unscaled optical depth, and
/// `diffuse_down` is the total downward flux minus it. Phase function: Henyey-Greenstein with
/// asymmetry g (Legendre moments g^l), truncated after order streams - 1 (after delta-M scaling
/// when `delta_m` is set). Where ColumnBatch::rayleigh_fraction f_R > 0 the phase function is the
/// mixture f_R p_Rayleigh + (1 - f_R) p_HG(g_a) with g_a = g/(1 - f_R) (so that the layer's mean
/// asymmetry stays g; Rayleigh scattering has none), i.e. moments chi_l = f_R chi_l^R +
/// (1 - f_R) g_a^l (see rayleigh_moment2). A g inconsistent with f_R (|g| >= 1 - f_R) is clamped
/// to |g_a| <= 1 - 1e-9; at f_R = 1, g_a = 0. Fluxes are in the unit of `solar` (W m-2 for broadband).
/// The beam follows ColumnBatch::beam_path when it is given (pseudo-spherical, as solve_columns).
///
/// Slow and exact: problems are solved one at a time (an eigenproblem per layer and a sparse
/// boundary-value solve per column). Meant as the yardstick for the two-stream closures, not as a
/// production path. Validates the inputs (rt::validate) and the options first; returns a failed
/// Status (leaving `out` untouched) when either is invalid. Never produces NaN or Inf for valid
/// input; omega = 1 (conservative scattering) is handled exactly.
/// Legendre moment chi_2 of the Rayleigh phase function with depolarisation factor rho_n, in the
/// normalisation p(cos Theta) = sum_l (2l + 1) chi_l P_l(cos Theta) (chi_0 = 1; Henyey-Greenstein
/// has chi_l = g^l). The phase function (Chandrasekhar 1960, ch. I; Hansen & Travis 1974,
/// Space Sci. Rev. 16, 527, sec. 2) is p = 3/(4(1 + 2 gamma)) [(1 + 3 gamma) + (1 - gamma)
/// cos^2 Theta], gamma = rho_n/(2 - rho_n), whose expansion is p = 1 + beta_2 P_2 with
/// beta_2 = (1 - rho_n)/(2 + rho_n); so chi_2 = beta_2 / 5 and chi_1 = chi_3 = ... = 0.
double rayleigh_moment2(double depolarization);

Status solve_columns_reference(const ColumnBatch& in, const ReferenceOptions& options,
                               LevelFluxes out);

}  // namespace solstrata::rt
