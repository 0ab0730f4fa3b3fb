// The float variant of the batched kernel (SolverOptions::single_precision): the exact limits at a
// float tolerance, and agreement with the double kernel.
#include <catch2/catch.hpp>
#include <cmath>
#include <random>
#include <vector>

#include "rt/fast_exp.hpp"
#include "rt/two_stream.hpp"

using namespace solstrata::rt;

namespace {

struct Columns {
  std::size_t np, nl;
  std::vector<double> tau, omega, g, mu0, solar, ad, af, path;
  std::vector<double> dir, dif, up;
  Columns(std::size_t n_problems, std::size_t n_layers)
      : np(n_problems), nl(n_layers), tau(np * nl), omega(np * nl), g(np * nl), mu0(np), solar(np, 1.0), ad(np),
        af(np), dir((nl + 1) * np), dif((nl + 1) * np), up((nl + 1) * np) {}
  void solve(Closure c, bool single) {
    ColumnBatch in{np, nl, tau, omega, g, mu0, solar, ad, af};
    in.beam_path = path;
    SolverOptions o;
    o.closure = c;
    o.single_precision = single;
    Workspace w;
    const Status s = solve_columns(in, o, {dir, dif, up}, w);
    REQUIRE(s.ok);
  }
};

}  // namespace

TEST_CASE("the float exponential is within a few float ulp of exp", "[rt][float]") {
  // Reference: the C library's exp in double (IEEE 754 correctly rounded to < 1 ulp of double).
  for (double x = -87.0; x <= 0.0; x += 0.0137) {
    const float e = detail::exp_nonpositive(static_cast<float>(x));
    const double ref = std::exp(static_cast<double>(static_cast<float>(x)));
    INFO("x = " << x);
    CHECK(std::abs(e - ref) <= 4.0 * 1.2e-7 * ref);
  }
  CHECK(detail::exp_nonpositive(0.0f) == 1.0f);
  CHECK(detail::exp_nonpositive(-100.0f) == 0.0f);
  CHECK(detail::exp_nonpositive(1.0f) == 1.0f);  // x > 0 is treated as 0
}

TEST_CASE("the float kernel keeps the exact limits at a float tolerance and agrees with double", "[rt][float]") {
  std::mt19937_64 rng(77);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  const std::size_t np = 3000, nl = 30;
  for (Closure c : {Closure::delta_eddington, Closure::eddington, Closure::quadrature, Closure::hemispheric_mean,
                    Closure::pifm}) {
    INFO(to_string(c));
    Columns col(np, nl);
    for (std::size_t p = 0; p < np; ++p) {
      col.mu0[p] = 0.02 + 0.98 * u(rng);
      col.ad[p] = col.af[p] = p % 3 == 0 ? 0.0 : u(rng);
      for (std::size_t l = 0; l < nl; ++l) {
        const std::size_t i = l * np + p;
        col.tau[i] = std::pow(10.0, -4.0 + 5.0 * u(rng));
        // Every fourth column conservative (omega = 1 in every layer).
        col.omega[i] = p % 4 == 0 ? 1.0 : u(rng);
        col.g[i] = -0.3 + 1.25 * u(rng);
      }
    }
    col.solve(c, false);
    const std::vector<double> dir = col.dir, dif = col.dif, up = col.up;
    col.solve(c, true);
    double worst = 0.0;
    for (std::size_t p = 0; p < np; ++p) {
      const double incident = col.mu0[p];
      for (std::size_t lev = 0; lev <= nl; ++lev) {
        const std::size_t k = lev * np + p;
        // No NaN; no negative flux beyond float round-off with delta scaling (the unscaled
        // closures go negative for strongly forward-scattering layers in double too; see
        // two_stream_bounds_test.cpp).
        REQUIRE(std::isfinite(col.dir[k] + col.dif[k] + col.up[k]));
        if (c == Closure::delta_eddington) {
          CHECK(col.dif[k] >= -1e-6 * incident);
          CHECK(col.up[k] >= -1e-6 * incident);
        }
        worst = std::max({worst, std::abs(col.dir[k] - dir[k]), std::abs(col.dif[k] - dif[k]),
                          std::abs(col.up[k] - up[k])});
        // Conservative column over a black or grey surface: no layer absorbs, so the net flux is
        // the same at every level (exact; here to float precision).
        if (p % 4 == 0 && lev > 0) {
          const double net0 = col.dir[p] + col.dif[p] - col.up[p];
          const double net = col.dir[k] + col.dif[k] - col.up[k];
          CHECK(std::abs(net - net0) <= 2e-5 * incident);
        }
      }
    }
    // Against the double kernel: fluxes within 1e-4 of the incident flux (mu0 x 1).
    CHECK(worst < 1e-4);
  }
}

