// CF metadata of the output files, checked against the CF standard name table, Debian's udunits2,
// ncdump and xarray: standard names, units, coordinate and bounds variables, per-nm spectra.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <map>
#include <set>
#include <string>
#include <variant>

#include "experiment/output_variables.hpp"
#include "experiment/run.hpp"
#include "io/hdf5_reader.hpp"
#include "io/result_fields.hpp"
#include "io/result_file.hpp"
#include "support/temp_dir.hpp"

using namespace solstrata;

namespace {

/// The standard_name each variable must carry ("" = none: CF has no name for it, or the name
/// could not be verified) and the table's canonical units for it. Every name was read in the CF
/// standard name table, version 83 (cf-convention.github.io, Data/cf-standard-names/83/src/
/// cf-standard-name-table.xml; air_pressure and altitude also in version 57). The clear-sky forms
/// are used where the table has one, as the model atmosphere has no clouds; version 83 has no
/// clear-sky form of direct_downwelling_shortwave_flux_in_air, of surface_direct_along_beam_...
/// (DNI), of the PAR fluxes, of toa_incoming_shortwave_flux or of
/// atmosphere_net_rate_of_absorption_of_shortwave_energy, and no
/// surface_direct_downwelling_shortwave_flux_in_air_assuming_clear_sky. Not verified in the
/// table, so written without a standard name: net_downward_shortwave_flux_in_air(_assuming_clear_sky)
/// and downwelling_radiative_flux_per_unit_wavelength_in_air.
struct Expected {
  const char* standard_name;
  const char* canonical_units;
};
const std::map<std::string, Expected> kExpected = {
    {"level", {"air_pressure", "Pa"}},
    {"layer", {"air_pressure", "Pa"}},
    {"layer_bounds", {"", ""}},
    {"band", {"", ""}},
    {"nv", {"", ""}},
    {"wavelength", {"radiation_wavelength", "m"}},
    {"wavelength_bounds", {"", ""}},
    {"band_name", {"", ""}},
    {"band_lower", {"", ""}},
    {"band_upper", {"", ""}},
    {"band_center", {"radiation_wavelength", "m"}},
    {"band_bounds", {"", ""}},
    {"level_pressure", {"air_pressure", "Pa"}},
    {"level_altitude", {"altitude", "m"}},
    {"flux_direct_down", {"direct_downwelling_shortwave_flux_in_air", "W m-2"}},
    {"flux_diffuse_down", {"diffuse_downwelling_shortwave_flux_in_air_assuming_clear_sky", "W m-2"}},
    {"flux_up", {"upwelling_shortwave_flux_in_air_assuming_clear_sky", "W m-2"}},
    {"flux_net_down", {"", ""}},
    {"band_flux_direct_down", {"", ""}},
    {"band_flux_diffuse_down", {"", ""}},
    {"band_flux_up", {"", ""}},
    {"band_flux_net_down", {"", ""}},
    {"absorbed", {"", ""}},
    {"band_absorbed", {"", ""}},
    {"heating_rate", {"tendency_of_air_temperature_due_to_shortwave_heating_assuming_clear_sky", "K s-1"}},
    {"band_transmittance_direct", {"", ""}},
    {"band_transmittance_diffuse", {"", ""}},
    {"band_transmittance_total", {"", ""}},
    {"band_planetary_albedo", {"", ""}},
    {"band_optical_depth_rayleigh", {"", ""}},
    {"band_optical_depth_ozone", {"", ""}},
    {"band_optical_depth_aerosol", {"atmosphere_optical_thickness_due_to_ambient_aerosol_particles", "1"}},
    {"transmittance_direct", {"", ""}},
    {"transmittance_diffuse", {"", ""}},
    {"transmittance_total", {"", ""}},
    {"planetary_albedo", {"", ""}},
    {"surface_reflectance", {"surface_albedo", "1"}},
    {"toa_flux_down", {"toa_incoming_shortwave_flux", "W m-2"}},
    {"toa_flux_up", {"toa_outgoing_shortwave_flux_assuming_clear_sky", "W m-2"}},
    {"absorbed_atmosphere", {"atmosphere_net_rate_of_absorption_of_shortwave_energy", "W m-2"}},
    {"absorbed_surface", {"surface_net_downward_shortwave_flux_assuming_clear_sky", "W m-2"}},
    {"direct_normal_irradiance", {"surface_direct_along_beam_shortwave_flux_in_air", "W m-2"}},
    {"diffuse_horizontal_irradiance", {"surface_diffuse_downwelling_shortwave_flux_in_air_assuming_clear_sky", "W m-2"}},
    {"global_horizontal_irradiance", {"surface_downwelling_shortwave_flux_in_air_assuming_clear_sky", "W m-2"}},
    {"par_energy", {"surface_downwelling_photosynthetic_radiative_flux_in_air", "W m-2"}},
    {"par_photon", {"surface_downwelling_photosynthetic_photon_flux_in_air", "mol m-2 s-1"}},
    {"uv_index", {"ultraviolet_index_assuming_clear_sky", "1"}},
    {"layer_precipitable_water", {"", ""}},
    {"precipitable_water", {"lwe_thickness_of_atmosphere_mass_content_of_water_vapor", "m"}},
    {"solar_zenith_angle", {"solar_zenith_angle", "degree"}},
    {"cos_solar_zenith", {"", ""}},
    {"earth_sun_factor", {"", ""}},
    {"toa_normal_irradiance", {"", ""}},
    {"bin_lower", {"", ""}},
    {"bin_upper", {"", ""}},
    {"bin_width", {"", ""}},
    {"bin_toa_normal_irradiance", {"", ""}},
    {"spectral_flux_direct_down", {"", ""}},
    {"spectral_flux_diffuse_down", {"", ""}},
    {"spectral_flux_up", {"upwelling_radiative_flux_per_unit_wavelength_in_air", "W m-2 m-1"}},
    // With a site and a time (and a tilted plane). CF has no names for fluxes on tilted planes.
    {"solar_azimuth_angle", {"solar_azimuth_angle", "degree"}},
    {"sun_above_horizon", {"", ""}},
    {"plane_beam_irradiance", {"", ""}},
    {"plane_sky_diffuse_irradiance", {"", ""}},
    {"plane_ground_reflected_irradiance", {"", ""}},
    {"plane_global_irradiance", {"", ""}},
    {"angle_of_incidence", {"", ""}},
    {"plane_ground_albedo", {"", ""}},
};

/// A run with every optional output: aerosol, gases, pressures, spectral bins.
struct SpectralRun {
  experiment::Experiment e = experiment::parse_experiment(
      "aerosol: {type: urban_haze, optical_depth: 0.2}\nsite: {latitude_deg: 47.3, longitude_deg: 8.6}\n"
      "sun: {time: \"2026-06-18T10:00:00+02:00\"}\nplane_of_array: {tilt_deg: 30}\noutput: {spectral: true}\n",
      "cf.yaml", ".");
  experiment::RunResult r = experiment::run_experiment(e);
};
const SpectralRun& spectral_run() {
  static const SpectralRun run;
  return run;
}

std::string quoted(const std::string& s) { return "'" + s + "'"; }

/// Whether udunits2 (Debian udunits-bin) can be used; in CI (CI set) it must be there.
bool have_udunits() {
  if (testing::have_program("udunits2")) return true;
  if (std::getenv("CI") != nullptr) FAIL("udunits2 not found in CI (scripts/setup installs udunits-bin)");
  WARN("udunits2 not found (Debian package udunits-bin): the units check is skipped");
  return false;
}

}  // namespace

