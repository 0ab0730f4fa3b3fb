#include "experiment/run.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <numeric>

#include "experiment/experiment.hpp"
#include "experiment/input_error.hpp"
#include "io/hdf5_reader.hpp"
#include "io/result_file.hpp"

using namespace solstrata;
namespace fs = std::filesystem;

namespace {

fs::path demo_path() { return fs::path(SOLSTRATA_SOURCE_DIR) / "config" / "demo.yaml"; }

fs::path scratch(const std::string& name) {
  const fs::path d = fs::temp_directory_path() / ("solstrata_test_" + std::to_string(::getpid()));
  fs::create_directories(d);
  return d / name;
}

double sum_over_bands(const std::vector<double>& band_level, std::size_t n_bands, std::size_t n_levels,
                      std::size_t level) {
  double s = 0;
  for (std::size_t b = 0; b < n_bands; ++b) s += band_level[b * n_levels + level];
  return s;
}

}  // namespace

TEST_CASE("the demo experiment runs and its budget closes", "[experiment]") {
  const experiment::Experiment e = experiment::load_experiment(demo_path());
  const experiment::RunResult r = experiment::run_experiment(e);
  REQUIRE(r.n_levels == e.profile.n_levels());
  REQUIRE(r.n_bands >= 4);
  const std::size_t n = r.n_levels;
  for (std::size_t lev = 0; lev < n; ++lev) {
    // Broadband = sum of bands (the default bands tile the whole grid) - exact bookkeeping.
    CHECK(r.direct_down[lev] == Approx(sum_over_bands(r.band_direct_down, r.n_bands, n, lev)).epsilon(1e-12));
    CHECK(r.diffuse_down[lev] == Approx(sum_over_bands(r.band_diffuse_down, r.n_bands, n, lev)).epsilon(1e-12));
    CHECK(r.diffuse_up[lev] == Approx(sum_over_bands(r.band_diffuse_up, r.n_bands, n, lev)).epsilon(1e-12));
    // Net = down - up.
    CHECK(r.net_down[lev] == Approx(r.direct_down[lev] + r.diffuse_down[lev] - r.diffuse_up[lev]).epsilon(1e-14));
  }
  // Energy balance: TOA net = absorbed in the atmosphere + absorbed at the surface (exact
  // conservation of the adding method), to 1e-9 relative.
  const double absorbed_layers = std::accumulate(r.absorbed.begin(), r.absorbed.end(), 0.0);
  CHECK(r.net_down[0] == Approx(absorbed_layers + r.absorbed_surface).epsilon(1e-9));
  CHECK(r.net_down[0] == Approx(r.absorbed_atmosphere + r.absorbed_surface).epsilon(1e-9));
  // Global = direct + diffuse, and GHI = DNI mu0 + DHI.
  CHECK(r.global_horizontal == Approx(r.direct_down.back() + r.diffuse_down.back()).epsilon(1e-14));
  CHECK(r.global_horizontal == Approx(r.direct_normal * r.mu0 + r.diffuse_horizontal).epsilon(1e-12));
  // TOA downward flux = mu0 x (distance factor x solar constant over the grid): the built-in
  // ASTM E490-00a spectrum is scaled to 1361 W m-2 over all wavelengths (IAU 2015 B3); 250-4000 nm
  // holds 1352.26 / 1366.09 = 99.0 % of it (computed from the file).
  CHECK(r.toa_down == Approx(r.mu0 * r.toa_normal_w_m2).epsilon(1e-12));
  CHECK(r.toa_normal_w_m2 / r.earth_sun_factor > 0.97 * 1361.0);
  CHECK(r.toa_normal_w_m2 / r.earth_sun_factor < 1361.0);
  // Physically expected ranges for a clear, lightly hazy sky at 32.5 degrees (common practice:
  // clear-sky global horizontal irradiance near 850-950 W m-2 at this sun height; PAR photon flux
  // about 1600-2000 umol m-2 s-1; summer mid-latitude UV index 6-9). Water vapour is not in the
  // model yet; it absorbs roughly 60-100 W m-2 of the near infrared at this sun height (Lacis &
  // Hansen 1974 absorptance for 1-3 cm of water), so our GHI sits that much above the usual range.
  CHECK(r.global_horizontal > 850);
  CHECK(r.global_horizontal < 950 + 100);
  CHECK(r.diffuse_horizontal / r.global_horizontal > 0.06);
  CHECK(r.diffuse_horizontal / r.global_horizontal < 0.25);
  CHECK(r.par_umol_m2_s > 1500);
  CHECK(r.par_umol_m2_s < 2100);
  CHECK(r.par_umol_m2_s / r.par_w_m2 == Approx(4.57).margin(0.1));  // McCree 1972 daylight figure (from memory)
  CHECK(r.uv_index > 5);
  CHECK(r.uv_index < 10);
  for (double h : r.heating_rate) {
    CHECK(std::isfinite(h));
    CHECK(h > -1e-9);
    CHECK(h < 80);  // the built-in Planck spectrum overstates UV below 300 nm, so ozone heating near 1 hPa runs high
  }
}

