#include "optics/mixing.hpp"

#include <catch2/catch.hpp>
#include <cmath>

using namespace solstrata::optics;

TEST_CASE("mixing Rayleigh with an absorber weights omega by optical depth", "[optics]") {
  // tau = sum tau_i, omega = sum omega_i tau_i / tau, g = sum g_i omega_i tau_i / (omega tau).
  OpticsMixer m;
  m.add_rayleigh(0.1);
  m.add_absorber(0.03);
  const LayerOptics o = m.result();
  CHECK(o.tau == Approx(0.13));
  CHECK(o.omega == Approx(0.1 / 0.13));
  CHECK(o.g == 0.0);  // Rayleigh phase function is symmetric
}

TEST_CASE("mixing Rayleigh with aerosol weights g by scattering optical depth", "[optics]") {
  OpticsMixer m;
  m.add_rayleigh(0.1);
  m.add(0.2, 0.9, 0.7);
  const LayerOptics o = m.result();
  CHECK(o.tau == Approx(0.3));
  CHECK(o.omega == Approx((0.1 + 0.18) / 0.3));
  CHECK(o.g == Approx(0.7 * 0.18 / 0.28));
}

TEST_CASE("mixing one component returns it unchanged and order does not matter", "[optics]") {
  OpticsMixer one;
  one.add(0.5, 0.8, -0.3);
  CHECK(one.result().tau == 0.5);
  CHECK(one.result().omega == Approx(0.8).epsilon(1e-15));
  CHECK(one.result().g == Approx(-0.3).epsilon(1e-15));
  OpticsMixer a, b;
  a.add(0.2, 0.9, 0.6);
  a.add(0.05, 0.5, 0.1);
  b.add(0.05, 0.5, 0.1);
  b.add(0.2, 0.9, 0.6);
  CHECK(a.result().omega == Approx(b.result().omega).epsilon(1e-15));
  CHECK(a.result().g == Approx(b.result().g).epsilon(1e-15));
}

TEST_CASE("mixing stays finite without extinction or without scattering", "[optics]") {
  // tau = 0: no NaN from 0/0.
  OpticsMixer empty;
  empty.add(0.0, 0.9, 0.7);
  const LayerOptics e = empty.result();
  CHECK(e.tau == 0.0);
  CHECK(e.omega == 0.0);
  CHECK(e.g == 0.0);
  // omega tau = 0: a pure absorber has g = 0.
  OpticsMixer absorber;
  absorber.add(0.4, 0.0, 0.8);
  const LayerOptics a = absorber.result();
  CHECK(a.tau == 0.4);
  CHECK(a.omega == 0.0);
  CHECK(a.g == 0.0);
  CHECK(std::isfinite(a.g));
}