TEST_CASE("every variable carries the standard name verified in the CF standard name table", "[io][cf]") {
  testing::TempDir d("cf_names");
  const auto& run = spectral_run();
  io::write_result_file(d / "cf.h5", run.e, run.r);
  const std::vector<std::string> names = io::list_datasets(d / "cf.h5");
  std::set<std::string> seen;
  for (const std::string& name : names) {
    INFO(name);
    const auto it = kExpected.find(name);
    // A new variable needs its line in kExpected, with the name looked up in the CF table.
    REQUIRE(it != kExpected.end());
    seen.insert(name);
    if (name == "nv") continue;  // a dimension without values, no attributes
    const io::StoredVariable v = io::read_variable(d / "cf.h5", name);
    const std::string expected = it->second.standard_name;
    if (expected.empty()) {
      CHECK(v.attributes.count("standard_name") == 0);
    } else {
      REQUIRE(v.attributes.count("standard_name") == 1);
      CHECK(io::text_attribute(v.attributes, "standard_name") == expected);
    }
  }
  // The run has every optional output, so every listed variable is in the file.
  for (const auto& [name, x] : kExpected) {
    INFO(name);
    CHECK(seen.count(name) == 1);
  }
}

TEST_CASE("every units string of the files parses with udunits2 and converts to the CF canonical units",
          "[io][cf]") {
  if (!have_udunits()) return;
  testing::TempDir d("cf_units");
  const auto& run = spectral_run();
  io::write_result_file(d / "cf.h5", run.e, run.r);
  std::set<std::string> units;
  for (const std::string& name : io::list_datasets(d / "cf.h5")) {
    if (name == "nv") continue;
    const io::StoredVariable v = io::read_variable(d / "cf.h5", name);
    if (v.attributes.count("units") == 0) continue;
    const std::string u = io::text_attribute(v.attributes, "units");
    units.insert(u);
    const auto it = kExpected.find(name);
    if (it == kExpected.end() || std::string(it->second.canonical_units).empty()) continue;
    INFO(name << ": " << u << " -> " << it->second.canonical_units);
    // udunits2 -H HAVE -W WANT exits 1 when a unit is unknown or the two do not convert.
    const auto c = testing::run_command("udunits2 -H " + quoted(u) + " -W " + quoted(it->second.canonical_units) + " </dev/null");
    CHECK(c.status == 0);
  }
  // The units the sweep writer adds: swept parameters (by key suffix) and the scenario flag.
  for (const char* u : {"degree", "nm", "hPa", "km", "DU", "ppmv", "W m-2", "1"}) units.insert(u);
  // And the time-series writer: the CF time axis, site coordinates and daily totals.
  for (const char* u : {"seconds since 1970-01-01 00:00:00", "degrees_north", "degrees_east", "m", "MJ m-2 day-1",
                        "mol m-2 day-1", "h"})
    units.insert(u);
  REQUIRE(units.size() > 8);
  for (const std::string& u : units) {
    INFO("units " << u);
    const auto c = testing::run_command("udunits2 -H " + quoted(u) + " -W '' </dev/null");
    CHECK(c.status == 0);
    CHECK(c.output.find("Don't recognize") == std::string::npos);
  }
  // The check can fail: a unit udunits2 does not know is rejected.
  CHECK(testing::run_command("udunits2 -H 'W m-2 per_bin' -W '' </dev/null").status != 0);
}