TEST_CASE("the result file is a self-describing netCDF-4 dataset", "[experiment][io]") {
  experiment::Experiment e = experiment::load_experiment(demo_path());
  const experiment::RunResult r = experiment::run_experiment(e);
  const fs::path out = scratch("demo_roundtrip.h5");
  io::write_result_file(out, e, r);
  REQUIRE(fs::exists(out));
  const io::StoredVariable dn = io::read_variable(out, "flux_diffuse_down");
  CHECK(dn.dimensions == std::vector<std::string>{"level"});
  CHECK(io::text_attribute(dn.attributes, "units") == "W m-2");
  CHECK(!io::text_attribute(dn.attributes, "long_name").empty());
  CHECK(dn.values == r.diffuse_down);
  const io::StoredVariable bands = io::read_variable(out, "band_flux_direct_down");
  CHECK(bands.dimensions == std::vector<std::string>{"band", "level"});
  CHECK(bands.shape == std::vector<std::size_t>{r.n_bands, r.n_levels});
  const io::StoredVariable hr = io::read_variable(out, "heating_rate");
  CHECK(io::text_attribute(hr.attributes, "units") == "K day-1");
  const io::StoredVariable uv = io::read_variable(out, "uv_index");
  CHECK(io::text_attribute(uv.attributes, "caution").find("not medical advice") != std::string::npos);
  // The default spectrum is ASTM E490 (not an approximation): no "indicative" flag; the Planck
  // approximation, asked for, gets it.
  CHECK(uv.attributes.count("quality") == 0);
  {
    experiment::Experiment ep = e;
    ep.solar = experiment::SolarChoice::planck;
    const fs::path out_p = scratch("demo_planck.h5");
    io::write_result_file(out_p, ep, experiment::run_experiment(ep));
    const io::StoredVariable uvp = io::read_variable(out_p, "uv_index");
    CHECK(io::text_attribute(uvp.attributes, "quality").find("indicative") != std::string::npos);
  }
  const io::StoredVariable spec = io::read_variable(out, "spectral_flux_direct_down");
  CHECK(spec.dimensions == std::vector<std::string>{"wavelength", "level"});
  // Every numeric variable has units and long_name.
  for (const std::string& name : io::list_datasets(out)) {
    const io::StoredVariable v = io::read_variable(out, name);
    INFO(name);
    // nv (the two edges of a bounds cell) is a dimension without values.
    if (v.texts.empty() && name != "nv") {
      CHECK(v.attributes.count("units") == 1);
      CHECK(v.attributes.count("long_name") == 1);
    }
  }
  const auto g = io::read_global_attributes(out);
  CHECK(io::text_attribute(g, "experiment") == e.text);
  CHECK(io::text_attribute(g, "source").find("solstrata") != std::string::npos);
  // ncdump (netcdf-bin, installed by scripts/setup) opens it as netCDF-4.
  const std::string cmd = "ncdump -h '" + out.string() + "' > '" + out.string() + ".cdl' 2>&1";
  if (std::system("command -v ncdump > /dev/null 2>&1") == 0) {
    CHECK(std::system(cmd.c_str()) == 0);
  } else {
    WARN("ncdump not installed; netCDF check skipped");
  }
}

TEST_CASE("given optics run exactly the layers given", "[experiment]") {
  // One conservative layer over a black surface: reflected + transmitted = incident (exact
  // conservation), and the direct beam is Beer-Lambert of the given optical depth.
  const std::string text = R"(
given_optics:
  solar_irradiance_w_m2: 1000
  layers:
    - {optical_depth: 0.5, single_scattering_albedo: 1.0, asymmetry_parameter: 0.6}
sun: {solar_zenith_deg: 60}
surface: {albedo: 0}
)";
  const experiment::Experiment e = experiment::parse_experiment(text, "given.yaml", ".");
  const experiment::RunResult r = experiment::run_experiment(e);
  CHECK(r.toa_down == Approx(500.0).epsilon(1e-14));
  CHECK(r.direct_down[1] == Approx(500.0 * std::exp(-0.5 / 0.5)).epsilon(1e-13));
  CHECK(r.diffuse_up[0] + r.direct_down[1] + r.diffuse_down[1] == Approx(500.0).epsilon(1e-12));
  CHECK(r.heating_rate.empty());
  CHECK_FALSE(r.has_spectral_products);
}

