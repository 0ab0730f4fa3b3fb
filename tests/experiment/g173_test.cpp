// The ASTM G173-03 reference conditions as an outside check of the whole chain with gases.
#include <catch2/catch.hpp>
#include <cmath>
#include <string>

#include "experiment/experiment.hpp"
#include "experiment/run.hpp"
#include "spectrum/solar.hpp"

using namespace solstrata;

namespace {

const std::string kData = SOLSTRATA_TEST_DATA;

/// The G173 atmosphere (ASTM G173-03: U.S. Standard Atmosphere 1976, 1.4164 cm precipitable
/// water, 0.3438 atm-cm ozone, aerosol optical depth 0.084 at 500 nm, air mass 1.5, albedo 0.2)
/// with G173's own extraterrestrial column as the solar spectrum. The aerosol's Angstrom
/// exponent, single-scattering albedo and asymmetry (1.3, 0.93, 0.7: a rural-type aerosol) are
/// from memory; air mass 1.5 as a plane-parallel zenith angle, acos(1/1.5) = 48.19 deg.
experiment::RunResult g173_run() {
  const std::string text = R"(
atmosphere:
  profile: us_standard_1976
  ozone_column_du: 343.8
  precipitable_water_cm: 1.4164
aerosol:
  optical_depth: 0.084
  reference_wavelength_nm: 500
  angstrom_exponent: 1.3
  single_scattering_albedo: 0.93
  asymmetry_parameter: 0.7
sun: {solar_zenith_deg: 48.1897}
surface: {albedo: 0.2}
spectrum:
  solar_spectrum: {file: )" + kData + R"(/astm-g173-03.csv, column: extraterrestrial_W_m2_nm, fill: zero}
output: {spectral: true}
)";
  return experiment::run_experiment(experiment::parse_experiment(text, "g173.yaml", "."));
}

}  // namespace

TEST_CASE("direct-normal irradiance at the G173 conditions matches the ASTM G173 direct spectrum", "[experiment]") {
  const experiment::RunResult r = g173_run();
  const spectrum::TabulatedSpectrum dc =
      spectrum::read_spectrum_csv(kData + "/astm-g173-03.csv", "direct_circumsolar_W_m2_nm");
  const std::size_t s = r.n_levels - 1;
  const auto dni = [&](double lo, double hi, double& model, double& ref) {
    model = ref = 0.0;
    for (std::size_t b = 0; b < r.n_bins; ++b) {
      if (r.bin_lower_nm[b] < lo || r.bin_upper_nm[b] > hi) continue;
      model += r.bin_direct_down[b * r.n_levels + s] / r.mu0;  // W m-2 per bin
      ref += spectrum::integrate(dc, r.bin_lower_nm[b], r.bin_upper_nm[b]);
    }
  };
  double m = 0, g = 0;
  // Broadband: G173 direct + circumsolar integrates to 900.14 W m-2 (280-4000 nm, computed from
  // the file); the issue's goal is 3 %. G173 includes circumsolar light, which a direct beam
  // does not, and CO2 is not modelled here, so the model lies above it.
  dni(280, 4000, m, g);
  INFO("broadband DNI: model " << m << ", G173 " << g << " W m-2");
  CHECK(g == Approx(900.14).epsilon(1e-4));
  CHECK(std::abs(m / g - 1.0) < 0.03);
  // Windows without strong gas absorption: the beam is Rayleigh, aerosol and ozone only;
  // within 1 % of G173.
  for (const auto& [lo, hi] : {std::pair{440.0, 450.0}, {500.0, 510.0}, {670.0, 680.0}, {860.0, 880.0}}) {
    dni(lo, hi, m, g);
    INFO(lo << "-" << hi << " nm: model " << m << ", G173 " << g << " W m-2");
    CHECK(std::abs(m / g - 1.0) < 0.01);
  }
}