TEST_CASE("level, layer and band are coordinate variables, with CF bounds for layers, bins and bands", "[io][cf]") {
  testing::TempDir d("cf_coords");
  const auto& run = spectral_run();
  const experiment::RunResult& r = run.r;
  io::write_result_file(d / "cf.h5", run.e, r);
  const auto level = io::read_variable(d / "cf.h5", "level");
  CHECK(level.values == r.level_pressure_hpa);
  CHECK(io::text_attribute(level.attributes, "positive") == "down");
  const auto layer = io::read_variable(d / "cf.h5", "layer");
  const auto lb = io::read_variable(d / "cf.h5", "layer_bounds");
  REQUIRE(layer.values.size() == r.n_layers);
  REQUIRE(lb.shape == std::vector<std::size_t>{r.n_layers, 2});
  CHECK(io::text_attribute(layer.attributes, "bounds") == "layer_bounds");
  for (std::size_t l = 0; l < r.n_layers; ++l) {
    // Each layer lies between its two levels, its coordinate in the middle.
    CHECK(lb.values[2 * l] == r.level_pressure_hpa[l]);
    CHECK(lb.values[2 * l + 1] == r.level_pressure_hpa[l + 1]);
    CHECK(layer.values[l] == Approx(0.5 * (lb.values[2 * l] + lb.values[2 * l + 1])).epsilon(1e-15));
  }
  CHECK(io::read_variable(d / "cf.h5", "band").texts == r.band_names);
  const auto wl = io::read_variable(d / "cf.h5", "wavelength");
  const auto wb = io::read_variable(d / "cf.h5", "wavelength_bounds");
  CHECK(io::text_attribute(wl.attributes, "bounds") == "wavelength_bounds");
  REQUIRE(wb.values.size() == 2 * wl.values.size());
  for (std::size_t b = 0; b < wl.values.size(); ++b) {
    CHECK(wb.values[2 * b] == r.bin_lower_nm[b]);
    CHECK(wb.values[2 * b + 1] == r.bin_upper_nm[b]);
    CHECK(wb.values[2 * b] < wl.values[b]);
    CHECK(wl.values[b] < wb.values[2 * b + 1]);
    if (b > 0) CHECK(wb.values[2 * b] == wb.values[2 * b - 1]);  // contiguous bins
  }
  const auto bc = io::read_variable(d / "cf.h5", "band_center");
  CHECK(io::text_attribute(bc.attributes, "bounds") == "band_bounds");
  const auto bb = io::read_variable(d / "cf.h5", "band_bounds");
  for (std::size_t b = 0; b < r.n_bands; ++b) {
    CHECK(bb.values[2 * b] == r.band_lower_nm[b]);
    CHECK(bb.values[2 * b + 1] == r.band_upper_nm[b]);
  }
}

