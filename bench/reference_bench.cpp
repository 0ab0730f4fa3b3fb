// Times the multi-stream reference (discrete ordinates) against the delta-Eddington two-stream
// kernel on the same columns, and prints the two-stream closures' errors against the reference
// for three invented demonstration columns. Timing lines:
//   <case>: <X> ns per layer-solve
// A layer-solve is one layer of one problem (column x spectral point), all stages included.
// Best of several repetitions, single thread.
#include <algorithm>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <random>
#include <string>
#include <vector>

#include "rt/discrete_ordinates.hpp"
#include "bench_common.hpp"
#include "rt/two_stream.hpp"

using namespace solstrata::rt;
namespace bench = solstrata::bench;

namespace {

/// An invented single-band demonstration column (not measured data): 10 equal-pressure layers of
/// Rayleigh-like scattering (tau 0.1 in total, omega 1, isotropic g = 0 as a Henyey-Greenstein
/// stand-in for the Rayleigh phase function), plus an aerosol optical depth in chosen layers, mixed
/// by optical-depth weighting of omega and omega * g.
struct Demo {
  const char* name;
  double aerosol_tau, aerosol_omega, aerosol_g;
  std::size_t first, last;  // aerosol layers (inclusive), 0 = top
  double albedo_direct, albedo_diffuse;
};

void demo_column(const Demo& d, std::vector<double>& tau, std::vector<double>& om,
                 std::vector<double>& g) {
  const std::size_t nl = 10;
  tau.assign(nl, 0.0);
  om.assign(nl, 0.0);
  g.assign(nl, 0.0);
  const std::size_t na = d.last - d.first + 1;
  for (std::size_t l = 0; l < nl; ++l) {
    const double tr = 0.1 / nl;
    const double ta = (l >= d.first && l <= d.last) ? d.aerosol_tau / double(na) : 0.0;
    const double sa = ta * d.aerosol_omega;
    tau[l] = tr + ta;
    om[l] = (tr + sa) / tau[l];
    g[l] = sa * d.aerosol_g / (tr + sa);
  }
}

void print_demo_table() {
  const Demo demos[] = {
      {"clear (Rayleigh-like)", 0.0, 1.0, 0.0, 9, 9, 0.15, 0.15},
      {"hazy", 0.4, 0.93, 0.70, 7, 9, 0.15, 0.15},
      {"smoky", 2.0, 0.88, 0.64, 3, 5, 0.17, 0.20},
  };
  const double mu0 = 0.6,
               solar = 1361.0;  // invented: one band carrying a broadband-like 1361 W m-2
  std::printf(
      "\n# Two-stream errors against the 32-stream reference, invented demo columns,\n"
      "# mu0 = %.2f, TOA irradiance %.0f W m-2 normal to the beam, W m-2 (two-stream - "
      "reference)\n",
      mu0, solar);
  std::printf("%-22s %-18s %10s %10s %10s %10s\n", "column", "solver", "sfc global", "sfc direct",
              "sfc diffuse", "TOA up");
  for (const Demo& d : demos) {
    std::vector<double> tau, om, g;
    demo_column(d, tau, om, g);
    const std::size_t nl = tau.size();
    std::vector<double> m{mu0}, s{solar}, ad{d.albedo_direct}, af{d.albedo_diffuse};
    std::vector<double> rd(nl + 1), rf(nl + 1), ru(nl + 1);
    ReferenceOptions ro;
    ro.streams = 32;
    const ColumnBatch in{1, nl, tau, om, g, m, s, ad, af};
    if (!solve_columns_reference(in, ro, {rd, rf, ru}).ok) {
      std::printf("reference failed\n");
      return;
    }
    std::printf("%-22s %-18s %10.3f %10.3f %10.3f %10.3f\n", d.name, "reference (value)",
                rd[nl] + rf[nl], rd[nl], rf[nl], ru[0]);
    for (Closure c : kAllClosures) {
      std::vector<double> td(nl + 1), tf(nl + 1), tu(nl + 1);
      SolverOptions o;
      o.closure = c;
      Workspace w;
      if (!solve_columns(in, o, {td, tf, tu}, w).ok) return;
      std::printf("%-22s %-18s %+10.3f %+10.3f %+10.3f %+10.3f\n", d.name,
                  std::string(to_string(c)).c_str(), (td[nl] + tf[nl]) - (rd[nl] + rf[nl]),
                  td[nl] - rd[nl], tf[nl] - rf[nl], tu[0] - ru[0]);
    }
  }
}

}  // namespace