TEST_CASE("Rayleigh-only transmittance of the direct beam at 550 nm is Beer-Lambert of tau_R", "[experiment]") {
  // One narrow bin at 550 nm, no ozone, no other gas, no aerosol: direct transmittance = exp(-tau_R / mu0)
  // (exact for the unscattered beam); tau_R at sea level ~0.0971 (Bodhaine et al. 1999 eq. 30,
  // via shared/checkvalues.md section 1, for 1013.25 hPa, 45 deg, 360 ppm).
  const std::string text = R"(
atmosphere: {ozone: false, co2_ppmv: 360, latitude_deg: 45, surface_pressure_hpa: 1013.25, absorbers: {h2o: none, o2: none}}
spectrum:
  bins: [{from_nm: 549.5, to_nm: 550.5, step_nm: 1}]
  bands: [{name: green, from_nm: 549.5, to_nm: 550.5}]
sun: {solar_zenith_deg: 40, beam_geometry: plane_parallel}
surface: {albedo: 0}
)";
  const experiment::Experiment e = experiment::parse_experiment(text, "rayleigh.yaml", ".");
  const experiment::RunResult r = experiment::run_experiment(e);
  REQUIRE(r.band_tau_rayleigh.size() == 1);
  const double tau = r.band_tau_rayleigh[0];
  CHECK(tau == Approx(0.09707).epsilon(0.01));
  CHECK(r.transmittance_direct == Approx(std::exp(-tau / r.mu0)).epsilon(1e-12));
  // Doubling the surface pressure doubles the Rayleigh optical depth (shared/checkvalues.md
  // section 4, exact for a column scaled in mass); here: halving it halves tau_R.
  std::string half = text;
  half.replace(half.find("1013.25"), 7, "506.625");
  const experiment::RunResult r2 = experiment::run_experiment(experiment::parse_experiment(half, "rayleigh2.yaml", "."));
  CHECK(r2.band_tau_rayleigh[0] == Approx(tau / 2).epsilon(1e-9));
}

TEST_CASE("the reference solver can be chosen in an experiment and agrees with two-stream closely", "[experiment]") {
  // A conservative given-optics layer: the multi-stream reference conserves energy (exact limit),
  // and delta-Eddington stays within a few per cent of it for a thin hazy layer at mid sun
  // (checkvalues.md section 2: within about 0.03 absolute for tau <= 4).
  const std::string text = R"(
given_optics:
  solar_irradiance_w_m2: 1000
  layers:
    - {optical_depth: 0.8, single_scattering_albedo: 1.0, asymmetry_parameter: 0.7}
sun: {solar_zenith_deg: 45}
surface: {albedo: 0}
solver: {method: reference, streams: 16}
)";
  experiment::Experiment e = experiment::parse_experiment(text, "ref.yaml", ".");
  REQUIRE(e.reference_solver);
  const experiment::RunResult ref = experiment::run_experiment(e);
  const double incident = ref.toa_down;
  CHECK(ref.diffuse_up[0] + ref.direct_down[1] + ref.diffuse_down[1] == Approx(incident).epsilon(1e-10));
  e.reference_solver = false;
  const experiment::RunResult ts = experiment::run_experiment(e);
  CHECK(std::abs(ts.diffuse_up[0] - ref.diffuse_up[0]) / incident < 0.03);
  CHECK(ts.direct_down[1] == Approx(ref.direct_down[1]).epsilon(1e-12));
  CHECK(ref.closure.find("reference") != std::string::npos);
  // Odd stream counts are refused.
  std::string odd = text;
  odd.replace(odd.find("streams: 16"), 11, "streams: 15");
  CHECK_THROWS_AS(experiment::parse_experiment(odd, "odd.yaml", "."), experiment::InputError);
}

TEST_CASE("the pseudo-spherical beam follows the spherical-shell slant path and matters only at low sun", "[experiment]") {
  // Direct transmittance of a gas-free Rayleigh column = exp(-sum tau_l m_l) with the layer slant
  // factors of sun::layer_slant_factors (Beer-Lambert along the slant path; exact). At overhead
  // sun both geometries are the same; near the horizon the curved shell shortens the path
  // (Kasten & Young 1989: air mass 10.3 at 85 deg against 1/cos = 11.5).
  const auto run = [](const char* zenith, const char* geometry) {
    const std::string text = std::string("atmosphere: {ozone: false, absorbers: {h2o: none, o2: none}}\n") +
                             "spectrum:\n  bins: [{from_nm: 549.5, to_nm: 550.5, step_nm: 1}]\n"
                             "  bands: [{name: green, from_nm: 549.5, to_nm: 550.5}]\n"
                             "sun: {solar_zenith_deg: " + zenith + ", beam_geometry: " + geometry + "}\nsurface: {albedo: 0}\n";
    return experiment::run_experiment(experiment::parse_experiment(text, "sph.yaml", "."));
  };
  const experiment::RunResult pp0 = run("0", "plane_parallel"), sp0 = run("0", "spherical");
  CHECK(sp0.transmittance_direct == Approx(pp0.transmittance_direct).epsilon(1e-12));
  const experiment::RunResult pp = run("85", "plane_parallel"), sp = run("85", "spherical");
  const double tau = sp.band_tau_rayleigh[0];
  CHECK(pp.transmittance_direct == Approx(std::exp(-tau / std::cos(85 * M_PI / 180))).epsilon(1e-10));
  CHECK(sp.transmittance_direct > 1.05 * pp.transmittance_direct);
  // The effective air mass -ln(T)/tau lies between the geometric shell value and 1/cos.
  const double m = -std::log(sp.transmittance_direct) / tau;
  CHECK(m > 9.5);
  CHECK(m < 11.0);
}
