// Physical bounds of the two-stream kernel over random and extreme inputs: fluxes are never
// negative, layers never emit, conservative columns keep the net flux constant with height.
#include <catch2/catch.hpp>
#include <cmath>
#include <random>
#include <vector>

#include "rt/two_stream.hpp"

using namespace solstrata::rt;

namespace {

// Builds with AddressSanitizer run the extremes test on fewer columns (GCC and Clang define
// __SANITIZE_ADDRESS__ / __has_feature(address_sanitizer) under -fsanitize=address).
#if defined(__SANITIZE_ADDRESS__)
constexpr bool kSanitized = true;
#elif defined(__has_feature)
#if __has_feature(address_sanitizer)
constexpr bool kSanitized = true;
#else
constexpr bool kSanitized = false;
#endif
#else
constexpr bool kSanitized = false;
#endif

/// A batch of columns with its inputs and outputs, laid out as rt::ColumnBatch expects.
struct Batch {
  std::size_t np = 0, nl = 0;
  std::vector<double> tau, omega, g, mu0, solar, ad, af;
  std::vector<double> dir, dif, up;
  Batch(std::size_t n_problems, std::size_t n_layers)
      : np(n_problems), nl(n_layers), tau(np * nl), omega(np * nl), g(np * nl), mu0(np),
        solar(np, 1.0), ad(np), af(np), dir((nl + 1) * np), dif((nl + 1) * np), up((nl + 1) * np) {}
  ColumnBatch input() const { return {np, nl, tau, omega, g, mu0, solar, ad, af}; }
  void solve(Closure c) {
    SolverOptions o;
    o.closure = c;
    Workspace w;
    const Status s = solve_columns(input(), o, {dir, dif, up}, w);
    REQUIRE(s.ok);
  }
  double net(std::size_t lev, std::size_t p) const {
    const std::size_t i = lev * np + p;
    return (dir[i] + dif[i]) - up[i];
  }
};

/// Counts of violated bounds over a solved batch (all relative to the incident flux mu0 F0).
struct Violations {
  std::size_t non_finite = 0, negative = 0, emitting = 0;
  double worst_flux = 0.0, worst_absorption = 0.0;  // most negative value seen, relative
};

/// Checks every level and layer of every problem: fluxes finite and >= -flux_tol, layer
/// absorption (net flux in at the top minus out at the bottom) >= -absorption_tol.
Violations check_bounds(const Batch& b, double flux_tol, double absorption_tol) {
  Violations v;
  for (std::size_t p = 0; p < b.np; ++p) {
    const double inc = b.mu0[p] * b.solar[p];
    for (std::size_t lev = 0; lev <= b.nl; ++lev) {
      const std::size_t i = lev * b.np + p;
      for (double f : {b.dir[i], b.dif[i], b.up[i]}) {
        if (!std::isfinite(f)) ++v.non_finite;
        v.worst_flux = std::min(v.worst_flux, f / inc);
        if (f < -flux_tol * inc) ++v.negative;
      }
      if (lev < b.nl) {
        const double a = (b.net(lev, p) - b.net(lev + 1, p)) / inc;
        v.worst_absorption = std::min(v.worst_absorption, a);
        if (a < -absorption_tol) ++v.emitting;
      }
    }
  }
  return v;
}

}  // namespace

TEST_CASE("a pure absorber over a bright surface has no diffuse downward light", "[rt]") {
  // Exact: without scattering (omega = 0) the only diffuse light is the surface's reflection
  // going up, so the downward diffuse flux is 0 at every level (Beer-Lambert for the beam).
  // With the published Eddington gamma2 = -1/4 the bottom diffuse flux is -0.00713 mu0 F0
  // (computed from the Meador-Weaver closed forms, 50 digits); gamma2 is now limited to >= 0.
  for (Closure c : kAllClosures) {
    Batch b(1, 1);
    b.tau = {1.0};
    b.omega = {0.0};
    b.g = {0.0};
    b.mu0 = {0.5};  // solar zenith 60 degrees
    b.ad = {0.8};
    b.af = {0.8};
    b.solve(c);
    INFO(to_string(c));
    CHECK(b.dif[0] == 0.0);
    CHECK(b.dif[1] == 0.0);
    CHECK(b.dir[1] == Approx(0.5 * std::exp(-2.0)).epsilon(1e-14));
    CHECK(b.up[1] == Approx(0.8 * 0.5 * std::exp(-2.0)).epsilon(1e-14));
    CHECK(b.up[0] >= 0.0);
    CHECK(b.up[0] <= b.up[1]);  // attenuated on its way up
    // The scalar path shares the closure: no stream coupling, no scattering of the beam.
    const LayerResponse r = solve_layer(1.0, 0.0, 0.0, 0.5, c);
    CHECK(r.r_diffuse == 0.0);
    CHECK(r.r_beam == 0.0);
    CHECK(r.t_beam == 0.0);
    CHECK(r.t_diffuse > 0.0);
  }
}