int main(int argc, char** argv) {
  std::size_t np = 256, nl = 64, np_ref = 256;
  int reps = 3;
  for (int i = 1; i < argc; ++i) {
    if (!std::strcmp(argv[i], "--help") || !std::strcmp(argv[i], "-h")) {
      std::printf(
          "usage: reference_bench [--problems N] [--reference-problems M] [--layers L] [--reps R]\n"
          "Times the discrete-ordinate reference (16 and 32 streams, on the first M of the N\n"
          "problems) against the delta-Eddington two-stream kernel (all N problems); prints\n"
          "'<case>: <X> ns per layer-solve', the ratios, and a table of two-stream errors\n"
          "against the reference for three invented demo columns.\n");
      return 0;
    }
    if (i + 1 < argc && !std::strcmp(argv[i], "--problems"))
      np = std::strtoul(argv[++i], nullptr, 10);
    else if (i + 1 < argc && !std::strcmp(argv[i], "--reference-problems"))
      np_ref = std::strtoul(argv[++i], nullptr, 10);
    else if (i + 1 < argc && !std::strcmp(argv[i], "--layers"))
      nl = std::strtoul(argv[++i], nullptr, 10);
    else if (i + 1 < argc && !std::strcmp(argv[i], "--reps"))
      reps = std::atoi(argv[++i]);
  }
  np_ref = std::min(np_ref, np);
  bench::Problems p = bench::make_problems(np, nl);
  std::printf(
      "# %zu problems x %zu layers (reference: first %zu problems), best of %d, single thread\n",
      np, nl, np_ref, reps);

  Workspace work;
  const ColumnBatch all{np, nl, p.tau, p.omega, p.g, p.mu0, p.sol, p.ad, p.af};
  const double t_de = bench::best_seconds(std::max(reps, 5), [&] {
    solve_columns_unchecked(all, SolverOptions{}, {p.d, p.f, p.u}, work);
  });
  const double ns_de = 1e9 * t_de / (double(np) * double(nl));
  std::printf("two-stream delta_eddington: %.2f ns per layer-solve\n", ns_de);

  // The reference solves a batch laid out [layer * n_problems + problem]; take the first np_ref
  // problems of every layer.
  std::vector<double> tau, om, g;
  for (std::size_t l = 0; l < nl; ++l) {
    for (std::size_t i = 0; i < np_ref; ++i) {
      tau.push_back(p.tau[l * np + i]);
      om.push_back(p.omega[l * np + i]);
      g.push_back(p.g[l * np + i]);
    }
  }
  const std::span<const double> mu0(p.mu0.data(), np_ref), sol(p.sol.data(), np_ref),
      ad(p.ad.data(), np_ref), af(p.af.data(), np_ref);
  const ColumnBatch sub{np_ref, nl, tau, om, g, mu0, sol, ad, af};
  std::vector<double> d((nl + 1) * np_ref), f(d.size()), u(d.size());
  double checksum = 0.0;
  for (int streams : {16, 32}) {
    ReferenceOptions o;
    o.streams = streams;
    bool ok = true;
    const double t = bench::best_seconds(reps, [&] {
      ok = solve_columns_reference(sub, o, {d, f, u}).ok && ok;
    });
    if (!ok) {
      std::printf("reference failed\n");
      return 1;
    }
    const double ns_ref = 1e9 * t / (double(np_ref) * double(nl));
    std::printf("reference %d streams: %.0f ns per layer-solve\n", streams, ns_ref);
    std::printf("ratio reference %d streams / two-stream delta_eddington: %.0f\n", streams,
                ns_ref / ns_de);
    for (double x : u) checksum += x;
  }
  std::printf("# checksum %.6e\n", checksum);
  print_demo_table();
  return 0;
}
