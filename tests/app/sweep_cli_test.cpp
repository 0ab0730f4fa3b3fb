// Sweeps from the command line: thread-count independence, kill -9 and resume, refusals.
#include <catch2/catch.hpp>
#include <algorithm>
#include <cstdlib>
#include <variant>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <sys/wait.h>
#include <unistd.h>

#include "io/hdf5_reader.hpp"
#include "support/app_support.hpp"

namespace fs = std::filesystem;

using solstrata::testing::same_content;

namespace {

fs::path dir() {
  static const fs::path d = [] {
    const fs::path p = fs::temp_directory_path() / ("solstrata_sweepcli_" + std::to_string(::getpid()));
    fs::create_directories(p);
    return p;
  }();
  return d;
}

struct Outcome {
  int code;        // exit code, or 128 + signal
  std::string err;
};

Outcome sh(const std::string& args, const std::string& env = "") {
  const fs::path e = dir() / "stderr.txt";
  const std::string cmd = "cd '" + dir().string() + "' && " + env + " '" + SOLSTRATA_BINARY + "' " + args +
                          " > /dev/null 2> '" + e.string() + "'";
  const int status = std::system(cmd.c_str());
  std::ifstream in(e);
  std::stringstream ss;
  ss << in.rdbuf();
  int code = -1;
  if (WIFEXITED(status)) code = WEXITSTATUS(status);
  return {code, ss.str()};
}

const std::string kSweep = solstrata::testing::kSmallColumn + R"(sweep:
  grid:
    - {parameter: aerosol.optical_depth, range: {from: 0.05, to: 1.5, count: 6}}
    - {parameter: sun.solar_zenith_deg, values: [0, 30, 50, 70]}
  zip:
    - {parameter: aerosol.single_scattering_albedo, values: [0.85, 0.95]}
    - {parameter: surface.albedo, values: [0.1, 0.4]}
)";


}  // namespace

TEST_CASE("a sweep gives the same file with one thread or two", "[app][sweep]") {
  std::ofstream(dir() / "sweep.yaml") << kSweep;
  REQUIRE(sh("run sweep.yaml -o one.h5 -j 1 -q --csv one.csv").code == 0);
  REQUIRE(sh("run sweep.yaml -o two.h5 -j 2 -q").code == 0);
  same_content(dir() / "one.h5", dir() / "two.h5");
  // The flat CSV: a header naming the swept parameters and products, one row per scenario.
  std::ifstream csv(dir() / "one.csv");
  std::string header, line;
  std::getline(csv, header);
  CHECK(header.find("scenario,aerosol.optical_depth,sun.solar_zenith_deg,aerosol.single_scattering_albedo,surface.albedo") == 0);
  CHECK(header.find("aerosol_effect_toa_W_m-2") != std::string::npos);
  int rows = 0;
  while (std::getline(csv, line)) ++rows;
  CHECK(rows == 48);
  const auto v = solstrata::io::read_variable(dir() / "one.h5", "aerosol_effect_toa");
  CHECK(v.dimensions == std::vector<std::string>{"scenario"});
  CHECK(v.values.size() == 48);
  const auto tau = solstrata::io::read_variable(dir() / "one.h5", "aerosol_optical_depth");
  CHECK(tau.values[8] == Approx(0.34));  // scenario 8 = (tau index 1, zenith index 0, zip 0)
}