TEST_CASE("strongly absorbing layers reflect and transmit non-negative amounts", "[rt]") {
  // Bounds of any physical layer: 0 <= R, T and R + T + t_direct <= 1 (energy), over the
  // omega range where the published Eddington gamma2 is negative (omega < 1/(4 - 3g)).
  for (Closure c : kAllClosures) {
    for (double tau : {1e-6, 0.1, 1.0, 10.0}) {
      for (double w : {0.0, 0.05, 0.15, 0.24, 0.3}) {
        for (double g : {-0.5, 0.0, 0.5}) {
          for (double mu0 : {0.05, 0.5, 1.0}) {
            const LayerResponse r = solve_layer(tau, w, g, mu0, c);
            INFO(to_string(c) << " tau " << tau << " omega " << w << " g " << g << " mu0 " << mu0);
            CHECK(r.r_beam >= 0.0);
            CHECK(r.t_beam >= 0.0);
            CHECK(r.r_diffuse >= 0.0);
            CHECK(r.t_diffuse >= 0.0);
            CHECK(r.r_beam + r.t_beam + r.t_direct <= 1.0 + 1e-15);
            CHECK(r.r_diffuse + r.t_diffuse <= 1.0 + 1e-15);
          }
        }
      }
    }
  }
}

TEST_CASE("random multi-layer columns never have negative fluxes or emitting layers", "[rt]") {
  // Physical bounds (no sources but the sun): every flux >= 0 and every layer absorbs >= 0.
  // Round-off allowance 1e-13 (flux: a difference of O(1) terms over the column) and 1e-12 (absorption) of mu0 F0.
  // g range: delta-Eddington sees g' = g/(1 + g) < 1/2, so its full range is tested. The
  // unscaled closures are tested for g <= 0.5: beyond g mu0 = 2/3 (Eddington, PIFM, hemispheric
  // mean) or 1/sqrt(3) (quadrature) their published gamma3 turns negative, a known limitation of
  // those closures for strong forward scattering at high sun (checkvalues.md section 2, "Known
  // weakness"; the test "quadrature reproduces its known failure..." keeps it visible).
  std::mt19937_64 rng(20261202);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  for (Closure c : kAllClosures) {
    const double g_max = c == Closure::delta_eddington ? 0.999 : 0.5;
    const std::size_t np = 10000, nl = 6;
    Batch b(np, nl);
    for (std::size_t p = 0; p < np; ++p) {
      b.mu0[p] = std::max(0.02, u(rng));
      b.ad[p] = u(rng);
      b.af[p] = u(rng);
      for (std::size_t l = 0; l < nl; ++l) {
        const std::size_t i = l * np + p;
        b.tau[i] = std::pow(10.0, -4.0 + 6.0 * u(rng));
        const double r = u(rng);
        b.omega[i] = r < 0.1 ? 0.0 : r < 0.5 ? 0.3 * u(rng) : u(rng);  // many absorbing layers
        b.g[i] = -0.99 + (g_max + 0.99) * u(rng);
      }
    }
    b.solve(c);
    const Violations v = check_bounds(b, 1e-13, 1e-12);
    INFO(to_string(c) << ": worst flux " << v.worst_flux << ", worst absorption " << v.worst_absorption);
    CHECK(v.non_finite == 0);
    CHECK(v.negative == 0);
    CHECK(v.emitting == 0);
  }
}

