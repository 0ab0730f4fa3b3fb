// Experiment keys added with water vapour and the built-in solar spectrum.
#include <unistd.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>

#include "atmos/humidity.hpp"
#include "experiment/experiment.hpp"
#include "experiment/run.hpp"
#include "experiment/input_error.hpp"

using namespace solstrata;

namespace {

/// 1-based line and column of the first occurrence of `needle`.
std::pair<int, int> where(const std::string& text, const std::string& needle) {
  const std::size_t at = text.find(needle);
  REQUIRE(at != std::string::npos);
  const int line =
      1 + static_cast<int>(std::count(text.begin(), text.begin() + static_cast<long>(at), '\n'));
  const std::size_t nl = text.rfind('\n', at == 0 ? 0 : at - 1);
  const std::size_t col0 = (nl == std::string::npos || at == 0) ? at : at - nl - 1;
  return {line, static_cast<int>(col0) + 1};
}

experiment::InputError error_of(const std::string& text) {
  try {
    (void)experiment::parse_experiment(text, "exp.yaml", ".");
  } catch (const experiment::InputError& e) {
    return e;
  }
  FAIL("expected an InputError");
  throw;  // unreachable
}

std::string levels_with(const std::string& humidity_lines) {
  return "atmosphere:\n"
         "  levels:\n"
         "    pressure_hpa: [100, 500, 1000]\n"
         "    temperature_k: [220, 260, 290]\n"
         "    altitude_km: [16, 5.5, 0]\n" +
         humidity_lines + "sun:\n  solar_zenith_deg: 30\n";
}

}  // namespace

TEST_CASE("profile levels accept specific or relative humidity, converted to ppmv",
          "[experiment][humidity]") {
  const experiment::Experiment q = experiment::parse_experiment(
      levels_with("    specific_humidity_kg_kg: [1e-5, 0.002, 0.01]\n"), "q.yaml", ".");
  REQUIRE(q.profile.h2o_ppmv.size() == 3);
  // Computed from x = q / (q + (1 - q) eps) (atmos/humidity.hpp).
  CHECK(q.profile.h2o_ppmv[2] == Approx(15980.6).epsilon(1e-5));
  CHECK(q.profile.h2o_ppmv[0] == Approx(atmos::ppmv_from_specific_humidity(1e-5)).epsilon(1e-14));

  const experiment::Experiment rh = experiment::parse_experiment(
      levels_with("    relative_humidity_percent: [10, 40, 70]\n"), "rh.yaml", ".");
  REQUIRE(rh.profile.h2o_ppmv.size() == 3);
  // 70 % at 290 K and 1000 hPa: x = 0.7 e_w(290 K) / p = 0.7 * 1920.09 Pa / 1e5 Pa = 13441 ppmv
  // (computed from Murphy & Koop 2005, eq. 10, by hand).
  CHECK(rh.profile.h2o_ppmv[2] == Approx(13440.6).epsilon(1e-5));
  CHECK(rh.profile.h2o_ppmv[0] ==
        Approx(atmos::ppmv_from_relative_humidity(10, 220, 100)).epsilon(1e-14));
}

TEST_CASE("two humidity keys in one levels mapping are an error at the second",
          "[experiment][humidity]") {
  const std::string text =
      levels_with("    h2o_ppmv: [5, 100, 1000]\n    relative_humidity_percent: [1, 2, 3]\n");
  const experiment::InputError e = error_of(text);
  INFO(e.what());
  CHECK(e.line() == where(text, "relative_humidity_percent").first);
  CHECK(e.column() == where(text, "relative_humidity_percent").second);
  CHECK_THAT(e.message(), Catch::Contains("give the water vapour once"));
}