TEST_CASE("a sweep killed with SIGKILL resumes to the same file as a clean run", "[app][sweep]") {
  std::ofstream(dir() / "sweep.yaml") << kSweep;
  if (!fs::exists(dir() / "one.h5")) REQUIRE(sh("run sweep.yaml -o one.h5 -j 1 -q").code == 0);
  // Crash injection: the process SIGKILLs itself after appending 7 records (test hook).
  // Snapshots after every record: the output file shows finished scenarios as the run goes.
  const Outcome killed = sh("run sweep.yaml -o resumed.h5 -j 2 -q",
                            "SOLSTRATA_TEST_KILL_AFTER=7 SOLSTRATA_SNAPSHOT_SECONDS=0");
  CHECK(killed.code != 0);
  CHECK(fs::exists(dir() / "resumed.h5.partial"));
  {
    // The last snapshot before the kill is a complete, readable file: 6 scenarios done (the 7th
    // record was appended, then the process died before its snapshot), the rest marked missing.
    const auto done = solstrata::io::read_variable(dir() / "resumed.h5", "scenario_complete");
    double sum = 0;
    for (double v : done.values) sum += v;
    CHECK(sum == 6);
    const auto g = solstrata::io::read_global_attributes(dir() / "resumed.h5");
    CHECK(std::get<std::vector<double>>(g.at("sweep_complete")) == std::vector<double>{0});
    // Readers mask the scenarios still to run: the fill value is declared (netCDF's default
    // double fill, NC_FILL_DOUBLE) on every per-scenario variable, and the flag is described.
    const auto effect = solstrata::io::read_variable(dir() / "resumed.h5", "aerosol_effect_toa");
    const auto ghi = solstrata::io::read_variable(dir() / "resumed.h5", "global_horizontal_irradiance");
    for (const auto* v : {&effect, &ghi}) {
      CHECK(std::get<std::vector<double>>(v->attributes.at("_FillValue")) == std::vector<double>{9.9692099683868690e+36});
      CHECK(std::get<std::vector<double>>(v->attributes.at("missing_value")) == std::vector<double>{9.9692099683868690e+36});
    }
    CHECK(std::count(ghi.values.begin(), ghi.values.end(), 9.9692099683868690e+36) == long(done.values.size()) - 6);
    CHECK(std::get<std::vector<double>>(done.attributes.at("flag_values")) == std::vector<double>{0, 1});
    CHECK(solstrata::io::text_attribute(done.attributes, "flag_meanings") == "still_to_run complete");
    CHECK(std::get<std::vector<double>>(g.at("sweep_shape")).size() >= 1);
  }
  // A torn last record (the kill could land mid-write): cut a few bytes off the checkpoint.
  fs::resize_file(dir() / "resumed.h5.partial", fs::file_size(dir() / "resumed.h5.partial") - 5);
  // Without --resume the checkpoint is not overwritten.
  const Outcome refused = sh("run sweep.yaml -o resumed.h5 -q");
  CHECK(refused.code == 2);
  CHECK(refused.err.find("--resume") != std::string::npos);
  const Outcome resumed = sh("run sweep.yaml -o resumed.h5 -j 2 -q --resume");
  INFO(resumed.err);
  REQUIRE(resumed.code == 0);
  CHECK_FALSE(fs::exists(dir() / "resumed.h5.partial"));
  same_content(dir() / "one.h5", dir() / "resumed.h5");
}

TEST_CASE("resume is refused when the experiment changed", "[app][sweep]") {
  std::ofstream(dir() / "changing.yaml") << kSweep;
  CHECK(sh("run changing.yaml -o changing.h5 -q", "SOLSTRATA_TEST_KILL_AFTER=3").code != 0);
  REQUIRE(fs::exists(dir() / "changing.h5.partial"));
  std::string text = kSweep;
  text.replace(text.find("albedo: 0.2"), 11, "albedo: 0.3");
  std::ofstream(dir() / "changing.yaml") << text;
  const Outcome o = sh("run changing.yaml -o changing.h5 -q --resume");
  CHECK(o.code == 2);
  CHECK(o.err.find("different experiment") != std::string::npos);
  CHECK_FALSE(fs::exists(dir() / "changing.h5"));
}

TEST_CASE("check reports the scenario count of a sweep", "[app][sweep]") {
  std::ofstream(dir() / "sweep.yaml") << kSweep;
  const fs::path o = dir() / "check.txt";
  const std::string cmd = "cd '" + dir().string() + "' && '" + SOLSTRATA_BINARY + "' check sweep.yaml > '" + o.string() + "'";
  REQUIRE(std::system(cmd.c_str()) == 0);
  std::ifstream in(o);
  std::stringstream ss;
  ss << in.rdbuf();
  CHECK(ss.str().find("48 (grid 6 x 4 x 2)") != std::string::npos);
  CHECK(ss.str().find("est. output") != std::string::npos);
}

