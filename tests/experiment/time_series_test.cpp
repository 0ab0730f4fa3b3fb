// Site, time and time series: the sun's position from the experiment, night steps, per-step
// inputs, daily totals and the plane of array.
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <unistd.h>

#include "experiment/run.hpp"
#include "experiment/sweep.hpp"
#include "experiment/sweep_run.hpp"
#include "io/result_fields.hpp"
#include "sun/position.hpp"
#include "sun/tilted_plane.hpp"
#include "support/fixtures.hpp"

using namespace solstrata::experiment;
namespace fs = std::filesystem;

namespace {

/// A cheap column (given optics, two bands, plane-parallel) for many-step checks.
const std::string kGiven = R"(given_optics:
  pressure_hpa: [1, 500, 1000]
  bands:
    - name: visible
      from_nm: 400
      to_nm: 700
      solar_irradiance_w_m2: 530
      layers:
        - {optical_depth: 0.05, single_scattering_albedo: 1.0, asymmetry_parameter: 0.0}
        - {optical_depth: 0.20, single_scattering_albedo: 0.93, asymmetry_parameter: 0.7}
    - name: near_infrared
      from_nm: 700
      to_nm: 4000
      solar_irradiance_w_m2: 700
      layers:
        - {optical_depth: 0.02, single_scattering_albedo: 0.8, asymmetry_parameter: 0.0}
        - {optical_depth: 0.10, single_scattering_albedo: 0.85, asymmetry_parameter: 0.7}
surface: {albedo: 0.2}
)";

/// A small atmosphere-mode column.
const std::string& kAtmosphere = solstrata::testing::kSeriesColumn;

fs::path temp_dir() {
  static const fs::path d = [] {
    const fs::path p = fs::temp_directory_path() / ("solstrata_series_" + std::to_string(::getpid()));
    fs::create_directories(p);
    return p;
  }();
  return d;
}