TEST_CASE("an impossible relative humidity is an error at its element", "[experiment][humidity]") {
  // 100 % at 390 K is a vapour pressure of ~1.8 bar (Murphy & Koop 2005 form), above 100 hPa.
  const std::string text =
      "atmosphere:\n  levels:\n    pressure_hpa: [100, 1000]\n    temperature_k: [330, 290]\n"
      "    altitude_km: [16, 0]\n    relative_humidity_percent: [100, 50]\n"
      "sun:\n  solar_zenith_deg: 30\n";
  const experiment::InputError e = error_of(text);
  INFO(e.what());
  CHECK(e.line() == where(text, "[100, 50]").first);
  CHECK(e.column() == where(text, "[100, 50]").second + 1);
  CHECK(e.key_path() == "atmosphere.levels.relative_humidity_percent[0]");
  CHECK_THAT(e.message(), Catch::Contains("not below the total pressure"));
}

TEST_CASE("precipitable_water_cm rescales the profile's water vapour exactly",
          "[experiment][humidity]") {
  const experiment::Experiment e = experiment::parse_experiment(
      "atmosphere:\n  precipitable_water_cm: 2.5\n  surface_pressure_hpa: 900\nsun:\n  "
      "solar_zenith_deg: 30\n",
      "pwv.yaml", ".");
  // The value asked for, after the pressure scaling (exact rescaling: layer columns are linear
  // in the mixing ratios).
  CHECK(atmos::total_h2o_cm(e.profile) == Approx(2.5).epsilon(1e-13));
  // A profile without water vapour gets the default shape with that column.
  const experiment::Experiment d = experiment::parse_experiment(
      levels_with("").insert(12, "  precipitable_water_cm: 0.7\n"), "dry.yaml", ".");
  CHECK(atmos::total_h2o_cm(d.profile) == Approx(0.7).epsilon(1e-13));
  CHECK(d.profile.h2o_ppmv.size() == 3);
}

TEST_CASE("precipitable_water_cm out of range is an error at its value", "[experiment][humidity]") {
  const std::string text =
      "atmosphere:\n  precipitable_water_cm: 16\nsun:\n  solar_zenith_deg: 30\n";
  const experiment::InputError e = error_of(text);
  CHECK(e.line() == 2);
  CHECK(e.column() == where(text, "16").second);
  CHECK_THAT(e.message(), Catch::Contains("0 < precipitable_water_cm <= 15"));
}

TEST_CASE("the solar spectrum is the built-in E490 table unless another is asked for",
          "[experiment][solar]") {
  const std::string sun = "sun:\n  solar_zenith_deg: 30\n";
  CHECK(experiment::parse_experiment(sun, "a.yaml", ".").solar == experiment::SolarChoice::e490);
  CHECK(experiment::parse_experiment(sun + "spectrum:\n  solar_spectrum: builtin\n", "b.yaml", ".")
            .solar == experiment::SolarChoice::e490);
  CHECK(experiment::parse_experiment(sun + "spectrum:\n  solar_spectrum: planck\n", "c.yaml", ".")
            .solar == experiment::SolarChoice::planck);
  const std::string bad = sun + "spectrum:\n  solar_spectrum: plank\n";
  const experiment::InputError e = error_of(bad);
  CHECK(e.line() == 4);
  CHECK(e.column() == where(bad, "plank").second);
  CHECK_THAT(e.message(), Catch::Contains("did you mean 'planck'"));
  // The data directory comes from default_data_dir(); the built-in file is there.
  CHECK(std::filesystem::is_regular_file(experiment::parse_experiment(sun, "d.yaml", ".").data_dir /
                                         "solar/astm_e490_00a.csv"));
}

