// Times the batched multi-layer two-stream solve. Prints one line per case:
//   <case>: <X> ns per layer-solve
// A layer-solve is one layer of one problem (column x spectral point), all stages included
// (layer optics, adding, output). Best of several repetitions, single thread.
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <random>
#include <vector>

#include "bench_common.hpp"
#include "limit_kernel.hpp"
#include "rt/two_stream.hpp"

using namespace solstrata::rt;
namespace bench = solstrata::bench;

namespace {

double checksum(const bench::Problems& p) {
  double s = 0;
  for (std::size_t i = 0; i < p.u.size(); ++i) s += p.u[i] + p.d[i] + p.f[i];
  return s;
}

}  // namespace

int main(int argc, char** argv) {
  std::size_t np = 4096, nl = 64;
  int reps = 15;
  std::size_t block = SolverOptions{}.block_size;
  for (int i = 1; i < argc; ++i) {
    if (!std::strcmp(argv[i], "--help") || !std::strcmp(argv[i], "-h")) {
      std::printf("usage: two_stream_bench [--problems N] [--layers L] [--reps R] [--block B]\n"
                  "Times the batched two-stream column solve; prints '<case>: <X> ns per layer-solve'.\n");
      return 0;
    }
    if (i + 1 < argc && !std::strcmp(argv[i], "--problems")) np = std::strtoul(argv[++i], nullptr, 10);
    else if (i + 1 < argc && !std::strcmp(argv[i], "--layers")) nl = std::strtoul(argv[++i], nullptr, 10);
    else if (i + 1 < argc && !std::strcmp(argv[i], "--reps")) reps = std::atoi(argv[++i]);
    else if (i + 1 < argc && !std::strcmp(argv[i], "--block")) block = std::strtoul(argv[++i], nullptr, 10);
  }
  bench::Problems p = bench::make_problems(np, nl);
  Workspace work;
  const double layer_solves = double(np) * double(nl);
  std::printf("# %zu problems x %zu layers, block %zu, best of %d, single thread\n", np, nl, block, reps);

  for (Closure c : kAllClosures) {
    SolverOptions o;
    o.block_size = block;
    o.closure = c;
    const ColumnBatch in{np, nl, p.tau, p.omega, p.g, p.mu0, p.sol, p.ad, p.af};
    const double t = bench::best_seconds(reps, [&] { solve_columns_unchecked(in, o, {p.d, p.f, p.u}, work); });
    std::printf("batched %s: %.2f ns per layer-solve\n", std::string(to_string(c)).c_str(), 1e9 * t / layer_solves);
  }
  {
    // The float kernel (SolverOptions::single_precision): twice the vector width; and its largest
    // difference from double over this batch, relative to the incident flux.
    std::vector<double> d2(p.d.size()), f2(p.f.size()), u2(p.u.size());
    const ColumnBatch in{np, nl, p.tau, p.omega, p.g, p.mu0, p.sol, p.ad, p.af};
    SolverOptions od;
    od.block_size = block;
    solve_columns_unchecked(in, od, {d2, f2, u2}, work);
    for (Closure c : {Closure::delta_eddington, Closure::eddington}) {
      SolverOptions o;
      o.block_size = block;
      o.closure = c;
      o.single_precision = true;
      const double t = bench::best_seconds(reps, [&] { solve_columns_unchecked(in, o, {p.d, p.f, p.u}, work); });
      std::printf("batched %s float: %.2f ns per layer-solve\n", std::string(to_string(c)).c_str(), 1e9 * t / layer_solves);
    }
    SolverOptions of = od;
    of.single_precision = true;
    solve_columns_unchecked(in, of, {p.d, p.f, p.u}, work);
    double worst = 0.0;
    for (std::size_t lev = 0; lev <= nl; ++lev)
      for (std::size_t i = 0; i < np; ++i) {
        const double incident = p.mu0[i] * p.sol[i];
        const std::size_t k = lev * np + i;
        worst = std::max({worst, std::abs(p.d[k] - d2[k]) / incident, std::abs(p.f[k] - f2[k]) / incident,
                          std::abs(p.u[k] - u2[k]) / incident});
      }
    std::printf("# float vs double: largest flux difference %.2e of the incident flux\n", worst);
  }
  {
    // The vectorised limit (bench/limit_kernel.hpp: the same delta-Eddington algorithm written
    // as plainly as the compiler vectorises best), side by side with the library's kernel in
    // this run, and the largest difference of their fluxes (relative to the incident flux).
    const ColumnBatch in{np, nl, p.tau, p.omega, p.g, p.mu0, p.sol, p.ad, p.af};
    SolverOptions od;
    od.block_size = block;
    const double t_lib = bench::best_seconds(reps, [&] { solve_columns_unchecked(in, od, {p.d, p.f, p.u}, work); });
    std::vector<double> d2(p.d.size()), f2(p.f.size()), u2(p.u.size());
    bench::LimitWork<double> lw;
    const double t_lim = bench::best_seconds(reps, [&] {
      bench::limit_solve<double>(np, nl, p.tau.data(), p.omega.data(), p.g.data(), p.mu0.data(), p.sol.data(),
                                 p.ad.data(), p.af.data(), d2.data(), f2.data(), u2.data(), block, lw);
    });
    double worst = 0.0, worst_regular = 0.0;
    std::vector<char> off(np, 0);  // problems where the two differ by more than 1e-9
    for (std::size_t k = 0; k < p.d.size(); ++k) {
      const double incident = p.mu0[k % np] * p.sol[k % np];
      const double d = std::max({std::abs(p.d[k] - d2[k]), std::abs(p.f[k] - f2[k]), std::abs(p.u[k] - u2[k])}) / incident;
      worst = std::max(worst, d);
      if (d > 1e-9) off[k % np] = 1;
    }
    for (std::size_t k = 0; k < p.d.size(); ++k) {
      if (off[k % np]) continue;
      const double incident = p.mu0[k % np] * p.sol[k % np];
      worst_regular = std::max({worst_regular, std::abs(p.d[k] - d2[k]) / incident,
                                std::abs(p.f[k] - f2[k]) / incident, std::abs(p.u[k] - u2[k]) / incident});
    }
    const long n_off = std::count(off.begin(), off.end(), char(1));
    std::printf("vectorised limit delta_eddington: %.2f ns per layer-solve\n", 1e9 * t_lim / layer_solves);
    std::printf("# library kernel / limit, double: %.2f (%.2f vs %.2f ns); largest flux difference %.1e of the incident flux "
                "in %ld of %zu problems (a layer near k mu0 = 1, which only the library fixes up), %.1e in the others\n",
                t_lib / t_lim, 1e9 * t_lib / layer_solves, 1e9 * t_lim / layer_solves, worst, n_off, np, worst_regular);
    SolverOptions of = od;
    of.single_precision = true;
    const double t_libf = bench::best_seconds(reps, [&] { solve_columns_unchecked(in, of, {p.d, p.f, p.u}, work); });
    bench::LimitWork<float> lwf;
    const double t_limf = bench::best_seconds(reps, [&] {
      bench::limit_solve<float>(np, nl, p.tau.data(), p.omega.data(), p.g.data(), p.mu0.data(), p.sol.data(),
                                p.ad.data(), p.af.data(), d2.data(), f2.data(), u2.data(), block, lwf);
    });
    std::printf("vectorised limit delta_eddington float: %.2f ns per layer-solve\n", 1e9 * t_limf / layer_solves);
    std::printf("# library kernel / limit, float: %.2f (%.2f vs %.2f ns)\n", t_libf / t_limf,
                1e9 * t_libf / layer_solves, 1e9 * t_limf / layer_solves);
  }
  {
    // With the pseudo-spherical beam (ColumnBatch::beam_path, as every atmosphere run uses by
    // default): slant factors of a 64-layer shell at each problem's zenith angle.
    std::vector<double> path(nl * np);
    for (std::size_t i = 0; i < np; ++i)
      for (std::size_t l = 0; l < nl; ++l) path[l * np + i] = (1.0 / p.mu0[i]) * (1.0 - 0.002 * double(l) / double(nl));
    for (std::size_t i = 0; i < nl * np; ++i) path[i] = std::max(1.0, path[i]);
    ColumnBatch in{np, nl, p.tau, p.omega, p.g, p.mu0, p.sol, p.ad, p.af};
    in.beam_path = path;
    for (bool single : {false, true}) {
      SolverOptions o;
      o.block_size = block;
      o.single_precision = single;
      const double t = bench::best_seconds(reps, [&] { solve_columns_unchecked(in, o, {p.d, p.f, p.u}, work); });
      std::printf("batched delta_eddington%s with slant paths: %.2f ns per layer-solve\n", single ? " float" : "",
                  1e9 * t / layer_solves);
    }
  }
  {
    SolverOptions o;
    o.block_size = block;
    const ColumnBatch in{np, nl, p.tau, p.omega, p.g, p.mu0, p.sol, p.ad, p.af};
    const double t = bench::best_seconds(reps, [&] { (void)solve_columns(in, o, {p.d, p.f, p.u}, work); });
    std::printf("batched delta_eddington with input validation: %.2f ns per layer-solve\n", 1e9 * t / layer_solves);
  }
  {
    // One problem at a time: the same kernel called per column (gather a column, solve, scatter).
    SolverOptions o;
    o.block_size = block;
    std::vector<double> tau(nl), om(nl), g(nl), d(nl + 1), f(nl + 1), u(nl + 1);
    const double t = bench::best_seconds(std::max(1, reps / 3), [&] {
      for (std::size_t i = 0; i < np; ++i) {
        for (std::size_t l = 0; l < nl; ++l) {
          tau[l] = p.tau[l * np + i];
          om[l] = p.omega[l * np + i];
          g[l] = p.g[l * np + i];
        }
        const ColumnBatch in{1, nl, tau, om, g, {&p.mu0[i], 1}, {&p.sol[i], 1}, {&p.ad[i], 1}, {&p.af[i], 1}};
        solve_columns_unchecked(in, o, {d, f, u}, work);
        p.u[i] = u[0];
      }
    });
    std::printf("one-at-a-time delta_eddington: %.2f ns per layer-solve\n", 1e9 * t / layer_solves);
  }
  std::printf("# checksum %.6e\n", checksum(p));
  return 0;
}