TEST_CASE("extreme inputs stay finite, non-negative and conservative", "[rt]") {
  // At least 10^6 layer solves per closure over the whole valid input range, endpoints included:
  // tau 0 .. 1e4 (exactly 0 too), omega 0 .. 1 (exactly 1 and 1 - 1e-12), g -0.99 .. 0.999,
  // solar zenith 0 .. 89.5 degrees, albedo 0 .. 1. Checks: no NaN/Inf; for conservative
  // columns (omega = 1 everywhere over a black or a white surface) the net flux is the same at
  // every level to 1e-10 of mu0 F0 (no sources, no sinks: exact); for the others no flux < 0 and
  // no layer absorbs < 0 beyond round-off (bounds as in the random-column test; the unscaled
  // closures' flux sign is checked for g <= 0.5 only, see there).
  const std::size_t np = kSanitized ? 2000 : 20000, nl = 50;
  std::mt19937_64 rng(1234567);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  const double kPi = std::acos(-1.0);
  Batch b(np, nl);
  std::vector<bool> conservative(np), mild_g(np, true);
  for (std::size_t p = 0; p < np; ++p) {
    conservative[p] = p % 5 == 0;
    const double zen_deg = p % 7 == 0 ? 89.5 : p % 11 == 0 ? 0.0 : 89.5 * u(rng);
    b.mu0[p] = std::cos(zen_deg * kPi / 180.0);
    const double a = p % 3 == 0 ? 0.0 : p % 3 == 1 ? 1.0 : u(rng);
    b.ad[p] = conservative[p] ? (p % 2 == 0 ? 0.0 : 1.0) : a;
    b.af[p] = conservative[p] ? b.ad[p] : (p % 13 == 0 ? u(rng) : a);
    for (std::size_t l = 0; l < nl; ++l) {
      const std::size_t i = l * np + p;
      const double rt = u(rng);
      b.tau[i] = rt < 0.05 ? 0.0 : rt < 0.08 ? 1e4 : std::pow(10.0, -8.0 + 12.0 * u(rng));
      const double rw = u(rng);
      b.omega[i] = conservative[p] ? 1.0
                   : rw < 0.1      ? 0.0
                   : rw < 0.2      ? 1.0
                   : rw < 0.3      ? 1.0 - 1e-12
                                   : u(rng);
      const double rg = u(rng);
      // A quarter of the columns keep g <= 0.5, so the unscaled closures' signs are checked too.
      const double g_top = p % 4 == 1 ? 0.5 : 0.999;
      b.g[i] = rg < 0.05 ? -0.99 : rg < 0.1 ? g_top : -0.99 + (g_top + 0.99) * u(rng);
      if (b.g[i] > 0.5) mild_g[p] = false;
    }
  }
  for (Closure c : kAllClosures) {
    b.solve(c);
    std::size_t non_finite = 0, unconserved = 0, negative = 0, emitting = 0;
    double worst_net = 0.0, worst_flux = 0.0, worst_absorption = 0.0;  // relative to mu0 F0
    for (std::size_t p = 0; p < np; ++p) {
      const double inc = b.mu0[p];
      for (std::size_t lev = 0; lev <= nl; ++lev) {
        const std::size_t i = lev * np + p;
        if (!std::isfinite(b.dir[i]) || !std::isfinite(b.dif[i]) || !std::isfinite(b.up[i])) ++non_finite;
        if (conservative[p]) {
          const double d = std::abs(b.net(lev, p) - b.net(0, p)) / inc;
          worst_net = std::max(worst_net, d);
          if (d > 1e-10) ++unconserved;
        }
        const bool sign_checked = c == Closure::delta_eddington || mild_g[p];
        if (sign_checked) {
          worst_flux = std::min({worst_flux, b.dir[i] / inc, b.dif[i] / inc, b.up[i] / inc});
          if (lev < nl) worst_absorption = std::min(worst_absorption, (b.net(lev, p) - b.net(lev + 1, p)) / inc);
        }
        if (sign_checked && std::min({b.dir[i], b.dif[i], b.up[i]}) < -1e-13 * inc) ++negative;
        if (sign_checked && lev < nl && b.net(lev, p) - b.net(lev + 1, p) < -1e-12 * inc) ++emitting;
      }
    }
    INFO(to_string(c) << ": worst net-flux change in conservative columns " << worst_net
                      << ", worst flux " << worst_flux << ", worst absorption " << worst_absorption);
    CHECK(non_finite == 0);
    CHECK(unconserved == 0);
    CHECK(negative == 0);
    CHECK(emitting == 0);
  }
}