TEST_CASE("SIGTERM stops a sweep cleanly with exit code 130 and it resumes", "[app][sweep]") {
  // ~3000 cheap scenarios (a few spectral bins) take about a second after 0.4 s of validation:
  // SIGTERM after 0.8 s lands mid-run. In-flight scenarios finish and are recorded; the rest follow on --resume.
  std::ofstream(dir() / "long.yaml") << R"(aerosol: {optical_depth: 0.2}
sun: {solar_zenith_deg: 30}
spectrum:
  bins: [{from_nm: 400, to_nm: 700, step_nm: 100}]
  bands: [{name: vis, from_nm: 400, to_nm: 700}]
sweep:
  grid:
    - {parameter: aerosol.optical_depth, range: {from: 0.01, to: 2, count: 60}}
    - {parameter: surface.albedo, range: {from: 0, to: 0.9, count: 50}}
)";
  const Outcome stopped = sh("run long.yaml -o long.h5 -q -j 2", "timeout --preserve-status -s TERM 0.8");
  INFO(stopped.err);
  if (stopped.code == 0) {
    WARN("the sweep finished before SIGTERM arrived; interruption not exercised on this machine");
    return;
  }
  CHECK(stopped.code == 130);
  CHECK(stopped.err.find("--resume") != std::string::npos);
  CHECK(fs::exists(dir() / "long.h5.partial"));
  // The interrupted run left a readable snapshot of what it finished.
  const auto partial = solstrata::io::read_variable(dir() / "long.h5", "scenario_complete");
  double done = 0;
  for (double v : partial.values) done += v;
  CHECK(done >= 1);
  CHECK(done < 3000);
  const Outcome resumed = sh("run long.yaml -o long.h5 -q -j 2 --resume");
  REQUIRE(resumed.code == 0);
  const auto tau = solstrata::io::read_variable(dir() / "long.h5", "aerosol_effect_toa");
  CHECK(tau.values.size() == 3000);
  const auto complete = solstrata::io::read_variable(dir() / "long.h5", "scenario_complete");
  CHECK(std::all_of(complete.values.begin(), complete.values.end(), [](double v) { return v == 1; }));
}

TEST_CASE("a sweep file writes only the chosen variables, with the coordinates, and its CSV carries the products",
          "[app][sweep]") {
  // A small sweep over keys of several units (DU, degree, 1), products and one layer variable.
  std::ofstream(dir() / "chosen.yaml") << R"(atmosphere: {ozone_column_du: 300}
aerosol: {type: continental_moderate, optical_depth: 0.2}
sun: {solar_zenith_deg: 30}
spectrum:
  bins: [{from_nm: 290, to_nm: 400, step_nm: 10}, {from_nm: 400, to_nm: 2000, step_nm: 100}]
  bands: [{name: uv, from_nm: 290, to_nm: 400}, {name: rest, from_nm: 400, to_nm: 2000}]
output:
  variables: [products, heating_rate]
  csv: chosen.csv
sweep:
  grid:
    - {parameter: atmosphere.ozone_column_du, values: [250, 350]}
    - {parameter: sun.solar_zenith_deg, values: [20, 60]}
)";
  const Outcome o = sh("run chosen.yaml -o chosen.h5 -j 1");
  INFO(o.err);
  REQUIRE(o.code == 0);
  const auto names = solstrata::io::list_datasets(dir() / "chosen.h5");
  const auto has = [&](const char* n) { return std::find(names.begin(), names.end(), n) != names.end(); };
  for (const char* n : {"global_horizontal_irradiance", "uv_index", "par_photon", "aerosol_effect_toa", "heating_rate",
                        "level", "layer", "layer_bounds", "band", "band_lower", "scenario_complete",
                        "atmosphere_ozone_column_du"}) {
    INFO(n);
    CHECK(has(n));
  }
  for (const char* n : {"flux_up", "band_flux_up", "absorbed", "solar_zenith_angle", "spectral_flux_up"}) {
    INFO(n);
    CHECK_FALSE(has(n));
  }
  // Every units string of the sweep file parses with udunits2 (Debian udunits-bin).
  if (std::system("command -v udunits2 > /dev/null 2>&1") == 0) {
    for (const std::string& n : names) {
      const auto v = solstrata::io::read_variable(dir() / "chosen.h5", n);
      if (v.attributes.count("units") == 0) continue;
      const std::string u = solstrata::io::text_attribute(v.attributes, "units");
      INFO(n << ": " << u);
      CHECK(std::system(("udunits2 -H '" + u + "' -W '' < /dev/null > /dev/null 2>&1").c_str()) == 0);
    }
  } else if (std::getenv("CI") != nullptr) {
    FAIL("udunits2 not found in CI (scripts/setup installs udunits-bin)");
  }
  std::ifstream csv(dir() / "chosen.csv");
  std::string header, row;
  std::getline(csv, header);
  std::getline(csv, row);
  for (const char* c : {"direct_normal_irradiance_W_m-2", "par_energy_W_m-2", "par_photon_umol_m-2_s-1", "uv_index_1",
                        "quality", "caution"}) {
    INFO(header);
    CHECK(header.find(c) != std::string::npos);
  }
  // Built-in water vapour: the broadband representation is flagged (kH2oBroadbandNote).
  CHECK(row.find(",h2o_broadband,") != std::string::npos);
  CHECK(row.find("not medical advice") != std::string::npos);
}

