#include "rt/closure.hpp"

#include <catch2/catch.hpp>
#include <cmath>

using namespace solstrata::rt;

namespace {
// Closed forms of Meador & Weaver (1980) Table 1 / Toon et al. (1989) Table 1 as transcribed in
// shared/checkvalues.md section 2 (Eddington and PIFM [published]; quadrature and hemispheric
// mean [from memory]); gamma3 of the hemispheric mean is our documented choice.
Gammas published(Closure c, double w, double g, double mu0) {
  const double s3 = std::sqrt(3.0);
  switch (c) {
    case Closure::delta_eddington:
    case Closure::eddington: {
      const double g3 = (2 - 3 * g * mu0) / 4;
      return {(7 - w * (4 + 3 * g)) / 4, -(1 - w * (4 - 3 * g)) / 4, g3, 1 - g3};
    }
    case Closure::quadrature: {
      const double g3 = (1 - s3 * g * mu0) / 2;
      return {s3 * (2 - w * (1 + g)) / 2, s3 * w * (1 - g) / 2, g3, 1 - g3};
    }
    case Closure::hemispheric_mean: {
      const double g3 = (2 - 3 * g * mu0) / 4;
      return {2 - w * (1 + g), w * (1 - g), g3, 1 - g3};
    }
    case Closure::pifm: {
      const double g3 = (2 - 3 * g * mu0) / 4;
      return {(8 - w * (5 + 3 * g)) / 4, 3 * w * (1 - g) / 4, g3, 1 - g3};
    }
  }
  return {};
}
}  // namespace

TEST_CASE("closure coefficient tables reproduce the published gamma formulas", "[rt]") {
  for (Closure c : kAllClosures) {
    for (double w : {0.0, 0.3, 0.9, 1.0}) {
      for (double g : {-0.5, 0.0, 0.7}) {
        for (double mu0 : {0.1, 0.5, 1.0}) {
          const Gammas a = gammas(c, w, g, mu0);
          const Gammas b = published(c, w, g, mu0);
          INFO(to_string(c) << " omega " << w << " g " << g << " mu0 " << mu0);
          CHECK(a.g1 == Approx(b.g1).margin(1e-15));
          CHECK(a.g2 == Approx(b.g2).margin(1e-15));
          CHECK(a.g3 == Approx(b.g3).margin(1e-15));
          CHECK(a.g4 == Approx(b.g4).margin(1e-15));
        }
      }
    }
  }
}

TEST_CASE("every closure has gamma1 = gamma2 without absorption", "[rt]") {
  // Exact property of two-stream closures that conserve energy at omega = 1
  // (Meador & Weaver 1980, sec. 3).
  for (Closure c : kAllClosures) {
    for (double g : {-0.9, 0.0, 0.5, 0.99}) {
      const Gammas a = gammas(c, 1.0, g, 0.5);
      CHECK(a.g1 == Approx(a.g2).margin(1e-15));
    }
  }
}

TEST_CASE("closure names round-trip and unknown names are refused", "[rt]") {
  for (Closure c : kAllClosures) CHECK(parse_closure(to_string(c)) == c);
  CHECK_FALSE(parse_closure("delta-eddington").has_value());
  CHECK_FALSE(parse_closure("").has_value());
  CHECK(coefficients(Closure::delta_eddington).delta_scaled);
  CHECK_FALSE(coefficients(Closure::eddington).delta_scaled);
}