TEST_CASE("the float kernel follows the pseudo-spherical beam like the double kernel", "[rt][float]") {
  // Beer-Lambert along the slant path (exact): direct flux at the surface = mu0 exp(-sum tau m).
  Columns col(64, 10);
  col.path.assign(10 * 64, 0.0);
  for (std::size_t p = 0; p < 64; ++p) {
    col.mu0[p] = 0.05 + 0.9 * static_cast<double>(p) / 63.0;
    for (std::size_t l = 0; l < 10; ++l) {
      col.tau[l * 64 + p] = 0.05;
      col.omega[l * 64 + p] = 0.9;
      col.g[l * 64 + p] = 0.6;
      const double m = 1.0 / col.mu0[p] * (1.0 - 0.01 * static_cast<double>(l));
      col.path[l * 64 + p] = m > 1.0 ? m : 1.0;
    }
  }
  col.solve(Closure::delta_eddington, true);
  for (std::size_t p = 0; p < 64; ++p) {
    double s = 0.0;
    for (std::size_t l = 0; l < 10; ++l) s += col.tau[l * 64 + p] * col.path[l * 64 + p];
    CHECK(col.dir[10 * 64 + p] == Approx(col.mu0[p] * std::exp(-s)).epsilon(2e-6));
  }
}

TEST_CASE("the float kernel fixes up exactly the problems inside its singular band", "[rt][float]") {
  // Layers with omega = 0.3, g = 0 (no delta scaling then): the Eddington coefficients (Meador &
  // Weaver 1980, Table 1; common practice) give gamma1 = (7 - 4 omega)/4 = 1.45, gamma2 =
  // -(1 - 4 omega)/4 = 0.05, k = sqrt(gamma1^2 - gamma2^2). mu0 is spread across 1/k so that some
  // problems of one block fall inside the float kernel's band |1 - k mu0| < 1e-3 and others not;
  // each must agree with the double kernel (whose band is 100x narrower) to float accuracy.
  const double g1 = 1.45, g2 = 0.05, k = std::sqrt(g1 * g1 - g2 * g2);
  Columns c(96, 3);
  for (std::size_t i = 0; i < c.np; ++i) {
    c.mu0[i] = (1.0 + (double(i) - 48.0) * 4e-5) / k;  // k mu0 - 1 from -1.9e-3 to +1.9e-3
    c.ad[i] = c.af[i] = 0.3;
    for (std::size_t l = 0; l < c.nl; ++l) {
      c.tau[l * c.np + i] = 0.5;
      c.omega[l * c.np + i] = 0.3;
      c.g[l * c.np + i] = 0.0;
    }
  }
  c.solve(Closure::delta_eddington, false);
  const std::vector<double> dir = c.dir, dif = c.dif, up = c.up;
  c.solve(Closure::delta_eddington, true);
  std::size_t inside = 0;
  for (std::size_t i = 0; i < c.np; ++i) {
    if (std::abs(1.0 - k * c.mu0[i]) < 1e-3) ++inside;
    const double incident = c.mu0[i];
    for (std::size_t lev = 0; lev <= c.nl; ++lev) {
      const std::size_t q = lev * c.np + i;
      INFO("problem " << i << " level " << lev);
      CHECK(std::abs(c.dif[q] - dif[q]) <= 1e-4 * incident);
      CHECK(std::abs(c.up[q] - up[q]) <= 1e-4 * incident);
      CHECK(std::abs(c.dir[q] - dir[q]) <= 1e-5 * incident);
    }
  }
  CHECK(inside > 10);          // the band is really hit
  CHECK(inside < c.np - 10);   // and so are problems outside it
}