namespace {
/// The rates (scenarios per second) of the progress lines on stderr ("\r3/8 scenarios (37.5%), 2.1/s, ...").
std::vector<double> progress_rates(const std::string& err) {
  std::vector<double> rates;
  for (std::size_t at = err.find("scenarios ("); at != std::string::npos; at = err.find("scenarios (", at + 1)) {
    const std::size_t comma = err.find("), ", at);
    if (comma == std::string::npos) break;
    rates.push_back(std::stod(err.substr(comma + 3)));
  }
  return rates;
}
}  // namespace

TEST_CASE("the first progress rate counts the time of the first scenario", "[app][sweep]") {
  // Before, the clock started after scenario 0 was solved, so the first tick showed one scenario
  // over almost no time (a rate thousands of times too high). Now the first rate is of the same
  // order as the final mean rate (both scenarios per second of the same run, one thread).
  std::ofstream(dir() / "progress.yaml") << kSweep;
  const Outcome o = sh("run progress.yaml -o progress.h5 -j 1", "SOLSTRATA_PROGRESS=1");
  REQUIRE(o.code == 0);
  const std::vector<double> rates = progress_rates(o.err);
  INFO(o.err);
  REQUIRE(rates.size() >= 2);
  CHECK(rates.front() > 0.0);
  CHECK(rates.front() < 20.0 * rates.back());
}

TEST_CASE("accuracy runs its cases on the thread pool: the same file with one thread or two, and progress",
          "[app][sweep]") {
  // Small on purpose (no gas k-terms, 6 bins, 4 streams): the reference solver is slow.
  std::ofstream(dir() / "acc.yaml") << R"(sun: {solar_zenith_deg: 30}
atmosphere: {absorbers: {h2o: none, o2: none}}
spectrum:
  bins: [{from_nm: 300, to_nm: 400, step_nm: 50}, {from_nm: 400, to_nm: 2000, step_nm: 400}]
  bands: [{name: uv, from_nm: 300, to_nm: 400}, {name: rest, from_nm: 400, to_nm: 2000}]
sweep:
  grid:
    - {parameter: sun.solar_zenith_deg, values: [10, 40, 70]}
)";
  const Outcome one = sh("accuracy acc.yaml --sample 3 --streams 4 -j 1 -o acc1.h5", "SOLSTRATA_PROGRESS=1");
  const Outcome two = sh("accuracy acc.yaml --sample 3 --streams 4 -j 2 -o acc2.h5");
  INFO(one.err << two.err);
  REQUIRE(one.code == 0);
  REQUIRE(two.code == 0);
  same_content(dir() / "acc1.h5", dir() / "acc2.h5");
  CHECK(one.err.find("3/3 scenarios (100.0%)") != std::string::npos);
  CHECK(progress_rates(one.err).size() >= 1);
}

namespace {

/// A two-day hourly series at an invented site over a cheap column, with daily totals and a plane.
const std::string kSeries = R"(site: {latitude_deg: 47.3, longitude_deg: 8.6}
times: {start: "2026-06-15T00:00:00+02:00", end: "2026-06-16T23:00:00+02:00", step_minutes: 60}
plane_of_array: {tilt_deg: 30, azimuth_deg: 180}
)" + solstrata::testing::kSeriesColumn;

}  // namespace

