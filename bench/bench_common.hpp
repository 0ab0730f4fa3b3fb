// Shared harness of the benchmark programs: random solver problems and best-of-N timing.
#pragma once

#include <algorithm>
#include <chrono>
#include <cstddef>
#include <random>
#include <vector>

namespace solstrata::bench {

/// A batch of random two-stream problems in the solver's layout, with output buffers.
struct Problems {
  std::size_t np = 0, nl = 0;
  std::vector<double> tau, omega, g, mu0, sol, ad, af;  ///< inputs ([layer * np + problem], [problem])
  std::vector<double> d, f, u;                           ///< outputs ([level * np + problem])
};

/// Random columns: layer optical depth 0-0.5 (skewed thin), omega 0.5-1, g 0-0.85, mu0 0.05-1,
/// surface albedos 0-0.3. Fixed seed: every bench draws the same problems.
inline Problems make_problems(std::size_t np, std::size_t nl) {
  Problems p;
  p.np = np;
  p.nl = nl;
  std::mt19937_64 rng(20261202);
  std::uniform_real_distribution<double> U(0.0, 1.0);
  for (std::size_t i = 0; i < np * nl; ++i) {
    p.tau.push_back(0.5 * U(rng) * U(rng));
    p.omega.push_back(0.5 + 0.5 * U(rng));
    p.g.push_back(0.85 * U(rng));
  }
  for (std::size_t i = 0; i < np; ++i) {
    p.mu0.push_back(0.05 + 0.95 * U(rng));
    p.sol.push_back(1.0 + U(rng));
    p.ad.push_back(0.3 * U(rng));
    p.af.push_back(0.3 * U(rng));
  }
  p.d.assign((nl + 1) * np, 0.0);
  p.f = p.d;
  p.u = p.d;
  return p;
}

/// Seconds of the fastest of `reps` calls of f (wall clock).
template <class F>
double best_seconds(int reps, F&& f) {
  double best = 1e300;
  for (int r = 0; r < reps; ++r) {
    const auto t0 = std::chrono::steady_clock::now();
    f();
    const auto t1 = std::chrono::steady_clock::now();
    best = std::min(best, std::chrono::duration<double>(t1 - t0).count());
  }
  return best;
}

}  // namespace solstrata::bench
