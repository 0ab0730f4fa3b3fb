#include "rt/closure.hpp"

#include <algorithm>
#include <cmath>

namespace solstrata::rt {

std::string_view to_string(Closure c) {
  switch (c) {
    case Closure::delta_eddington: return "delta_eddington";
    case Closure::eddington: return "eddington";
    case Closure::quadrature: return "quadrature";
    case Closure::hemispheric_mean: return "hemispheric_mean";
    case Closure::pifm: return "pifm";
  }
  return "unknown";
}

std::optional<Closure> parse_closure(std::string_view name) {
  for (Closure c : kAllClosures) {
    if (to_string(c) == name) return c;
  }
  return std::nullopt;
}

ClosureCoefficients coefficients(Closure c) {
  const double s3 = std::sqrt(3.0);
  switch (c) {
    // Eddington (Meador & Weaver 1980 Table 1; Toon et al. 1989 Table 1):
    //   gamma1 = (7 - omega(4 + 3g))/4, gamma2 = -(1 - omega(4 - 3g))/4, gamma3 = (2 - 3 g mu0)/4.
    case Closure::delta_eddington:
    case Closure::eddington:
      return {{1.75, -1.0, -0.75}, {-0.25, 1.0, -0.75}, {0.5, -0.75},
              c == Closure::delta_eddington};
    // Quadrature (Meador & Weaver 1980 Table 1):
    //   gamma1 = sqrt3 (2 - omega(1 + g))/2, gamma2 = sqrt3 omega (1 - g)/2,
    //   gamma3 = (1 - sqrt3 g mu0)/2.
    case Closure::quadrature:
      return {{s3, -s3 / 2, -s3 / 2}, {0.0, s3 / 2, -s3 / 2}, {0.5, -s3 / 2}, false};
    // Hemispheric mean (Toon et al. 1989 Table 1): gamma1 = 2 - omega(1 + g),
    // gamma2 = omega(1 - g). Toon et al. give no beam coefficient for it; we use the fraction of
    // the beam that a two-term phase function 1 + 3 g cos(Theta) scatters into the upper
    // hemisphere, 1/2 - 3 g mu0 / 4 (the same form as Eddington's gamma3).
    case Closure::hemispheric_mean:
      return {{2.0, -1.0, -1.0}, {0.0, 1.0, -1.0}, {0.5, -0.75}, false};
    // PIFM (Zdunkowski, Welch & Korb 1980, Beitr. Phys. Atmos. 53, 147):
    //   gamma1 = (8 - omega(5 + 3g))/4, gamma2 = 3 omega (1 - g)/4, gamma3 = (2 - 3 g mu0)/4.
    case Closure::pifm:
      return {{2.0, -1.25, -0.75}, {0.0, 0.75, -0.75}, {0.5, -0.75}, false};
  }
  return {};
}

Gammas gammas(Closure c, double omega, double g, double mu0) {
  const ClosureCoefficients k = coefficients(c);
  const double g1 = k.g1[0] + k.g1[1] * omega + k.g1[2] * omega * g;
  const double g2 = k.g2[0] + k.g2[1] * omega + k.g2[2] * omega * g;
  const double g3 = k.g3[0] + k.g3[1] * g * mu0;
  return {g1, g2, g3, 1.0 - g3};
}

Gammas kernel_gammas(Closure c, double omega, double g, double mu0) {
  Gammas v = gammas(c, omega, g, mu0);
  v.g2 = std::max(0.0, v.g2);  // non-negative stream coupling (see the declaration)
  v.g3 = std::min(1.0, v.g3);  // non-negative forward fraction gamma4 (see the declaration)
  v.g4 = 1.0 - v.g3;
  return v;
}

}  // namespace solstrata::rt