TEST_CASE("water vapour lowers the surface irradiance monotonically; zero water gives the dry result", "[experiment]") {
  const auto run = [](const std::string& water) {
    const std::string text = "atmosphere: {" + water + "}\nsun: {solar_zenith_deg: 40}\nsurface: {albedo: 0.2}\n";
    return experiment::run_experiment(experiment::parse_experiment(text, "w.yaml", "."));
  };
  const experiment::RunResult dry = run("absorbers: {h2o: none}");
  double previous = dry.global_horizontal;
  // Monotonic in the amount (exact property of sum w exp(-k u)).
  for (const char* pw : {"0.5", "1.4", "4"}) {
    const experiment::RunResult wet = run(std::string("precipitable_water_cm: ") + pw);
    INFO(pw << " cm: GHI " << wet.global_horizontal << " DNI " << wet.direct_normal);
    CHECK(wet.global_horizontal < previous);
    previous = wet.global_horizontal;
  }
  // Zero water with the H2O table on is the dry result exactly: inline levels without humidity.
  const std::string levels =
      "levels: {pressure_hpa: [1, 100, 500, 1013], temperature_k: [230, 220, 260, 288], altitude_km: [48, 16, 5.5, 0]}";
  const experiment::RunResult a = run(levels);
  const experiment::RunResult b = run(levels + ", absorbers: {h2o: none}");
  CHECK(a.global_horizontal == b.global_horizontal);
  CHECK(a.direct_normal == b.direct_normal);
}

TEST_CASE("gas absorption in the atmosphere grows with the air mass", "[experiment]") {
  // Longer slant paths absorb more of the beam (Beer-Lambert per k-term); no aerosol, black
  // surface, so the column's absorptance is the gases' (and ozone's).
  double previous = 0.0;
  for (const char* zenith : {"0", "40", "60", "75"}) {
    const std::string text = std::string("sun: {solar_zenith_deg: ") + zenith + "}\nsurface: {albedo: 0}\n";
    const experiment::RunResult r = experiment::run_experiment(experiment::parse_experiment(text, "m.yaml", "."));
    const double absorptance = r.absorbed_atmosphere / r.toa_down;
    INFO("zenith " << zenith << ": absorbed fraction " << absorptance);
    CHECK(absorptance > previous);
    previous = absorptance;
  }
}

TEST_CASE("splitting the layers of a humid column leaves the fluxes unchanged", "[experiment]") {
  // Water vapour alone (no Rayleigh, ozone, O2 or aerosol), isothermal at 273 K (a node of the
  // built-in table) with a constant mixing ratio: the built-in k is proportional to p, so each
  // term's column optical depth sum k(p_mid) N over the sublayers equals that of the whole layer
  // exactly ((p2^2 - p1^2)/2 either way), and non-scattering layers combine exactly. A check of
  // the layer columns, the layer states and the table interpolation together. The air column of
  // a layer uses gravity at its mid altitude, so over a real 48 km column finer layers integrate
  // 1/g slightly better (~1e-5); the levels are therefore squeezed into 10 m (gravity constant to
  // 3e-6), which no part of the gas path depends on, and the water rescaled to the same 2 cm.
  const auto column = [](int split) {
    std::string p = "[", t = "[", z = "[", q = "[";
    const double top = 1.0, sfc = 1000.0;
    const int n = 8 * split;
    for (int i = 0; i <= n; ++i) {
      const double pi = top + (sfc - top) * i / n;
      const double zi = 0.01 * (1.0 - double(i) / n);  // km: a 10 m tall column, see below
      const std::string sep = i ? ", " : "";
      p += sep + std::to_string(pi);
      t += sep + "273";
      z += sep + std::to_string(zi);
      q += sep + "5000";
    }
    const std::string text = "atmosphere:\n  rayleigh: false\n  ozone: false\n  absorbers: {o2: none}\n"
                             "  precipitable_water_cm: 2\n  levels: {pressure_hpa: " +
                             p + "], temperature_k: " + t + "], altitude_km: " + z + "], h2o_ppmv: " + q +
                             "]}\nsun: {solar_zenith_deg: 50}\nsurface: {albedo: 0.3}\n";
    return experiment::run_experiment(experiment::parse_experiment(text, "split.yaml", "."));
  };
  const experiment::RunResult one = column(1), two = column(2), four = column(4);
  const std::size_t s1 = one.n_levels - 1, s2 = two.n_levels - 1, s4 = four.n_levels - 1;
  CHECK(two.precipitable_water_cm == Approx(one.precipitable_water_cm).epsilon(1e-12));
  for (const experiment::RunResult* r : {&two, &four}) {
    const std::size_t s = r == &two ? s2 : s4;
    CHECK(r->direct_down[s] == Approx(one.direct_down[s1]).epsilon(1e-6));
    CHECK(r->diffuse_up[s] == Approx(one.diffuse_up[s1]).epsilon(1e-6));
    CHECK(r->diffuse_up[0] == Approx(one.diffuse_up[0]).epsilon(1e-6));
    CHECK(r->absorbed_atmosphere == Approx(one.absorbed_atmosphere).epsilon(1e-6));
  }
}
