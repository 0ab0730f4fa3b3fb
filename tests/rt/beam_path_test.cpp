// Pseudo-spherical direct beam (ColumnBatch::beam_path) in the two-stream kernel and the
// multi-stream reference.
#include <catch2/catch.hpp>
#include <cmath>
#include <random>
#include <vector>

#include "rt/discrete_ordinates.hpp"
#include "rt/two_stream.hpp"

using namespace solstrata::rt;

namespace {

struct Batch {
  std::size_t np = 0, nl = 0;
  std::vector<double> tau, omega, g, mu0, solar, ad, af, path;
  std::vector<double> dir, dif, up;
  Batch(std::size_t n_problems, std::size_t n_layers)
      : np(n_problems), nl(n_layers), tau(np * nl), omega(np * nl), g(np * nl), mu0(np),
        solar(np, 1.0), ad(np), af(np), path(np * nl), dir((nl + 1) * np), dif((nl + 1) * np), up((nl + 1) * np) {}
  ColumnBatch input(bool with_path) const {
    ColumnBatch in{np, nl, tau, omega, g, mu0, solar, ad, af};
    if (with_path) in.beam_path = path;
    return in;
  }
  Status solve(Closure c, bool with_path) {
    SolverOptions o;
    o.closure = c;
    Workspace w;
    return solve_columns(input(with_path), o, {dir, dif, up}, w);
  }
  Status solve_reference(bool with_path, int streams = 16) {
    ReferenceOptions o;
    o.streams = streams;
    return solve_columns_reference(input(with_path), o, {dir, dif, up});
  }
  double net(std::size_t lev, std::size_t p) const {
    const std::size_t i = lev * np + p;
    return (dir[i] + dif[i]) - up[i];
  }
};

/// Random columns with a slant factor that grows with depth like a spherical shell atmosphere
/// seen at low sun: m_l between 1/mu0 at the top and up to 30 % below it (never below 1).
Batch random_batch(std::size_t np, std::size_t nl, std::uint64_t seed, bool conservative) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  Batch b(np, nl);
  for (std::size_t p = 0; p < np; ++p) {
    b.mu0[p] = 0.03 + 0.97 * u(rng);
    b.ad[p] = conservative ? (p % 2 == 0 ? 0.0 : 1.0) : u(rng);
    b.af[p] = conservative ? b.ad[p] : u(rng);
    for (std::size_t l = 0; l < nl; ++l) {
      const std::size_t i = l * np + p;
      b.tau[i] = std::pow(10.0, -3.0 + 4.0 * u(rng));
      b.omega[i] = conservative ? 1.0 : u(rng);
      b.g[i] = -0.5 + 1.4 * u(rng);
    }
    double m = 1.0 / b.mu0[p];
    for (std::size_t l = 0; l < nl; ++l) {
      b.path[l * np + p] = std::max(1.0, m);
      m *= 1.0 - 0.3 * u(rng) / double(nl);
    }
  }
  return b;
}

}  // namespace

TEST_CASE("an empty beam path equals the explicit plane-parallel path 1/mu0", "[rt]") {
  // Plane-parallel geometry is the pseudo-spherical one with m = 1/mu0 in every layer
  // (Chandrasekhar 1960, sec. 1: the beam's path per vertical optical depth is sec(theta0)).
  Batch b = random_batch(500, 8, 11, false);
  for (std::size_t p = 0; p < b.np; ++p)
    for (std::size_t l = 0; l < b.nl; ++l) b.path[l * b.np + p] = 1.0 / b.mu0[p];
  for (Closure c : kAllClosures) {
    REQUIRE(b.solve(c, false).ok);
    const auto dir = b.dir, dif = b.dif, up = b.up;
    REQUIRE(b.solve(c, true).ok);
    double worst = 0.0;
    for (std::size_t i = 0; i < dir.size(); ++i) {
      const double inc = b.mu0[i % b.np];
      worst = std::max({worst, std::abs(dir[i] - b.dir[i]) / inc, std::abs(dif[i] - b.dif[i]) / inc,
                        std::abs(up[i] - b.up[i]) / inc});
    }
    INFO(to_string(c) << " worst |difference| / mu0 F0 " << worst);
    // 1/(1/mu0) may differ from mu0 by an ulp; near k mu = 1 the beam response amplifies that
    // by ~ 1/kSingularBand = 1e5 (two_stream.cpp), so 1e-16 becomes ~1e-11 at worst.
    CHECK(worst <= 1e-11);
  }
  // The reference: plane-parallel path given explicitly changes nothing either.
  Batch r = random_batch(20, 4, 12, false);
  for (std::size_t p = 0; p < r.np; ++p)
    for (std::size_t l = 0; l < r.nl; ++l) r.path[l * r.np + p] = 1.0 / r.mu0[p];
  REQUIRE(r.solve_reference(false).ok);
  const auto dif = r.dif, up = r.up;
  REQUIRE(r.solve_reference(true).ok);
  for (std::size_t i = 0; i < dif.size(); ++i) {
    CHECK(r.dif[i] == Approx(dif[i]).margin(1e-12));
    CHECK(r.up[i] == Approx(up[i]).margin(1e-12));
  }
}