TEST_CASE("bands of given optics without wavelengths hold the fill value, not 0", "[io][cf]") {
  const experiment::Experiment e = experiment::parse_experiment(
      "given_optics:\n"
      "  bands:\n"
      "    - name: a\n"
      "      solar_irradiance_w_m2: 500\n"
      "      layers: [{optical_depth: 0.1, single_scattering_albedo: 0.9}]\n"
      "    - name: b\n"
      "      from_nm: 700\n"
      "      to_nm: 900\n"
      "      solar_irradiance_w_m2: 300\n"
      "      layers: [{optical_depth: 0.2, single_scattering_albedo: 0.8}]\n"
      "sun: {solar_zenith_deg: 30}\n",
      "given.yaml", ".");
  testing::TempDir d("cf_fill");
  io::write_result_file(d / "g.h5", e, experiment::run_experiment(e));
  const auto lower = io::read_variable(d / "g.h5", "band_lower");
  REQUIRE(lower.values.size() == 2);
  const double fill = std::get<std::vector<double>>(lower.attributes.at("_FillValue")).at(0);
  // netCDF's default double fill value (netCDF-C netcdf.h NC_FILL_DOUBLE, from memory).
  CHECK(fill == 9.9692099683868690e+36);
  CHECK(lower.values[0] == fill);
  CHECK(lower.values[1] == 700.0);
  CHECK(io::read_variable(d / "g.h5", "band_center").values[0] == fill);
  CHECK(io::read_variable(d / "g.h5", "band_center").values[1] == 800.0);
  // Without pressures, level and layer stay dimensions without coordinate values.
  const auto names = io::list_datasets(d / "g.h5");
  CHECK(std::find(names.begin(), names.end(), "layer_bounds") == names.end());
}

