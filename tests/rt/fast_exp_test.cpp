#include "rt/fast_exp.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <limits>

using solstrata::rt::detail::exp_nonpositive;

TEST_CASE("exp_nonpositive agrees with std::exp to a few ulp over its range", "[rt]") {
  // Reference: the C library's correctly-rounded-to-1-ulp exp (glibc), common practice.
  double worst = 0.0;
  for (int i = 0; i <= 200000; ++i) {
    const double x = -708.0 * i / 200000.0;
    const double want = std::exp(x);
    const double got = exp_nonpositive(x);
    worst = std::max(worst, std::abs(got - want) / want);
  }
  INFO("worst relative error " << worst);
  CHECK(worst < 4 * std::numeric_limits<double>::epsilon());
}

TEST_CASE("exp_nonpositive is exact at 0 and 0 far below the underflow", "[rt]") {
  CHECK(exp_nonpositive(0.0) == 1.0);
  CHECK(exp_nonpositive(-1e-300) == 1.0);
  CHECK(exp_nonpositive(-709.0) == 0.0);
  CHECK(exp_nonpositive(-1e6) == 0.0);
  CHECK(exp_nonpositive(-std::numeric_limits<double>::infinity()) == 0.0);
}