TEST_CASE("the direct beam follows exp(-sum tau m) along the slant path", "[rt]") {
  // Beer-Lambert along the beam's path (Bouguer-Lambert law): F_dir(level) = mu0 F0 exp(-sum tau_l m_l).
  Batch b = random_batch(300, 6, 13, false);
  const auto expected = [&](std::size_t lev, std::size_t p) {
    double s = 0.0;
    for (std::size_t l = 0; l < lev; ++l) s += b.tau[l * b.np + p] * b.path[l * b.np + p];
    return b.mu0[p] * std::exp(-s);
  };
  for (Closure c : kAllClosures) {
    REQUIRE(b.solve(c, true).ok);
    for (std::size_t p = 0; p < b.np; ++p)
      for (std::size_t lev = 0; lev <= b.nl; ++lev)
        CHECK(b.dir[lev * b.np + p] == Approx(expected(lev, p)).epsilon(1e-13).margin(1e-300));
  }
  Batch r = random_batch(10, 4, 14, false);
  b = r;
  REQUIRE(b.solve_reference(true).ok);
  const auto ref_dir = b.dir;
  REQUIRE(b.solve(Closure::delta_eddington, true).ok);
  for (std::size_t p = 0; p < b.np; ++p) {
    for (std::size_t lev = 0; lev <= b.nl; ++lev) {
      const std::size_t i = lev * b.np + p;
      CHECK(ref_dir[i] == Approx(expected(lev, p)).epsilon(1e-13).margin(1e-300));
      CHECK(b.dir[i] == Approx(ref_dir[i]).epsilon(1e-13).margin(1e-300));  // two-stream = reference
    }
  }
}

TEST_CASE("conservative columns stay conservative with a depth-dependent beam path", "[rt]") {
  // omega = 1, no sources or sinks: the net flux is the same at every level (exact), and over a
  // white surface all incident light returns to space.
  Batch b = random_batch(2000, 7, 15, true);
  for (Closure c : kAllClosures) {
    REQUIRE(b.solve(c, true).ok);
    double worst = 0.0;
    for (std::size_t p = 0; p < b.np; ++p) {
      for (std::size_t lev = 0; lev <= b.nl; ++lev)
        worst = std::max(worst, std::abs(b.net(lev, p) - b.net(0, p)) / b.mu0[p]);
      if (b.ad[p] == 1.0) worst = std::max(worst, std::abs(b.up[p] / b.mu0[p] - 1.0));
    }
    INFO(to_string(c) << " worst net-flux change / mu0 F0 " << worst);
    CHECK(worst <= 1e-12);
  }
  Batch r = random_batch(6, 3, 16, true);
  REQUIRE(r.solve_reference(true).ok);
  for (std::size_t p = 0; p < r.np; ++p)
    for (std::size_t lev = 0; lev <= r.nl; ++lev)
      CHECK(std::abs(r.net(lev, p) - r.net(0, p)) / r.mu0[p] <= 1e-10);
}

TEST_CASE("a one-layer column with slant factor m is the layer lit at cosine 1/m", "[rt]") {
  // Pseudo-spherical definition (Dahlback & Stamnes 1991): the layer scatters like a
  // plane-parallel layer at mu = 1/m, per unit direct flux at its top.
  for (Closure c : kAllClosures) {
    Batch b(1, 1);
    b.tau = {0.7};
    b.omega = {0.8};
    b.g = {0.6};
    b.mu0 = {0.2};
    b.path = {2.5};
    REQUIRE(b.solve(c, true).ok);
    const LayerResponse r = solve_layer(0.7, 0.8, 0.6, 1.0 / 2.5, c);
    CHECK(b.up[0] / 0.2 == Approx(r.r_beam).epsilon(1e-14));
    CHECK(b.dif[1] / 0.2 == Approx(r.t_beam + r.t_direct - b.dir[1] / 0.2).margin(1e-14));
    CHECK(b.dir[1] / 0.2 == Approx(std::exp(-0.7 * 2.5)).epsilon(1e-14));
  }
}

TEST_CASE("invalid beam paths are rejected with a message naming the value", "[rt]") {
  for (double bad : {0.5, 0.0, -1.0, std::nan(""), HUGE_VAL}) {
    Batch b = random_batch(3, 2, 17, false);
    b.path[4] = bad;
    const Status s = b.solve(Closure::delta_eddington, true);
    CHECK_FALSE(s.ok);
    CHECK(s.message.find("beam_path[4]") != std::string::npos);
    CHECK_FALSE(b.solve_reference(true).ok);
  }
  Batch b = random_batch(3, 2, 18, false);
  b.path.pop_back();
  const Status s = b.solve(Closure::delta_eddington, true);
  CHECK_FALSE(s.ok);
  CHECK(s.message.find("beam_path has 5 values; expected 6") != std::string::npos);
}