TEST_CASE("a user solar table that does not cover the grid is an input error unless fill: zero",
          "[experiment][solar]") {
  const std::filesystem::path dir =
      std::filesystem::temp_directory_path() / ("solstrata_load_" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  std::ofstream(dir / "short.csv") << "wavelength_nm,irradiance\n300,1.0\n3000,0.1\n";
  const std::string text =
      "sun:\n  solar_zenith_deg: 30\nspectrum:\n  solar_spectrum:\n    file: short.csv\n";
  try {
    (void)experiment::parse_experiment(text, "exp.yaml", dir);
    FAIL("expected an InputError");
  } catch (const experiment::InputError& e) {
    INFO(e.what());
    CHECK(e.line() == 5);
    CHECK(e.column() == where(text, "short.csv").second);
    CHECK_THAT(e.message(), Catch::Contains((dir / "short.csv").string()) &&
                                Catch::Contains("covers 300..3000 nm") &&
                                Catch::Contains("spans 250..4000 nm") &&
                                Catch::Contains("fill: zero"));
  }
  const experiment::Experiment ok =
      experiment::parse_experiment(text + "    fill: zero\n", "exp.yaml", dir);
  CHECK(ok.solar == experiment::SolarChoice::file);
  CHECK(ok.solar_fill_zero);
  // A table covering the grid needs no fill.
  std::ofstream(dir / "wide.csv") << "wavelength_nm,irradiance\n200,1.0\n5000,0.1\n";
  CHECK(experiment::parse_experiment(
            "sun:\n  solar_zenith_deg: 30\nspectrum:\n  solar_spectrum:\n    file: wide.csv\n",
            "exp.yaml", dir)
            .solar == experiment::SolarChoice::file);
  std::filesystem::remove_all(dir);
}

TEST_CASE("ozone cross sections follow the layer temperature unless switched off", "[experiment]") {
  const std::string sun = "sun:\n  solar_zenith_deg: 30\n";
  CHECK(experiment::parse_experiment(sun, "a.yaml", ".").optics.ozone_temperature_dependence);
  CHECK_FALSE(experiment::parse_experiment(
                  "atmosphere:\n  ozone_temperature_dependence: false\n" + sun, "b.yaml", ".")
                  .optics.ozone_temperature_dependence);
}

TEST_CASE("the data directory comes from SOLSTRATA_DATA_DIR when it is set",
          "[experiment][solar]") {
  const char* old = std::getenv("SOLSTRATA_DATA_DIR");
  const std::string saved = old ? old : "";
  ::setenv("SOLSTRATA_DATA_DIR", "/somewhere/else", 1);
  CHECK(experiment::default_data_dir() == std::filesystem::path("/somewhere/else"));
  ::unsetenv("SOLSTRATA_DATA_DIR");
  // Otherwise the source tree's solver/data (compile definition), which holds the E490 file.
  CHECK(
      std::filesystem::is_regular_file(experiment::default_data_dir() / "solar/astm_e490_00a.csv"));
  if (old) ::setenv("SOLSTRATA_DATA_DIR", saved.c_str(), 1);
}

TEST_CASE("atmosphere.absorbers picks built-in, none or a table file per gas, and rejects bad choices", "[experiment]") {
  const std::string sun = "\nsun: {solar_zenith_deg: 30}\n";
  const experiment::Experiment d = experiment::parse_experiment("sun: {solar_zenith_deg: 30}\n", "exp.yaml", ".");
  REQUIRE(d.absorbers.size() == 3);
  CHECK(d.absorbers[0].gas == "H2O");
  CHECK(d.absorbers[0].mode == "builtin");
  CHECK(d.absorbers[1].mode == "builtin");
  CHECK(d.absorbers[2].mode == "none");
  // A table file: the shipped O2 table given by path.
  const std::string o2 = std::string(SOLSTRATA_SOURCE_DIR) + "/solver/data/gases/o2_hitran2012.ktab";
  const experiment::Experiment f =
      experiment::parse_experiment("atmosphere:\n  absorbers: {o2: " + o2 + "}" + sun, "exp.yaml", ".");
  CHECK(f.absorbers[1].mode == "file");
  REQUIRE(f.absorbers[1].table);
  CHECK(f.absorbers[1].table->gas == "O2");
  // The same table named for the wrong gas, a missing file, built-in CO2, an unknown gas.
  const std::string wrong = "atmosphere:\n  absorbers: {h2o: " + o2 + "}" + sun;
  CHECK_THAT(error_of(wrong).what(), Catch::Contains("exp.yaml:2:") && Catch::Contains("is for O2, not H2O"));
  CHECK_THAT(error_of("atmosphere:\n  absorbers: {co2: nowhere.ktab}" + sun).what(), Catch::Contains("does not exist"));
  CHECK_THAT(error_of("atmosphere:\n  absorbers: {co2: builtin}" + sun).what(), Catch::Contains("no built-in CO2"));
  CHECK_THAT(error_of("atmosphere:\n  absorbers: {ch4: none}" + sun).what(), Catch::Contains("ch4"));
}

TEST_CASE("aerosol type names of earlier versions are an error that names the new one", "[experiment]") {
  const std::string text = "aerosol:\n  type: maritime_clean\n  optical_depth: 0.1\nsun: {solar_zenith_deg: 30}\n";
  const experiment::InputError e = error_of(text);
  CHECK(e.line() == 2);
  CHECK_THAT(e.what(), Catch::Contains("now called 'marine_background'"));
}

TEST_CASE("custom bins without bands get the default bands clipped to the grid", "[experiment]") {
  const experiment::Experiment e = experiment::parse_experiment(
      "spectrum:\n  bins: [{from_nm: 350, to_nm: 800, step_nm: 10}]\nsun: {solar_zenith_deg: 30}\n", "b.yaml", ".");
  REQUIRE(e.bands.size() == 3);  // UV-A 350-400, PAR 400-700, NIR 700-800; no UV-C or UV-B
  CHECK(e.bands[0].name == "UV-A");
  CHECK(e.bands[0].lower_nm == 350.0);
  CHECK(e.bands[2].name == "NIR");
  CHECK(e.bands[2].upper_nm == 800.0);
  // A grid starting below 280 nm keeps a UV-C band from its first edge.
  const experiment::Experiment u = experiment::parse_experiment(
      "spectrum:\n  bins: [{from_nm: 260, to_nm: 320, step_nm: 5}]\nsun: {solar_zenith_deg: 30}\n", "b.yaml", ".");
  REQUIRE(u.bands.size() == 3);
  CHECK(u.bands[0].name == "UV-C");
  CHECK(u.bands[0].lower_nm == 260.0);
}

TEST_CASE("without a surface section the albedo is the documented default 0.2", "[experiment]") {
  // docs/experiment-keys.md, top level: `surface` defaults to albedo 0.2 (it was 0 before).
  const experiment::Experiment e = experiment::parse_experiment("sun: {solar_zenith_deg: 30}\n", "exp.yaml", ".");
  CHECK(e.albedo_direct == 0.2);
  CHECK(e.albedo_diffuse == 0.2);
}

TEST_CASE("solver.precision selects the float kernel, and its fluxes stay within 1e-5 of double", "[experiment]") {
  // Agreement with the double kernel on a full column (built-in atmosphere, gases, aerosol): the
  // float kernel's documented accuracy (docs/experiment-keys.md, solver.precision).
  const std::string base = "aerosol: {type: urban_haze, optical_depth: 0.3}\nsun: {solar_zenith_deg: 50}\n";
  const experiment::Experiment d = experiment::parse_experiment(base, "exp.yaml", ".");
  const experiment::Experiment f = experiment::parse_experiment(base + "solver: {precision: float}\n", "exp.yaml", ".");
  CHECK_FALSE(d.single_precision);
  REQUIRE(f.single_precision);
  const experiment::RunResult rd = experiment::run_experiment(d), rf = experiment::run_experiment(f);
  const double incident = rd.toa_down;
  for (std::size_t lev = 0; lev < rd.n_levels; ++lev) {
    CHECK(std::abs(rf.direct_down[lev] - rd.direct_down[lev]) < 1e-5 * incident);
    CHECK(std::abs(rf.diffuse_down[lev] - rd.diffuse_down[lev]) < 1e-5 * incident);
    CHECK(std::abs(rf.diffuse_up[lev] - rd.diffuse_up[lev]) < 1e-5 * incident);
  }
  CHECK_THROWS_WITH(experiment::parse_experiment(base + "solver: {precision: half}\n", "exp.yaml", "."),
                    Catch::Contains("precision") && Catch::Contains("float"));
}
