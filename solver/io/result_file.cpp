#include "io/result_file.hpp"

#include <chrono>
#include <ctime>
#include <vector>

#include "io/csv_writer.hpp"
#include "io/hdf5_writer.hpp"
#include "version.hpp"

namespace solstrata::io {
namespace {

using experiment::RunResult;

std::vector<double> band_centers(const RunResult& r) {
  std::vector<double> c(r.n_bands);
  for (std::size_t b = 0; b < r.n_bands; ++b) c[b] = 0.5 * (r.band_lower_nm[b] + r.band_upper_nm[b]);
  return c;
}

}  // namespace

std::string iso_timestamp_utc() {
  const std::time_t t = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buf;
}

void write_result_file(const std::filesystem::path& path, const experiment::Experiment& e,
                       const RunResult& r) {
  Hdf5Writer w(path);
  const std::string levcoords = r.level_pressure_hpa.empty() ? "" : "level_pressure";
  // Dimensions and coordinates.
  w.add_dimension("level", r.n_levels);
  w.add_dimension("layer", r.n_layers);
  w.add_dimension("band", r.n_bands);
  if (!r.level_pressure_hpa.empty()) {
    w.write("level_pressure", {"level"}, r.level_pressure_hpa,
            {"hPa", "air pressure at the level (level 0 = top of atmosphere)", "air_pressure"});
  }
  if (!r.level_altitude_km.empty()) {
    w.write("level_altitude", {"level"}, r.level_altitude_km,
            {"km", "altitude of the level above mean sea level", "altitude"});
  }
  w.write("band_name", {"band"}, std::span<const std::string>(r.band_names), {"", "name of the reporting band", ""});
  w.write("band_lower", {"band"}, r.band_lower_nm, {"nm", "lower wavelength edge of the band (0 = not stated)", ""});
  w.write("band_upper", {"band"}, r.band_upper_nm, {"nm", "upper wavelength edge of the band (0 = not stated)", ""});
  const std::vector<double> centers = band_centers(r);
  w.write("band_center", {"band"}, centers, {"nm", "centre wavelength of the band (0 = not stated)", ""});

  const auto with_coords = [&](const std::string& var, bool per_level) {
    if (per_level && !levcoords.empty()) w.set_attribute(var, "coordinates", levcoords);
  };
  // Broadband level fluxes.
  const struct {
    const char* name;
    const std::vector<double>* v;
    const char* long_name;
    const char* standard_name;
  } level_vars[] = {
      {"flux_direct_down", &r.direct_down, "broadband direct (unscattered) downward flux on a horizontal surface", "direct_downwelling_shortwave_flux_in_air"},
      {"flux_diffuse_down", &r.diffuse_down, "broadband diffuse downward flux", "diffuse_downwelling_shortwave_flux_in_air"},
      {"flux_up", &r.diffuse_up, "broadband upward flux", "upwelling_shortwave_flux_in_air"},
      {"flux_net_down", &r.net_down, "broadband net downward flux (down minus up)", "net_downward_shortwave_flux_in_air"},
  };
  for (const auto& v : level_vars) {
    w.write(v.name, {"level"}, *v.v, {"W m-2", v.long_name, v.standard_name});
    with_coords(v.name, true);
  }
  const struct {
    const char* name;
    const std::vector<double>* v;
    const char* long_name;
  } band_level_vars[] = {
      {"band_flux_direct_down", &r.band_direct_down, "direct (unscattered) downward flux in the band"},
      {"band_flux_diffuse_down", &r.band_diffuse_down, "diffuse downward flux in the band"},
      {"band_flux_up", &r.band_diffuse_up, "upward flux in the band"},
      {"band_flux_net_down", &r.band_net_down, "net downward flux in the band"},
  };
  for (const auto& v : band_level_vars) {
    w.write(v.name, {"band", "level"}, *v.v, {"W m-2", v.long_name, ""});
    with_coords(v.name, true);
  }
  w.write("absorbed", {"layer"}, r.absorbed, {"W m-2", "broadband flux absorbed in the layer (net-flux divergence)", ""});
  w.write("band_absorbed", {"band", "layer"}, r.band_absorbed, {"W m-2", "flux absorbed in the layer within the band", ""});
  if (!r.heating_rate.empty()) {
    w.write("heating_rate", {"layer"}, r.heating_rate,
            {"K day-1", "shortwave heating rate of the layer, (g/cp) dF_net/dp",
             "tendency_of_air_temperature_due_to_shortwave_heating"});
  }
  // Column quantities.
  const auto scalar = [&](const char* name, double v, const char* units, const char* long_name,
                          const char* standard_name = "") {
    w.write(name, {}, std::span<const double>(&v, 1), {units, long_name, standard_name});
  };
  w.write("band_transmittance_direct", {"band"}, r.band_transmittance_direct, {"1", "direct surface flux / TOA downward flux in the band", ""});
  w.write("band_transmittance_diffuse", {"band"}, r.band_transmittance_diffuse, {"1", "diffuse surface flux / TOA downward flux in the band", ""});
  w.write("band_transmittance_total", {"band"}, r.band_transmittance_total, {"1", "global surface flux / TOA downward flux in the band", ""});
  w.write("band_planetary_albedo", {"band"}, r.band_planetary_albedo, {"1", "TOA upward flux / TOA downward flux in the band", ""});
  if (!r.band_tau_rayleigh.empty()) {
    w.write("band_optical_depth_rayleigh", {"band"}, r.band_tau_rayleigh, {"1", "column Rayleigh optical depth, TOA-irradiance-weighted mean over the band's bins", ""});
    w.write("band_optical_depth_ozone", {"band"}, r.band_tau_ozone, {"1", "column ozone absorption optical depth, TOA-irradiance-weighted mean over the band's bins", ""});
    w.write("band_optical_depth_aerosol", {"band"}, r.band_tau_aerosol, {"1", "column aerosol optical depth, TOA-irradiance-weighted mean over the band's bins", "atmosphere_optical_thickness_due_to_ambient_aerosol_particles"});
  }
  scalar("transmittance_direct", r.transmittance_direct, "1", "broadband direct surface flux / TOA downward flux");
  scalar("transmittance_diffuse", r.transmittance_diffuse, "1", "broadband diffuse surface flux / TOA downward flux");
  scalar("transmittance_total", r.transmittance_total, "1", "broadband global surface flux / TOA downward flux");
  scalar("planetary_albedo", r.planetary_albedo, "1", "broadband TOA upward flux / TOA downward flux");
  scalar("surface_reflectance", r.surface_reflectance, "1", "broadband surface upward flux / surface downward flux");
  scalar("toa_flux_down", r.toa_down, "W m-2", "broadband downward flux at the top of the atmosphere", "toa_incoming_shortwave_flux");
  scalar("toa_flux_up", r.toa_up, "W m-2", "broadband upward flux at the top of the atmosphere", "toa_outgoing_shortwave_flux");
  scalar("absorbed_atmosphere", r.absorbed_atmosphere, "W m-2", "broadband flux absorbed by the whole atmosphere");
  scalar("absorbed_surface", r.absorbed_surface, "W m-2", "broadband flux absorbed by the surface (net downward at the surface)", "surface_net_downward_shortwave_flux");
  scalar("direct_normal_irradiance", r.direct_normal, "W m-2", "direct-normal irradiance (DNI) at the surface");
  scalar("diffuse_horizontal_irradiance", r.diffuse_horizontal, "W m-2", "diffuse horizontal irradiance (DHI) at the surface", "surface_diffuse_downwelling_shortwave_flux_in_air");
  scalar("global_horizontal_irradiance", r.global_horizontal, "W m-2", "global horizontal irradiance (GHI) at the surface", "surface_downwelling_shortwave_flux_in_air");
  w.set_attribute("direct_normal_irradiance", "caution", experiment::kSolarCaution);
  w.set_attribute("global_horizontal_irradiance", "caution", experiment::kSolarCaution);
  if (r.has_spectral_products) {
    scalar("par_energy", r.par_w_m2, "W m-2", "photosynthetically active radiation (400-700 nm) at the surface, energy flux",
           "surface_downwelling_photosynthetic_radiative_flux_in_air");
    scalar("par_photon", r.par_umol_m2_s, "umol m-2 s-1", "photosynthetically active radiation (400-700 nm) at the surface, photon flux",
           "surface_downwelling_photosynthetic_photon_flux_in_air");
    w.set_attribute("par_photon", "conversion", "per bin, energy x mean wavelength / (h c N_A) (McCree 1972; SI 2019 constants)");
    scalar("uv_index", r.uv_index, "1", "UV index at the surface: 40 m2 W-1 x CIE erythemally weighted irradiance");
    w.set_attribute("uv_index", "action_spectrum", "CIE erythema reference action spectrum, ISO 17166:1999 / CIE S 007/E:1998");
    w.set_attribute("uv_index", "caution", experiment::kUvCaution);
    if (r.solar_approximate) {
      w.set_attribute("uv_index", "quality", "indicative: computed with the built-in approximate solar spectrum");
    }
  }
  scalar("solar_zenith_angle", r.solar_zenith_deg, "degree", "solar zenith angle", "solar_zenith_angle");
  scalar("cos_solar_zenith", r.mu0, "1", "cosine of the solar zenith angle");
  scalar("earth_sun_factor", r.earth_sun_factor, "1", "(mean Earth-Sun distance / distance)^2 applied to the TOA irradiance");
  scalar("toa_normal_irradiance", r.toa_normal_w_m2, "W m-2", "TOA solar irradiance normal to the beam, all bins");

  if (!r.bin_direct_down.empty()) {
    w.add_coordinate("wavelength", r.bin_center_nm, {"nm", "centre wavelength of the spectral bin", "radiation_wavelength"});
    w.write("bin_lower", {"wavelength"}, r.bin_lower_nm, {"nm", "lower edge of the spectral bin", ""});
    w.write("bin_upper", {"wavelength"}, r.bin_upper_nm, {"nm", "upper edge of the spectral bin", ""});
    w.write("bin_toa_normal_irradiance", {"wavelength"}, r.bin_toa_normal, {"W m-2", "TOA solar irradiance normal to the beam, integrated over the bin", ""});
    w.write("spectral_flux_direct_down", {"wavelength", "level"}, r.bin_direct_down, {"W m-2", "direct downward flux integrated over the bin", ""});
    w.write("spectral_flux_diffuse_down", {"wavelength", "level"}, r.bin_diffuse_down, {"W m-2", "diffuse downward flux integrated over the bin", ""});
    w.write("spectral_flux_up", {"wavelength", "level"}, r.bin_diffuse_up, {"W m-2", "upward flux integrated over the bin", ""});
    for (const char* v : {"spectral_flux_direct_down", "spectral_flux_diffuse_down", "spectral_flux_up"}) with_coords(v, true);
  }

  // Provenance and notes.
  w.set_attribute("", "Conventions", "CF-1.8");
  w.set_attribute("", "title", e.title.empty() ? std::string("solstrata run of ") + e.source.string() : e.title);
  w.set_attribute("", "source", std::string("solstrata ") + kVersion + ", plane-parallel two-stream shortwave radiative transfer");
  w.set_attribute("", "history", iso_timestamp_utc() + " created by solstrata " + kVersion + " from " + e.source.string());
  w.set_attribute("", "experiment_file", e.source.string());
  w.set_attribute("", "experiment", e.text);
  w.set_attribute("", "closure", r.closure);
  w.set_attribute("", "atmosphere_profile", e.given_optics_mode ? std::string("given_optics") : e.profile_origin);
  w.set_attribute("", "solar_spectrum", r.solar_description);
  w.set_attribute("", "solar_spectrum_approximate", r.solar_approximate ? 1 : 0);
  w.set_attribute("", "direct_beam_convention",
                  "direct = unscattered beam exp(-tau/mu0) of the unscaled optical depth; diffuse down = total down - direct "
                  "(forward scattering folded into the beam by delta scaling counts as diffuse)");
  w.set_attribute("", "caution", std::string(experiment::kSolarCaution) + " " + experiment::kUvCaution);
  w.commit();
}

void write_summary_csv(const std::filesystem::path& path, const RunResult& r) {
  CsvTable t({"band", "lower_nm", "upper_nm", "toa_down_W_m-2", "surface_direct_W_m-2",
              "surface_diffuse_W_m-2", "surface_global_W_m-2", "transmittance", "absorbed_atmosphere_W_m-2",
              "toa_up_W_m-2"});
  const std::size_t n = r.n_levels, s = n - 1;
  for (std::size_t b = 0; b <= r.n_bands; ++b) {
    const bool bb = b == r.n_bands;
    const auto at = [&](const std::vector<double>& band_v, const std::vector<double>& v, std::size_t lev) {
      return bb ? v[lev] : band_v[b * n + lev];
    };
    const double top = at(r.band_direct_down, r.direct_down, 0) + at(r.band_diffuse_down, r.diffuse_down, 0);
    const double dir = at(r.band_direct_down, r.direct_down, s), dif = at(r.band_diffuse_down, r.diffuse_down, s);
    const double net_top = at(r.band_net_down, r.net_down, 0), net_sfc = at(r.band_net_down, r.net_down, s);
    t.add_row({bb ? std::string("broadband") : r.band_names[b],
               csv_number(bb ? (r.bin_lower_nm.empty() ? 0.0 : r.bin_lower_nm.front()) : r.band_lower_nm[b]),
               csv_number(bb ? (r.bin_upper_nm.empty() ? 0.0 : r.bin_upper_nm.back()) : r.band_upper_nm[b]),
               csv_number(top), csv_number(dir), csv_number(dif), csv_number(dir + dif),
               csv_number(top > 0 ? (dir + dif) / top : 0.0), csv_number(net_top - net_sfc),
               csv_number(at(r.band_diffuse_up, r.diffuse_up, 0))});
  }
  t.write(path);
}

}  // namespace solstrata::io
