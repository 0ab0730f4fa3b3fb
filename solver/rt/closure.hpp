// Two-stream closures: the gamma1..gamma4 coefficients of Meador & Weaver (1980).
#pragma once

#include <array>
#include <optional>
#include <string_view>

namespace solstrata::rt {

/// The classic two-stream closures. All of them share one solution (Meador & Weaver 1980,
/// J. Atmos. Sci. 37, 630); they differ only in gamma1..gamma3 (gamma4 = 1 - gamma3).
enum class Closure {
  delta_eddington,   ///< Eddington after delta scaling f = g^2 (Joseph, Wiscombe & Weinman 1976). Default.
  eddington,         ///< Eddington (Shettle & Weinman 1970; Meador & Weaver 1980 Table 1).
  quadrature,        ///< Quadrature, mu1 = 1/sqrt(3) (Liou 1973; Meador & Weaver 1980 Table 1).
  hemispheric_mean,  ///< Hemispheric mean (Toon et al. 1989 Table 1), beam term as documented below.
  pifm,              ///< Practical improved flux method (Zdunkowski, Welch & Korb 1980).
};

inline constexpr std::array<Closure, 5> kAllClosures = {
    Closure::delta_eddington, Closure::eddington, Closure::quadrature, Closure::hemispheric_mean,
    Closure::pifm};

/// Stable lower-case name used in experiment files and HDF5 attributes ("delta_eddington", ...).
std::string_view to_string(Closure c);
/// Inverse of to_string; std::nullopt for an unknown name.
std::optional<Closure> parse_closure(std::string_view name);

/// gamma1..gamma3 as linear forms in omega, omega*g and g*mu0:
///   gamma1 = g1[0] + g1[1] omega + g1[2] omega g
///   gamma2 = g2[0] + g2[1] omega + g2[2] omega g
///   gamma3 = g3[0] + g3[1] g mu0,      gamma4 = 1 - gamma3.
/// Every closure here satisfies gamma1 = gamma2 at omega = 1 (no absorption, no loss), which the
/// kernel relies on to keep k = sqrt(gamma1^2 - gamma2^2) exactly 0 for conservative layers.
struct ClosureCoefficients {
  std::array<double, 3> g1{};
  std::array<double, 3> g2{};
  std::array<double, 2> g3{};
  bool delta_scaled = false;  ///< apply delta-function scaling f = g^2 before the closure
};

/// The coefficient table of a closure.
ClosureCoefficients coefficients(Closure c);

/// gamma1..gamma4 evaluated for one (omega, g, mu0); omega and g are the values the closure sees
/// (after delta scaling for delta_eddington). For tests and documentation; kernels use the table.
struct Gammas {
  double g1, g2, g3, g4;
};
Gammas gammas(Closure c, double omega, double g, double mu0);

/// The gammas the two-stream kernel actually uses: `gammas` with gamma2 limited to >= 0.
///
/// gamma2 is the rate at which scattering feeds one stream from the other (in the two-stream
/// equations of Meador & Weaver 1980, dF+/dtau = gamma1 F+ - gamma2 F- - source); for a
/// non-negative phase function it cannot be
/// negative, and without scattering (omega = 0) it is exactly 0. The Eddington forms (plain and
/// delta-scaled) give gamma2 = -(1 - omega(4 - 3g))/4 < 0 for omega < 1/(4 - 3g), which produces
/// negative diffuse reflectance and negative diffuse fluxes in strongly absorbing layers (a pure
/// absorber over a bright surface gets a negative diffuse flux instead of 0). The remedy is
/// gamma2 := max(gamma2, 0) with gamma1 unchanged: continuous in omega (gamma2 passes through 0
/// at the threshold), exact for omega = 0 (no coupling of the streams), and the identity wherever
/// gamma2 >= 0 already -- so for every closure at omega = 1 (gamma1 = gamma2 > 0) and for the
/// quadrature, hemispheric-mean and PIFM closures everywhere (their gamma2 is proportional to
/// omega (1 - g) >= 0).
///
/// Likewise gamma3 and gamma4 = 1 - gamma3 are the fractions of the singly scattered beam sent
/// into the upper and lower hemisphere (Meador & Weaver 1980), so gamma4 >= 0: the
/// published forms give gamma3 > 1 for back-scattering layers at high sun (Eddington, PIFM and
/// hemispheric mean for g mu0 < -2/3, quadrature for g mu0 < -1/sqrt(3)), and a negative
/// transmitted diffuse flux; gamma3 := min(gamma3, 1). The opposite end, gamma3 < 0 for strong
/// forward scattering at high sun (g mu0 > 2/3, or > 1/sqrt(3) for quadrature), is left as
/// published: it is the documented weakness of the unscaled closures (negative reflectance, see
/// the quadrature tests), and delta-Eddington never reaches it (g' = g/(1 + g) < 1/2).
Gammas kernel_gammas(Closure c, double omega, double g, double mu0);

}  // namespace solstrata::rt