TEST_CASE("spectral fluxes are per nm: times the bin width they sum to the broadband flux", "[io][cf]") {
  testing::TempDir d("cf_per_nm");
  const auto& run = spectral_run();
  const experiment::RunResult& r = run.r;
  io::write_result_file(d / "cf.h5", run.e, r);
  const auto width = io::read_variable(d / "cf.h5", "bin_width");
  const std::size_t nl = r.n_levels, nb = width.values.size();
  REQUIRE(nb == r.bin_lower_nm.size());
  for (const char* pair : {"direct_down", "diffuse_down", "up"}) {
    const std::string spec = std::string("spectral_flux_") + pair;
    const auto s = io::read_variable(d / "cf.h5", spec);
    CHECK(io::text_attribute(s.attributes, "units") == "W m-2 nm-1");
    const auto& bb = std::string(pair) == "direct_down" ? r.direct_down : std::string(pair) == "diffuse_down" ? r.diffuse_down : r.diffuse_up;
    for (std::size_t l : {std::size_t{0}, nl / 2, nl - 1}) {
      double sum = 0.0;
      for (std::size_t b = 0; b < nb; ++b) sum += s.values[b * nl + l] * width.values[b];
      INFO(spec << " level " << l);
      // Energy conservation of the bin sums (run.cpp sums bins into broadband); rounding only.
      CHECK(sum == Approx(bb[l]).epsilon(1e-12).margin(1e-9));
    }
  }
  // Widths are the bins' edges' differences, in nm.
  CHECK(width.values[0] == r.bin_upper_nm[0] - r.bin_lower_nm[0]);
}

TEST_CASE("every selectable variable of a result is in the output.variables catalogue", "[io][cf]") {
  const auto& run = spectral_run();
  // Variables outside the catalogue are always written: coordinates, bounds and the band table.
  const std::set<std::string> always = {"band_name", "band_lower", "band_upper", "band_center", "band_bounds",
                                        "level_pressure", "level_altitude", "wavelength_bounds", "bin_lower",
                                        "bin_upper", "bin_width"};
  for (const io::Field& f : io::result_fields(run.r)) {
    INFO(f.name);
    if (always.count(f.name)) {
      CHECK(experiment::output_group(f.name).empty());
    } else {
      CHECK_FALSE(experiment::output_group(f.name).empty());
    }
  }
}

TEST_CASE("ncdump and xarray open the file with string band and pressure level coordinates", "[io][cf]") {
  testing::TempDir d("cf_readers");
  const auto& run = spectral_run();
  io::write_result_file(d / "cf.h5", run.e, run.r);
  const std::string path = (d / "cf.h5").string();
  if (testing::have_program("ncdump")) {
    const auto h = testing::run_command("ncdump -h " + path);
    REQUIRE(h.status == 0);
    CHECK_THAT(h.output, Catch::Contains("string band(band) ;"));
    CHECK_THAT(h.output, Catch::Contains("double level(level) ;"));
    CHECK_THAT(h.output, Catch::Contains("double layer_bounds(layer, nv) ;"));
    CHECK_THAT(h.output, Catch::Contains("spectral_flux_up:units = \"W m-2 nm-1\" ;"));
  } else {
    WARN("ncdump not found (Debian package netcdf-bin): the netCDF-C check is skipped");
  }
  if (testing::run_command("/usr/bin/python3 -c 'import xarray, h5netcdf' ").status != 0) {
    if (std::getenv("CI") != nullptr) FAIL("xarray or h5netcdf missing in CI (scripts/setup installs python3-xarray python3-h5netcdf)");
    WARN("/usr/bin/python3 has no xarray or h5netcdf (Debian python3-xarray, python3-h5netcdf): the xarray check is skipped");
    return;
  }
  const std::string script = (d / "check.py").string();
  std::ofstream(script) << "import sys, xarray\n"
                           "ds = xarray.open_dataset(sys.argv[1])\n"
                           "assert list(ds['band'].values) == " << [&] {
                             std::string s = "[";
                             for (const auto& n : run.r.band_names) s += "'" + n + "',";
                             return s + "]";
                           }() << ", ds['band'].values\n"
                           "assert 'level' in ds.indexes and 'layer' in ds.indexes and 'band' in ds.indexes\n"
                           "sel = ds['flux_up'].sel(level=ds['level'].values[-1])\n"
                           "assert abs(float(sel) - float(ds['flux_up'][-1])) == 0\n"
                           "assert ds['spectral_flux_up'].attrs['units'] == 'W m-2 nm-1'\n"
                           "print('ok', dict(ds.sizes))\n";
  const auto py = testing::run_command("/usr/bin/python3 " + script + " " + path);
  INFO(py.output);
  CHECK(py.status == 0);
}
