// The batched engine (run_experiments) against one case at a time and against an independent
// path built from the public pieces: the all-in-one column optics, the kernel one problem at a
// time (block of 1) and plain sums.
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <numbers>
#include <random>

#include "experiment/experiment.hpp"
#include "experiment/run.hpp"
#include "optics/column_optics.hpp"
#include "rt/two_stream.hpp"
#include "spectrum/solar.hpp"
#include "sun/air_mass.hpp"

using namespace solstrata;
namespace fs = std::filesystem;

namespace {

fs::path demo_path() { return fs::path(SOLSTRATA_SOURCE_DIR) / "config" / "demo.yaml"; }

/// Random cases around the demo: sun, surface, aerosol amount, absorption and asymmetry, ozone;
/// every fourth without gas tables (fewer spectral points, another spectral set-up in the same
/// batch), one at night.
std::vector<experiment::Experiment> random_cases(std::size_t n, unsigned seed, bool gases) {
  const experiment::Experiment base = experiment::load_experiment(demo_path());
  std::mt19937 rng(seed);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  std::vector<experiment::Experiment> cases;
  for (std::size_t i = 0; i < n; ++i) {
    experiment::Experiment e = base;
    e.output.spectral = i % 2 == 0;
    e.solar_zenith_deg = 85.0 * u(rng);
    e.albedo_direct = u(rng);
    e.albedo_diffuse = u(rng);
    e.aerosol.tau_ref = 2.0 * u(rng) * u(rng);
    e.aerosol.omega = 0.6 + 0.4 * u(rng);
    e.aerosol.g = -0.2 + 1.1 * u(rng);
    if (e.aerosol.g > 0.95) e.aerosol.g = 0.95;
    e.optics.total_ozone_du = 200.0 + 250.0 * u(rng);
    if (!gases || i % 4 == 3)
      for (experiment::Absorber& a : e.absorbers) a.mode = "none";
    if (i == 5) e.sun_up = false;
    cases.push_back(std::move(e));
  }
  return cases;
}

}  // namespace

TEST_CASE("a batch of cases gives what each case gives alone, bit for bit", "[experiment][engine]") {
  // The problems of a batch are independent (ColumnBatch), so batching must not change a bit.
  const std::vector<experiment::Experiment> cases = random_cases(9, 20261203u, true);
  std::vector<const experiment::Experiment*> ptrs;
  for (const experiment::Experiment& e : cases) ptrs.push_back(&e);
  const std::vector<experiment::RunResult> batch = experiment::run_experiments(ptrs);
  REQUIRE(batch.size() == cases.size());
  bool points_differ = false;
  for (std::size_t i = 0; i < cases.size(); ++i) {
    const experiment::RunResult one = experiment::run_experiment(cases[i]);
    const experiment::RunResult& b = batch[i];
    INFO("case " << i);
    points_differ = points_differ || b.n_points != batch[0].n_points;
    CHECK(b.n_points == one.n_points);
    CHECK(b.direct_down == one.direct_down);
    CHECK(b.diffuse_down == one.diffuse_down);
    CHECK(b.diffuse_up == one.diffuse_up);
    CHECK(b.band_net_down == one.band_net_down);
    CHECK(b.bin_diffuse_up == one.bin_diffuse_up);
    CHECK(b.heating_rate == one.heating_rate);
    CHECK(b.par_umol_m2_s == one.par_umol_m2_s);
    CHECK(b.uv_index == one.uv_index);
    CHECK(b.band_tau_aerosol == one.band_tau_aerosol);
    CHECK(b.global_horizontal == one.global_horizontal);
  }
  CHECK(points_differ);  // the batch really mixed spectral set-ups
  CHECK(batch[5].global_horizontal == 0.0);  // the night case
}

TEST_CASE("the engine agrees with the column optics solved one problem at a time", "[experiment][engine]") {
  // The independent path: build_column_optics (the all-in-one optics), the solar source on the
  // grid, the kernel with a block of one problem (its scalar path), the spherical-shell slant
  // factors, and plain sums over the points. Within 1e-12 of the flux at the top (the issue's
  // bound for an unchanged result; the two paths sum in different orders).
  const std::vector<experiment::Experiment> cases = random_cases(6, 7u, false);
  std::vector<const experiment::Experiment*> ptrs;
  for (const experiment::Experiment& e : cases)
    if (e.sun_up) ptrs.push_back(&e);
  const std::vector<experiment::RunResult> batch = experiment::run_experiments(ptrs);
  for (std::size_t c = 0; c < ptrs.size(); ++c) {
    const experiment::Experiment& e = *ptrs[c];
    INFO("case " << c);
    const spectrum::Grid grid = spectrum::make_grid(e.segments, e.bands);
    const spectrum::SolarSource sol = spectrum::builtin_e490_solar(grid, e.data_dir.string());
    const optics::ColumnOptics co = optics::build_column_optics(e.profile, grid, e.aerosol, e.optics);
    const std::size_t n = co.n_points, nl = co.n_layers, nlev = nl + 1;
    const double mu0 = std::cos(e.solar_zenith_deg * std::numbers::pi / 180.0);
    const double factor = e.distance.resolve() * e.irradiance_scale;
    std::vector<double> m0(n, mu0), solar(n), ad(n, e.albedo_direct), af(n, e.albedo_diffuse), path(nl * n);
    for (std::size_t q = 0; q < n; ++q) solar[q] = sol.bin_irradiance[co.point_bin[q]] * co.point_weight[q] * factor;
    for (std::size_t b = 0; b < grid.bands().size(); ++b) {  // the demo's NIR albedo
      const auto it = e.albedo_by_band.find(grid.bands()[b].name);
      if (it == e.albedo_by_band.end()) continue;
      for (std::size_t q = 0; q < n; ++q) {
        const spectrum::BinRange br = grid.band_bins(b);
        if (co.point_bin[q] >= br.first && co.point_bin[q] < br.last) ad[q] = af[q] = it->second;
      }
    }
    const std::vector<double> m = sun::layer_slant_factors(e.profile.altitude_km, e.solar_zenith_deg);
    for (std::size_t l = 0; l < nl; ++l)
      for (std::size_t q = 0; q < n; ++q) path[l * n + q] = m[l];
    rt::ColumnBatch in{n, nl, co.tau, co.omega, co.g, m0, solar, ad, af};
    in.beam_path = path;
    std::vector<double> dir(nlev * n), dif(nlev * n), up(nlev * n);
    rt::SolverOptions opt;
    opt.block_size = 1;
    rt::Workspace w;
    REQUIRE(rt::solve_columns(in, opt, {dir, dif, up}, w).ok);
    const experiment::RunResult& r = batch[c];
    REQUIRE(r.n_levels == nlev);
    const double top = r.direct_down[0];
    for (std::size_t lev = 0; lev < nlev; ++lev) {
      double sd = 0, sf = 0, su = 0;
      for (std::size_t q = 0; q < n; ++q) {
        sd += dir[lev * n + q];
        sf += dif[lev * n + q];
        su += up[lev * n + q];
      }
      CHECK(std::abs(r.direct_down[lev] - sd) <= 1e-12 * top);
      CHECK(std::abs(r.diffuse_down[lev] - sf) <= 1e-12 * top);
      CHECK(std::abs(r.diffuse_up[lev] - su) <= 1e-12 * top);
    }
  }
}
