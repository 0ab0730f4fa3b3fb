#include "experiment/sweep.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <random>
#include <unistd.h>

#include "experiment/run.hpp"
#include "experiment/sweep_run.hpp"
#include "io/result_fields.hpp"

using namespace solstrata::experiment;

namespace {

const std::string kBase = R"(atmosphere:
  ozone_column_du: 300
aerosol:
  type: continental_background
  optical_depth: 0.1
sun:
  solar_zenith_deg: 30
surface:
  albedo: 0.2
spectrum:
  bins: [{from_nm: 300, to_nm: 400, step_nm: 25}, {from_nm: 400, to_nm: 1000, step_nm: 100}]
  bands: [{name: uv, from_nm: 300, to_nm: 400}, {name: visnir, from_nm: 400, to_nm: 1000}]
)";

Study study(const std::string& sweep) { return Study::parse(kBase + sweep, "sweep.yaml", "."); }

}  // namespace

TEST_CASE("grid axes expand row-major with the last axis fastest", "[experiment][sweep]") {
  const Study s = study(R"(sweep:
  grid:
    - {parameter: aerosol.optical_depth, values: [0.1, 0.2, 0.3]}
    - {parameter: sun.solar_zenith_deg, range: {from: 0, to: 60, count: 4}}
)");
  REQUIRE(s.size() == 12);
  CHECK(s.plan().shape() == std::vector<std::size_t>{3, 4});
  const auto a5 = s.plan().assignment(5);  // (1, 1): tau 0.2, zenith 20
  CHECK(a5[0].first == "aerosol.optical_depth");
  CHECK(a5[0].second == 0.2);
  CHECK(a5[1].second == Approx(20.0).epsilon(1e-15));
  CHECK(s.plan().assignment(11)[1].second == 60.0);  // range ends exactly at `to`
  const Experiment e = s.scenario(7);                // (1, 3): tau 0.2, zenith 60
  CHECK(e.aerosol.tau_ref == 0.2);
  CHECK(e.solar_zenith_deg == 60.0);
}

TEST_CASE("zipped lists are one axis and log ranges are geometric", "[experiment][sweep]") {
  const Study s = study(R"(sweep:
  grid:
    - {parameter: aerosol.optical_depth, range: {from: 0.01, to: 1, count: 3, spacing: log}}
  zip:
    - {parameter: aerosol.single_scattering_albedo, values: [0.8, 0.9]}
    - {parameter: aerosol.asymmetry_parameter, values: [0.6, 0.7]}
)");
  REQUIRE(s.size() == 6);
  CHECK(s.plan().assignment(2)[0].second == Approx(0.1).epsilon(1e-14));  // sqrt(0.01 * 1)
  const auto a3 = s.plan().assignment(3);  // tau index 1, zip index 1
  CHECK(a3[1].second == 0.9);
  CHECK(a3[2].second == 0.7);
  const Experiment e = s.scenario(3);
  CHECK(e.aerosol.omega == 0.9);
  CHECK(e.aerosol.g == 0.7);
}