TEST_CASE("a time series writes a CF time axis, night flags and daily totals", "[app][sweep][series]") {
  std::ofstream(dir() / "series.yaml") << kSeries;
  REQUIRE(sh("run series.yaml -o series.h5 --csv series.csv -q").code == 0);
  const fs::path f = dir() / "series.h5";
  const auto time = solstrata::io::read_variable(f, "time");
  REQUIRE(time.values.size() == 48);
  // CF time: seconds since the POSIX epoch; 2026-06-15T00:00+02:00 is 2026-06-14T22:00Z.
  CHECK(solstrata::io::text_attribute(time.attributes, "units") == "seconds since 1970-01-01 00:00:00");
  CHECK(solstrata::io::text_attribute(time.attributes, "calendar") == "proleptic_gregorian");
  CHECK(time.values[0] == 1781474400.0);  // date -u -d 2026-06-14T22:00:00Z +%s
  CHECK(time.values[47] - time.values[0] == 47 * 3600.0);
  const auto ghi = solstrata::io::read_variable(f, "global_horizontal_irradiance");
  const auto up = solstrata::io::read_variable(f, "sun_above_horizon");
  const auto zen = solstrata::io::read_variable(f, "solar_zenith_angle");
  REQUIRE(ghi.dimensions == std::vector<std::string>{"time"});
  for (std::size_t i = 0; i < 48; ++i) {
    INFO("step " << i);
    CHECK((up.values[i] == 1.0) == (zen.values[i] < 90.0));
    if (up.values[i] == 0.0) CHECK(ghi.values[i] == 0.0);
    else CHECK(ghi.values[i] > 0.0);
  }
  // Local midnight and noon: dark, then the highest sun of the day.
  CHECK(up.values[0] == 0.0);
  CHECK(up.values[13] == 1.0);
  // Daily totals on their own dimension; global = direct + diffuse (same nodes), and the hourly
  // trapezoidal sum of the steps comes within 1 % of the converged daily total.
  const auto daily = solstrata::io::read_variable(f, "daily_global_horizontal");
  const auto dir_h = solstrata::io::read_variable(f, "daily_direct_horizontal");
  const auto dif_h = solstrata::io::read_variable(f, "daily_diffuse_horizontal");
  const auto toa = solstrata::io::read_variable(f, "daily_toa_horizontal");
  REQUIRE(daily.values.size() == 2);
  CHECK(solstrata::io::text_attribute(daily.attributes, "units") == "MJ m-2 day-1");
  for (std::size_t d = 0; d < 2; ++d) {
    CHECK(daily.values[d] == Approx(dir_h.values[d] + dif_h.values[d]).epsilon(1e-12));
    double hourly = 0.0;
    for (std::size_t i = 24 * d; i < 24 * d + 23; ++i) hourly += 1800.0 * (ghi.values[i] + ghi.values[i + 1]);
    CHECK(hourly / 1e6 == Approx(daily.values[d]).epsilon(0.01));
    CHECK(daily.values[d] < toa.values[d]);
  }
  // The CSV: one row per step with its local time.
  std::ifstream csv(dir() / "series.csv");
  std::string header, first;
  std::getline(csv, header);
  std::getline(csv, first);
  CHECK(header.rfind("local_time,solar_zenith_angle_degree", 0) == 0);
  CHECK(header.find("plane_global_irradiance_W_m-2") != std::string::npos);
  CHECK(first.rfind("2026-06-15T00:00:00+02:00,", 0) == 0);
}

TEST_CASE("a time series killed with SIGKILL resumes to the same file", "[app][sweep][series]") {
  std::ofstream(dir() / "series.yaml") << kSeries;
  if (!fs::exists(dir() / "series.h5")) REQUIRE(sh("run series.yaml -o series.h5 -q").code == 0);
  CHECK(sh("run series.yaml -o series_resumed.h5 -j 2 -q", "SOLSTRATA_TEST_KILL_AFTER=20").code != 0);
  REQUIRE(fs::exists(dir() / "series_resumed.h5.partial"));
  REQUIRE(sh("run series.yaml -o series_resumed.h5 -j 2 -q --resume").code == 0);
  same_content(dir() / "series.h5", dir() / "series_resumed.h5");
}