std::string error_of(const std::string& text) {
  try {
    (void)Study::parse(text, "series.yaml", temp_dir());
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

}  // namespace

TEST_CASE("a site and a time give the sun of the Reda & Andreas example", "[experiment][sun]") {
  // Reda & Andreas (2004), NREL/TP-560-34302, example: 39.742476 N, 105.1786 W, 1830.14 m,
  // 2003-10-17 12:30:30 local (UTC-7), 820 hPa, 11 C: topocentric zenith 50.11162 deg, azimuth
  // 194.34024 deg (from memory). Here refraction uses the surface of the profile cut at the site
  // (about 813 hPa, 3 C), which moves the zenith by less than 0.001 deg; Michalsky (1988) is good
  // to about 0.01 deg.
  const Experiment e = Study::parse(kAtmosphere + R"(site: {latitude_deg: 39.742476, longitude_deg: -105.1786, elevation_m: 1830.14}
sun: {time: "2003-10-17T12:30:30-07:00"}
)", "ra.yaml", ".").base();
  REQUIRE(e.has_sun_position);
  CHECK(e.sun_up);
  CHECK(e.solar_zenith_deg == Approx(50.11162).margin(0.01));
  CHECK(e.solar_azimuth_deg == Approx(194.34024).margin(0.01));
  // The profile was cut at the site: its surface is the site (U.S. Standard Atmosphere 1976 at
  // 1830 m: about 813 hPa, tables of NOAA/NASA/USAF 1976, from memory).
  CHECK(e.profile.altitude_km.back() == Approx(1.83014));
  CHECK(e.profile.pressure_hpa.back() == Approx(813.0).margin(2.0));
  // The distance factor comes from the time (Michalsky's R), not from a day of year.
  CHECK(e.distance.resolve() == Approx(1.0 / (0.99585 * 0.99585)).epsilon(2e-3));
}

TEST_CASE("a night step gives zero fluxes and a flag, not an error", "[experiment][sun]") {
  const Experiment e = Study::parse(kAtmosphere + R"(site: {latitude_deg: 47.3, longitude_deg: 8.6}
sun: {time: "2026-06-15T00:30:00+02:00"}
plane_of_array: {tilt_deg: 30}
)", "night.yaml", ".").base();
  REQUIRE_FALSE(e.sun_up);
  CHECK(e.solar_zenith_deg > 90.0);
  const RunResult r = run_experiment(e);
  CHECK_FALSE(r.sun_up);
  CHECK(r.global_horizontal == 0.0);
  CHECK(r.direct_normal == 0.0);
  CHECK(r.plane_global == 0.0);
  for (double v : r.direct_down) CHECK(v == 0.0);
  for (double v : r.diffuse_up) CHECK(v == 0.0);
  // Every output value is finite (no NaN from 0/0 ratios).
  for (const solstrata::io::Field& f : solstrata::io::result_fields(r))
    for (double v : f.values) CHECK(std::isfinite(v));
}

TEST_CASE("bad site, time and series input is refused with its position", "[experiment][sun]") {
  const std::string site = "site: {latitude_deg: 47.3, longitude_deg: 8.6}\n";
  CHECK_THAT(error_of(kGiven + "sun: {time: \"2026-06-15T12:00:00+02:00\"}\n"), Catch::Contains("needs a 'site'"));
  CHECK_THAT(error_of(kGiven + site + "sun: {time: \"2026-06-15T12:00:00\"}\n"), Catch::Contains("UTC offset is missing"));
  CHECK_THAT(error_of(kGiven + site + "sun: {time: \"2026-06-15T12:00Z\", solar_zenith_deg: 30}\n"),
             Catch::Contains("not both"));
  CHECK_THAT(error_of(kGiven + site + "sun: {time: \"2026-06-15T12:00Z\", day_of_year: 3}\n"),
             Catch::Contains("the time sets the Earth-Sun distance"));
  CHECK_THAT(error_of(kGiven + "site: {latitude_deg: 95, longitude_deg: 0}\nsun: {solar_zenith_deg: 3}\n"),
             Catch::Contains("series.yaml:") && Catch::Contains("latitude_deg"));
  CHECK_THAT(error_of(kGiven + site + "times: {start: \"2026-06-15T00:00Z\", end: \"2026-06-16T00:00Z\", step_minutes: 60}\n" +
                      "sun: {solar_zenith_deg: 30}\n"),
             Catch::Contains("cannot be given with a 'times' section"));
  CHECK_THAT(error_of(kGiven + "times: {list: [\"2026-06-15T00:00Z\"]}\n"), Catch::Contains("needs a 'site'"));
  CHECK_THAT(error_of(kGiven + site + "times: {list: [\"2026-06-15T02:00Z\", \"2026-06-15T01:00Z\"]}\n"),
             Catch::Contains("increase strictly"));
  CHECK_THAT(error_of(kGiven + site + "times: {start: \"2026-06-15T00:00Z\", end: \"2036-06-16T00:00Z\", step_minutes: 1}\n"),
             Catch::Contains("more than the 1000000"));
  CHECK_THAT(error_of(kGiven + site + "times: {list: [\"2026-06-15T00:00Z\"], start: \"2026-06-15T00:00Z\"}\n"),
             Catch::Contains("exactly one of"));
  CHECK_THAT(error_of(kGiven + "site: {latitude_deg: 4, longitude_deg: 0, elevation_m: 300}\nsun: {solar_zenith_deg: 3}\n"),
             Catch::Contains("given_optics has no profile"));
  CHECK_THAT(error_of(kGiven + "sun: {solar_zenith_deg: 3}\nplane_of_array: {tilt_deg: 20}\n"),
             Catch::Contains("needs the sun's azimuth"));
  // A per-step inputs file: the bad cell is named by file and line.
  const fs::path csv = temp_dir() / "bad_inputs.csv";
  std::ofstream(csv) << "# invented record\ntime,surface.albedo\n2026-06-15T10:00Z,0.2\n2026-06-15T11:00Z,abc\n";
  const std::string err = error_of(kGiven + site + "times: {inputs_file: bad_inputs.csv}\n");
  CHECK_THAT(err, Catch::Contains("bad_inputs.csv:4:") && Catch::Contains("'abc' is not a finite number"));
  std::ofstream(csv) << "time,sun.solar_zenith_deg\n2026-06-15T10:00Z,20\n";
  CHECK_THAT(error_of(kGiven + site + "times: {inputs_file: bad_inputs.csv}\n"), Catch::Contains("cannot be given per step"));
  // A per-step value out of its key's range: file, line and key.
  std::ofstream(csv) << "time,surface.albedo\n2026-06-15T10:00Z,0.2\n2026-06-15T11:00Z,1.7\n";
  // (Checked when the study is read, or by validate_all for keys the loader must judge.)
  CHECK_THROWS_WITH(Study::parse(kGiven + site + "times: {inputs_file: bad_inputs.csv}\n", "series.yaml", temp_dir()).validate_all(),
                    Catch::Contains("bad_inputs.csv:3:") && Catch::Contains("surface.albedo"));
  // A key the study cannot set typed (the loader judges each step): the same file and line.
  std::ofstream(csv) << "time,atmosphere.precipitable_water_cm\n2026-06-15T10:00Z,2\n2026-06-15T11:00Z,40\n";
  CHECK_THROWS_WITH(Study::parse(kAtmosphere + site + "times: {inputs_file: bad_inputs.csv}\n", "series.yaml", temp_dir()).validate_all(),
                    Catch::Contains("bad_inputs.csv:3:") && Catch::Contains("precipitable_water_cm"));
}

TEST_CASE("a start/end/step series has its steps, local days and quadrature nodes", "[experiment][sun]") {
  const Study s = Study::parse(kGiven + R"(site: {latitude_deg: 47.3, longitude_deg: 8.6}
times: {start: "2026-06-15T00:00:00+02:00", end: "2026-06-16T23:00:00+02:00", step_minutes: 60}
)", "series.yaml", ".");
  REQUIRE(s.is_time_series());
  const TimePlan& tp = s.plan().time;
  CHECK(tp.n_steps == 48);
  REQUIRE(tp.day_start.size() == 2);
  // Local midnight of 15 June 2026 at UTC+2 is 14 June 22:00 UTC.
  CHECK(tp.day_start[0] == solstrata::sun::unix_seconds(2026, 6, 14, 22, 0, 0));
  CHECK(tp.day_start[1] == tp.day_start[0] + 86400.0);
  CHECK(tp.n_nodes() == 2 * static_cast<std::size_t>(kDailyNodes + 2 * kDailyLowSunNodes));  // one high-sun and two low-sun pieces a day
  CHECK(s.base().series.times_text[1] == "2026-06-15T01:00:00+02:00");
  CHECK_FALSE(s.computes_aerosol_effect());
  // Each node lies inside its day's daylight and takes the inputs of the nearest step.
  for (std::size_t k = 0; k < tp.n_nodes(); ++k) {
    const Experiment e = s.scenario(tp.n_steps + k);
    CHECK(e.sun_up);
    CHECK(std::abs(s.base().series.times_unix[tp.node_step[k]] - tp.node_time[k]) <= 1800.0);
  }
}

TEST_CASE("daily totals from the quadrature nodes agree with a 1-minute sum to 0.1 %", "[experiment][sun]") {
  // The check of the daily-total quadrature (kDailyNodes Gauss-Legendre points per daylight
  // interval): the same model summed over 1-minute steps by the trapezoidal rule is the
  // reference (its own error, ~1e-6 relative for these smooth curves, is far below 0.1 %).
  // Summer and winter, mid and high latitude, with a tilted plane.
  struct Case {
    double lat;
    const char* day;
  };
  for (const Case c : {Case{47.3, "2026-06-21"}, Case{47.3, "2026-12-21"}, Case{64.0, "2026-03-20"}, Case{-33.0, "2026-01-10"}}) {
    const std::string text = kGiven + "site: {latitude_deg: " + std::to_string(c.lat) + ", longitude_deg: 0}\n" +
                             "times: {start: \"" + c.day + "T00:00:00Z\", end: \"" + c.day + "T23:59:00Z\", step_minutes: 1}\n" +
                             "plane_of_array: {tilt_deg: 35, azimuth_deg: " + (c.lat >= 0 ? "180" : "0") + "}\n";
    const Study s = Study::parse(text, "daily.yaml", ".");
    const TimePlan& tp = s.plan().time;
    REQUIRE(tp.day_start.size() == 1);
    std::vector<std::size_t> all(s.size());
    for (std::size_t i = 0; i < all.size(); ++i) all[i] = i;
    std::vector<RunResult> res(s.size());
    SweepOptions opt;
    opt.threads = 2;
    run_scenarios(s, all, opt, [&](ScenarioResult&& r) { res[r.index] = std::move(r.result); });
    double fine_ghi = 0, fine_dif = 0, fine_poa = 0, quad_ghi = 0, quad_dif = 0, quad_poa = 0;
    for (std::size_t i = 0; i + 1 < tp.n_steps; ++i) {
      fine_ghi += 30.0 * (res[i].global_horizontal + res[i + 1].global_horizontal);
      fine_dif += 30.0 * (res[i].diffuse_horizontal + res[i + 1].diffuse_horizontal);
      fine_poa += 30.0 * (res[i].plane_global + res[i + 1].plane_global);
    }
    for (std::size_t k = 0; k < tp.n_nodes(); ++k) {
      const RunResult& r = res[tp.n_steps + k];
      quad_ghi += tp.node_weight[k] * r.global_horizontal;
      quad_dif += tp.node_weight[k] * r.diffuse_horizontal;
      quad_poa += tp.node_weight[k] * r.plane_global;
    }
    INFO("latitude " << c.lat << ", " << c.day << ": GHI " << quad_ghi / 1e6 << " vs " << fine_ghi / 1e6 << " MJ m-2");
    REQUIRE(fine_ghi > 1e6);
    CHECK(quad_ghi == Approx(fine_ghi).epsilon(1e-3));
    CHECK(quad_dif == Approx(fine_dif).epsilon(1e-3));
    CHECK(quad_poa == Approx(fine_poa).epsilon(1e-3));
  }
}

TEST_CASE("per-step inputs replace the experiment's values; empty cells keep them", "[experiment][sun]") {
  const fs::path csv = temp_dir() / "photometer.csv";
  std::ofstream(csv) << "# invented sun-photometer record\ntime,aerosol.optical_depth,surface.albedo\n"
                     << "2026-06-15T12:00:00+02:00,0.05,0.1\n2026-06-15T12:30:00+02:00,0.60,\n"
                     << "2026-06-15T13:00:00+02:00,,0.3\n";
  const std::string site = "site: {latitude_deg: 47.3, longitude_deg: 8.6}\n";
  const Study s = Study::parse(kAtmosphere + site + "times: {inputs_file: photometer.csv, daily_totals: false}\n", "p.yaml", temp_dir());
  REQUIRE(s.size() == 3);
  const Experiment e0 = s.scenario(0), e1 = s.scenario(1), e2 = s.scenario(2);
  CHECK(e0.aerosol.tau_ref == 0.05);
  CHECK(e0.albedo_direct == 0.1);
  CHECK(e1.aerosol.tau_ref == 0.60);
  CHECK(e1.albedo_direct == 0.2);  // empty cell: the experiment's albedo
  CHECK(e2.aerosol.tau_ref == 0.15);  // empty cell: the experiment's optical depth
  CHECK(e2.albedo_direct == 0.3);
  // An empty cell gives exactly the run of the experiment as written at that time.
  std::string as_written = kAtmosphere;
  as_written.replace(as_written.find("albedo: 0.2"), 11, "albedo: 0.3");
  const Experiment single =
      Study::parse(as_written + site + "sun: {time: \"2026-06-15T13:00:00+02:00\"}\n", "s.yaml", temp_dir()).base();
  CHECK(run_experiment(e2).global_horizontal == run_experiment(single).global_horizontal);
  // More aerosol, less direct beam (Beer-Lambert).
  CHECK(run_experiment(e1).direct_normal < run_experiment(e0).direct_normal);
}

TEST_CASE("a horizontal plane receives the global horizontal irradiance", "[experiment][sun]") {
  // Exact limit of every sky model at tilt 0: beam DNI cos Z, sky diffuse DHI, no ground view.
  for (const char* sky : {"isotropic", "hay_davies", "perez"}) {
    const Experiment e = Study::parse(kAtmosphere + R"(site: {latitude_deg: 47.3, longitude_deg: 8.6}
sun: {time: "2026-06-15T10:00:00+02:00"}
plane_of_array: {tilt_deg: 0, sky_diffuse: )" + std::string(sky) + "}\n", "h.yaml", ".").base();
    const RunResult r = run_experiment(e);
    INFO(sky);
    CHECK(r.plane_global == Approx(r.global_horizontal).epsilon(1e-12));
    CHECK(r.plane_ground == 0.0);
    CHECK(r.angle_of_incidence_deg == Approx(e.solar_zenith_deg).margin(1e-9));
  }
  // A vertical plane facing away from the sun sees no beam.
  const Experiment away = Study::parse(kAtmosphere + R"(site: {latitude_deg: 47.3, longitude_deg: 8.6}
sun: {time: "2026-06-15T12:00:00+02:00"}
plane_of_array: {tilt_deg: 90, azimuth_deg: 0}
)", "v.yaml", ".").base();
  const RunResult rv = run_experiment(away);
  CHECK(rv.plane_beam == 0.0);
  CHECK(rv.plane_sky_diffuse > 0.0);
  CHECK(rv.plane_ground == Approx(rv.plane_ground_albedo * rv.global_horizontal * 0.5).epsilon(1e-12));
}