TEST_CASE("a scenario list file gives one scenario per row", "[experiment][sweep]") {
  const auto dir = std::filesystem::temp_directory_path() / ("solstrata_sweep_" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  // A comment line before the header is skipped as well (docs/experiment-keys.md).
  std::ofstream(dir / "list.csv") << "# invented list\naerosol.optical_depth,surface.albedo\n0.1,0.2\n0.5,0.3\n# comment\n0.9,0.05\n";
  const Study s = Study::parse(kBase + "sweep:\n  scenario_file: list.csv\n", "sweep.yaml", dir);
  REQUIRE(s.size() == 3);
  CHECK(s.plan().from_list);
  CHECK(s.scenario(2).albedo_direct == 0.05);
  CHECK(s.scenario(1).aerosol.tau_ref == 0.5);
}

TEST_CASE("a sweep scenario equals the same experiment written out by hand", "[experiment][sweep]") {
  const Study s = study(R"(sweep:
  grid:
    - {parameter: aerosol.optical_depth, values: [0.05, 0.4]}
    - {parameter: surface.albedo, values: [0.1, 0.6]}
)");
  const RunResult swept = run_scenario(s, 3, false).result;
  std::string by_hand = kBase;
  by_hand.replace(by_hand.find("optical_depth: 0.1"), 18, "optical_depth: 0.4");
  by_hand.replace(by_hand.find("albedo: 0.2"), 11, "albedo: 0.6");
  const RunResult alone = run_experiment(parse_experiment(by_hand, "alone.yaml", "."));
  CHECK(swept.direct_down == alone.direct_down);
  CHECK(swept.diffuse_down == alone.diffuse_down);
  CHECK(swept.diffuse_up == alone.diffuse_up);
  CHECK(swept.uv_index == alone.uv_index);
}

TEST_CASE("aerosol-free companions are shared by scenarios that differ only in aerosol", "[experiment][sweep]") {
  const Study s = study(R"(sweep:
  grid:
    - {parameter: sun.solar_zenith_deg, values: [10, 50]}
    - {parameter: aerosol.optical_depth, values: [0.1, 0.5, 1.0]}
)");
  CHECK(s.aerosol_free_key(0) == s.aerosol_free_key(2));
  CHECK(s.aerosol_free_key(3) == s.aerosol_free_key(5));
  CHECK(s.aerosol_free_key(0) != s.aerosol_free_key(3));
  CHECK(s.aerosol_free(4).aerosol.tau_ref == 0.0);
}

TEST_CASE("aerosol radiative effect has the expected signs", "[experiment][sweep]") {
  // Common practice, discussed e.g. by Haywood & Shine (1995), Geophys. Res. Lett. 22, 603 (from
  // memory): a purely scattering aerosol over a dark surface cools at the top of the atmosphere;
  // a strongly absorbing aerosol over a bright surface warms there; both dim the surface.
  const Study s = study(R"(sweep:
  zip:
    - {parameter: aerosol.single_scattering_albedo, values: [1.0, 0.7]}
    - {parameter: surface.albedo, values: [0.05, 0.8]}
    - {parameter: aerosol.optical_depth, values: [0.3, 0.3]}
)");
  const ScenarioResult scatter = run_scenario(s, 0, false);
  const ScenarioResult absorb = run_scenario(s, 1, false);
  INFO("scattering/dark TOA " << scatter.effect.toa << ", absorbing/bright TOA " << absorb.effect.toa);
  CHECK(scatter.effect.toa < -1.0);
  CHECK(absorb.effect.toa > 1.0);
  CHECK(scatter.effect.surface < 0.0);
  CHECK(absorb.effect.surface < 0.0);
  // A non-absorbing aerosol puts no energy into the air: the atmospheric effect is ~0 (only the
  // changed path through absorbing gases); an absorbing one heats it.
  CHECK(std::abs(scatter.effect.atmosphere) < 0.1 * std::abs(scatter.effect.toa));
  CHECK(absorb.effect.atmosphere > 10.0);
  CHECK(absorb.effect.atmosphere == Approx(absorb.effect.toa - absorb.effect.surface).epsilon(1e-12));
}

TEST_CASE("results do not depend on the number of threads", "[experiment][sweep]") {
  const Study s = study(R"(sweep:
  grid:
    - {parameter: aerosol.optical_depth, values: [0.1, 0.3, 0.9]}
    - {parameter: sun.solar_zenith_deg, values: [0, 45, 70]}
)");
  std::vector<std::size_t> all(s.size());
  for (std::size_t i = 0; i < all.size(); ++i) all[i] = i;
  const auto collect = [&](unsigned threads) {
    std::vector<RunResult> out(s.size());
    std::vector<double> toa(s.size());
    SweepOptions o;
    o.threads = threads;
    CHECK(run_scenarios(s, all, o, [&](ScenarioResult&& r) {
            toa[r.index] = r.effect.toa;
            out[r.index] = std::move(r.result);
          }) == s.size());
    return std::pair{out, toa};
  };
  const auto [one, toa1] = collect(1);
  const auto [two, toa2] = collect(2);
  CHECK(toa1 == toa2);
  for (std::size_t i = 0; i < s.size(); ++i) {
    CHECK(one[i].diffuse_up == two[i].diffuse_up);
    CHECK(one[i].direct_down == two[i].direct_down);
  }
}

TEST_CASE("bad sweeps point at the sweep entry", "[experiment][sweep]") {
  const auto fails = [&](const std::string& sweep, const std::string& fragment, int line) {
    try {
      const Study s = study(sweep);
      s.validate_all();
      FAIL("accepted: " << sweep);
    } catch (const InputError& e) {
      INFO(e.what());
      CHECK(std::string(e.what()).find(fragment) != std::string::npos);
      if (line > 0) CHECK(e.line() == line);
    }
  };
  const int first = 14;  // line of 'grid:' or 'zip:' (kBase has 12 lines, then 'sweep:')
  fails("sweep:\n  grid:\n    - {parameter: aerosol.single_scattering_albedo, values: [0.9, 1.2]}\n", "0 <= single_scattering_albedo <= 1", first + 1);
  fails("sweep:\n  grid:\n    - {parameter: aerosol.optical_dept, values: [0.1]}\n", "optical_dept", first + 1);
  fails("sweep:\n  zip:\n    - {parameter: aerosol.optical_depth, values: [0.1, 0.2]}\n    - {parameter: surface.albedo, values: [0.1]}\n", "same length", first + 2);
  fails("sweep:\n  grid:\n    - {parameter: aerosol.optical_depth, values: [0.1], range: {from: 0, to: 1, count: 2}}\n", "exactly one", 0);
  fails("sweep:\n  grid:\n    - {parameter: aerosol.optical_depth, range: {from: 0, to: 1, count: 3, spacing: log}}\n", "log range", 0);
  fails("sweep:\n  grid:\n    - {parameter: aerosol.optical_depth, values: [0.1]}\n    - {parameter: aerosol.optical_depth, values: [0.2]}\n", "swept twice", 0);
  fails("sweep:\n  grid:\n    - {parameter: aerosol, values: [0.1]}\n", "section", 0);
  fails("sweep:\n  gird:\n    - {parameter: aerosol.optical_depth, values: [0.1]}\n", "did you mean 'grid'", 0);
}

TEST_CASE("range sweeps give the decimal values a user would write", "[experiment][sweep]") {
  const Study s = study(R"(sweep:
  grid:
    - {parameter: sun.solar_zenith_deg, range: {from: 0, to: 60, count: 4}}
    - {parameter: aerosol.optical_depth, range: {from: 0.05, to: 0.5, count: 10}}
)");
  const auto params = s.plan().parameters();
  // Exact equality on purpose: these decimals must be the nearest doubles to 20, 40, 0.05, 0.1 ...
  CHECK(params[0]->values == std::vector<double>{0, 20, 40, 60});
  const std::vector<double> want{0.05, 0.1, 0.15, 0.2, 0.25, 0.3, 0.35, 0.4, 0.45, 0.5};
  CHECK(params[1]->values == want);
}

TEST_CASE("typed sweep values give the results of the file re-read with the values written in", "[experiment][sweep]") {
  // The loader is the reference (every key validated and resolved as from a file); the typed
  // path sets the same fields on a copy of the base experiment. Random values of every typed key
  // over a zipped axis; every output value, and the aerosol-free companion, agree to 1e-12
  // relative (in practice bit for bit).
  std::mt19937_64 rng(20261203);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  const std::size_t n = 12;
  std::string zip = "sweep:\n  zip:\n";
  const auto axis = [&](const char* path, double lo, double hi) {
    zip += std::string("    - {parameter: ") + path + ", values: [";
    for (std::size_t i = 0; i < n; ++i) zip += (i ? ", " : "") + std::to_string(lo + (hi - lo) * u(rng));
    zip += "]}\n";
  };
  axis("aerosol.optical_depth", 0.0, 2.0);
  axis("aerosol.single_scattering_albedo", 0.6, 1.0);
  axis("aerosol.asymmetry_parameter", -0.2, 0.9);
  axis("aerosol.angstrom_exponent", -0.5, 2.5);
  axis("sun.solar_zenith_deg", 0.0, 89.0);
  axis("surface.albedo", 0.0, 1.0);
  axis("atmosphere.ozone_column_du", 150.0, 500.0);
  Study typed = study(zip);
  Study loader = study(zip);
  REQUIRE(typed.typed_patches());
  loader.use_typed_patches(false);
  REQUIRE_FALSE(loader.typed_patches());
  for (std::size_t i = 0; i < n; ++i) {
    const ScenarioResult a = run_scenario(typed, i, true), b = run_scenario(loader, i, true);
    const auto fa = solstrata::io::result_fields(a.result), fb = solstrata::io::result_fields(b.result);
    REQUIRE(fa.size() == fb.size());
    for (std::size_t k = 0; k < fa.size(); ++k) {
      REQUIRE(fa[k].values.size() == fb[k].values.size());
      for (std::size_t j = 0; j < fa[k].values.size(); ++j) {
        INFO("scenario " << i << ", " << fa[k].name << "[" << j << "]");
        CHECK(fa[k].values[j] == Approx(fb[k].values[j]).epsilon(1e-12).margin(1e-300));
      }
    }
    CHECK(a.effect.toa == Approx(b.effect.toa).epsilon(1e-12).margin(1e-300));
    CHECK(a.effect.surface == Approx(b.effect.surface).epsilon(1e-12).margin(1e-300));
  }
  // A key the study cannot set typed sends the whole study through the loader.
  CHECK_FALSE(study("sweep:\n  grid:\n    - {parameter: atmosphere.precipitable_water_cm, values: [1, 2]}\n").typed_patches());
  // A typed value out of its key's rule is refused when the study is read, at the sweep entry.
  CHECK_THROWS_WITH(study("sweep:\n  grid:\n    - {parameter: sun.solar_zenith_deg, values: [10, 95]}\n"),
                    Catch::Contains("0 <= solar_zenith_deg < 90"));
}
