// Times a sweep of many aerosol scenarios of a 60-layer column over the default spectral grid,
// with 1 and 2 worker threads. Prints scenarios per second and layer-solves per second (one
// layer at one spectral point, aerosol-free companions included).
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <set>
#include <string>
#include <thread>
#include <sys/resource.h>
#include <unistd.h>

#include "atmos/standard_atmosphere.hpp"
#include "experiment/sweep.hpp"
#include "experiment/sweep_run.hpp"

using namespace solstrata;

/// s: CPU time of the whole process so far (all threads), user + system.
static double cpu_seconds() {
  rusage u{};
  getrusage(RUSAGE_SELF, &u);
  return double(u.ru_utime.tv_sec + u.ru_stime.tv_sec) + 1e-6 * double(u.ru_utime.tv_usec + u.ru_stime.tv_usec);
}

int main(int argc, char** argv) {
  std::size_t side = 100;  // side x side scenarios
  bool gases = true;       // the built-in H2O and O2 tables (k-terms); --no-gases: ozone only
  bool single = false;     // --float: the float kernel (solver.precision: float)
  std::size_t per_call = 0;  // --cases-per-call K (0: as `solstrata run` chooses)
  for (int i = 1; i < argc; ++i) {
    if (!std::strcmp(argv[i], "--help") || !std::strcmp(argv[i], "-h")) {
      std::printf("usage: sweep_bench [--side N] [--no-gases] [--float] [--cases-per-call K]\nRuns an N x N aerosol grid (default 100 x 100 = 10,000 scenarios)\n"
                  "of a 60-layer column on the default grid with 1 and 2 threads, K scenarios per engine call.\n");
      return 0;
    }
    if (!std::strcmp(argv[i], "--no-gases")) gases = false;
    if (!std::strcmp(argv[i], "--float")) single = true;
    if (i + 1 < argc && !std::strcmp(argv[i], "--side")) side = std::strtoul(argv[++i], nullptr, 10);
    if (i + 1 < argc && !std::strcmp(argv[i], "--cases-per-call")) per_call = std::strtoul(argv[++i], nullptr, 10);
  }
  const auto dir = std::filesystem::temp_directory_path() / ("solstrata_sweep_bench_" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  std::vector<double> alt;
  for (int k = 60; k >= 0; --k) alt.push_back(80.0 * k * k / 3600.0);  // 61 levels, 60 layers, finer near the ground
  std::ofstream(dir / "column60.yaml") << atmos::to_yaml_text(atmos::make_us_standard_1976(alt), "60-layer U.S. Standard Atmosphere (bench)");
  std::ofstream(dir / "bench.yaml") << (gases ? "atmosphere: {profile: column60.yaml}\n"
                                             : "atmosphere: {profile: column60.yaml, absorbers: {h2o: none, o2: none}}\n")
                                    << "aerosol: {type: continental_moderate, optical_depth: 0.1}\n"
                                       "sun: {solar_zenith_deg: 35}\nsurface: {albedo: 0.2}\n"
                                    << (single ? "solver: {precision: float}\n" : "")
                                    << ""
                                       "sweep:\n  grid:\n"
                                       "    - {parameter: aerosol.optical_depth, range: {from: 0.01, to: 2, count: "
                                    << side << ", spacing: log}}\n"
                                       "    - {parameter: aerosol.single_scattering_albedo, range: {from: 0.7, to: 1, count: "
                                    << side << "}}\n";
  const experiment::Study study = experiment::Study::load(dir / "bench.yaml");
  const std::size_t n = study.size();
  const experiment::ScenarioResult probe = experiment::run_scenario(study, 0, false);
  const double layers = double(probe.result.n_layers), points = double(probe.result.n_points);
  if (per_call == 0) per_call = experiment::cases_per_call_for(probe.result.n_points);
  std::set<std::string> clean;
  for (std::size_t i = 0; i < n; ++i) clean.insert(study.aerosol_free_key(i));
  std::printf("# %zu scenarios, %g layers, %g spectral points, aerosol-free companions: %zu distinct, %zu scenarios per engine call\n",
              n, layers, points, clean.size(), per_call);
  std::vector<std::size_t> todo(n);
  for (std::size_t i = 0; i < n; ++i) todo[i] = i;
  double rate1 = 0;
  for (unsigned threads : {1u, 2u}) {
    experiment::SweepOptions o;
    o.threads = threads;
    o.cases_per_call = per_call;
    double sink = 0;
    const auto t0 = std::chrono::steady_clock::now();
    const double c0 = cpu_seconds();
    experiment::run_scenarios(study, todo, o, [&](experiment::ScenarioResult&& r) { sink += r.effect.toa; });
    const double s = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    const double rate = double(n) / s;
    if (threads == 1) rate1 = rate;
    // Every scenario solves its column and, once per distinct aerosol-free case, a companion.
    const double solves = (double(n) + double(clean.size())) * layers * points;
    const double cpu = cpu_seconds() - c0;
    std::printf("sweep (%u thread%s): %.0f scenarios/s, %.1f ns per layer-solve end to end (%.2f s; CPU time %.1f ns per layer-solve)%s\n",
                threads, threads == 1 ? "" : "s", rate, 1e9 * s * threads / solves, s, 1e9 * cpu / solves, sink == 0 ? " " : "");
    if (threads == 2) std::printf("parallel efficiency with 2 threads: %.0f %%\n", 100.0 * rate / (2 * rate1));
  }
  std::filesystem::remove_all(dir);
  return 0;
}
