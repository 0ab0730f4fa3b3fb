#include "io/result_fields.hpp"

#include "sun/tilted_plane.hpp"

namespace solstrata::io {

ResultDims result_dims(const experiment::RunResult& r) {
  return {r.n_levels, r.n_layers, r.n_bands, r.bin_direct_down.empty() ? 0 : r.bin_center_nm.size()};
}

std::vector<Field> result_fields(const experiment::RunResult& r) {
  using experiment::kSolarCaution;
  using experiment::kUvCaution;
  std::vector<Field> f;
  const auto add = [&](std::string name, std::vector<std::string> dims, std::vector<double> v, std::string units,
                       std::string long_name, std::string standard_name = "") -> Field& {
    Field x;
    x.name = std::move(name);
    x.dims = std::move(dims);
    x.values = std::move(v);
    x.units = std::move(units);
    x.long_name = std::move(long_name);
    x.standard_name = std::move(standard_name);
    x.on_levels = !x.dims.empty() && x.dims.back() == "level" && !r.level_pressure_hpa.empty();
    f.push_back(std::move(x));
    return f.back();
  };
  const auto scalar = [&](std::string name, double v, std::string units, std::string long_name,
                          std::string standard_name = "") -> Field& {
    return add(std::move(name), {}, {v}, std::move(units), std::move(long_name), std::move(standard_name));
  };

  // Band table (the same for every scenario).
  {
    Field names;
    names.name = "band_name";
    names.dims = {"band"};
    names.texts = r.band_names;
    names.long_name = "name of the reporting band";
    names.per_scenario = false;
    f.push_back(std::move(names));
    // A band without stated edges (given optics) holds the fill value, never a made-up 0.
    std::vector<double> lower(r.n_bands), upper(r.n_bands), centers(r.n_bands), bounds(2 * r.n_bands);
    for (std::size_t b = 0; b < r.n_bands; ++b) {
      const bool stated = r.band_upper_nm[b] > r.band_lower_nm[b] && r.band_lower_nm[b] > 0.0;
      lower[b] = stated ? r.band_lower_nm[b] : kFillValue;
      upper[b] = stated ? r.band_upper_nm[b] : kFillValue;
      centers[b] = stated ? 0.5 * (r.band_lower_nm[b] + r.band_upper_nm[b]) : kFillValue;
      bounds[2 * b] = lower[b];
      bounds[2 * b + 1] = upper[b];
    }
    const auto table = [](Field& x) -> Field& {
      x.per_scenario = false;
      x.has_fill = true;
      return x;
    };
    table(add("band_lower", {"band"}, lower, "nm", "lower wavelength edge of the band (fill value = not stated)"));
    table(add("band_upper", {"band"}, upper, "nm", "upper wavelength edge of the band (fill value = not stated)"));
    Field& center = table(add("band_center", {"band"}, centers, "nm", "centre wavelength of the band (fill value = not stated)",
                              "radiation_wavelength"));
    center.notes = {{"bounds", "band_bounds"}};
    table(add("band_bounds", {"band", "nv"}, bounds, "nm", "wavelength edges of the band (fill value = not stated)"));
  }
  if (!r.level_pressure_hpa.empty()) {
    add("level_pressure", {"level"}, r.level_pressure_hpa, "hPa", "air pressure at the level (level 0 = top of atmosphere)", "air_pressure").on_levels = false;
  }
  if (!r.level_altitude_km.empty()) {
    add("level_altitude", {"level"}, r.level_altitude_km, "km", "altitude of the level above mean sea level", "altitude").on_levels = false;
  }

  // Standard names: CF standard name table version 83, the _assuming_clear_sky form wherever the
  // table has one (the model atmosphere has no clouds); tests/io/cf_metadata_test.cpp lists them.
  add("flux_direct_down", {"level"}, r.direct_down, "W m-2", "broadband direct (unscattered) downward flux on a horizontal surface", "direct_downwelling_shortwave_flux_in_air");
  add("flux_diffuse_down", {"level"}, r.diffuse_down, "W m-2", "broadband diffuse downward flux", "diffuse_downwelling_shortwave_flux_in_air_assuming_clear_sky");
  add("flux_up", {"level"}, r.diffuse_up, "W m-2", "broadband upward flux", "upwelling_shortwave_flux_in_air_assuming_clear_sky");
  add("flux_net_down", {"level"}, r.net_down, "W m-2", "broadband net downward flux (down minus up)");
  add("band_flux_direct_down", {"band", "level"}, r.band_direct_down, "W m-2", "direct (unscattered) downward flux in the band");
  add("band_flux_diffuse_down", {"band", "level"}, r.band_diffuse_down, "W m-2", "diffuse downward flux in the band");
  add("band_flux_up", {"band", "level"}, r.band_diffuse_up, "W m-2", "upward flux in the band");
  add("band_flux_net_down", {"band", "level"}, r.band_net_down, "W m-2", "net downward flux in the band");
  add("absorbed", {"layer"}, r.absorbed, "W m-2", "broadband flux absorbed in the layer (net-flux divergence)");
  add("band_absorbed", {"band", "layer"}, r.band_absorbed, "W m-2", "flux absorbed in the layer within the band");
  if (!r.heating_rate.empty()) {
    add("heating_rate", {"layer"}, r.heating_rate, "K day-1", "shortwave heating rate of the layer, (g/cp) dF_net/dp",
        "tendency_of_air_temperature_due_to_shortwave_heating_assuming_clear_sky");
  }
  add("band_transmittance_direct", {"band"}, r.band_transmittance_direct, "1", "direct surface flux / TOA downward flux in the band");
  add("band_transmittance_diffuse", {"band"}, r.band_transmittance_diffuse, "1", "diffuse surface flux / TOA downward flux in the band");
  add("band_transmittance_total", {"band"}, r.band_transmittance_total, "1", "global surface flux / TOA downward flux in the band");
  add("band_planetary_albedo", {"band"}, r.band_planetary_albedo, "1", "TOA upward flux / TOA downward flux in the band");
  if (!r.band_tau_rayleigh.empty()) {
    add("band_optical_depth_rayleigh", {"band"}, r.band_tau_rayleigh, "1", "column Rayleigh optical depth, TOA-irradiance-weighted mean over the band's bins");
    add("band_optical_depth_ozone", {"band"}, r.band_tau_ozone, "1", "column ozone absorption optical depth, TOA-irradiance-weighted mean over the band's bins");
    add("band_optical_depth_aerosol", {"band"}, r.band_tau_aerosol, "1", "column aerosol optical depth, TOA-irradiance-weighted mean over the band's bins",
        "atmosphere_optical_thickness_due_to_ambient_aerosol_particles");
  }
  scalar("transmittance_direct", r.transmittance_direct, "1", "broadband direct surface flux / TOA downward flux");
  scalar("transmittance_diffuse", r.transmittance_diffuse, "1", "broadband diffuse surface flux / TOA downward flux");
  scalar("transmittance_total", r.transmittance_total, "1", "broadband global surface flux / TOA downward flux");
  scalar("planetary_albedo", r.planetary_albedo, "1", "broadband TOA upward flux / TOA downward flux");
  scalar("surface_reflectance", r.surface_reflectance, "1", "broadband surface upward flux / surface downward flux", "surface_albedo");
  scalar("toa_flux_down", r.toa_down, "W m-2", "broadband downward flux at the top of the atmosphere", "toa_incoming_shortwave_flux");
  scalar("toa_flux_up", r.toa_up, "W m-2", "broadband upward flux at the top of the atmosphere", "toa_outgoing_shortwave_flux_assuming_clear_sky");
  scalar("absorbed_atmosphere", r.absorbed_atmosphere, "W m-2", "broadband flux absorbed by the whole atmosphere", "atmosphere_net_rate_of_absorption_of_shortwave_energy");
  scalar("absorbed_surface", r.absorbed_surface, "W m-2", "broadband flux absorbed by the surface (net downward at the surface)", "surface_net_downward_shortwave_flux_assuming_clear_sky");
  scalar("direct_normal_irradiance", r.direct_normal, "W m-2", "direct-normal irradiance (DNI) at the surface", "surface_direct_along_beam_shortwave_flux_in_air").notes = {{"caution", kSolarCaution}};
  scalar("diffuse_horizontal_irradiance", r.diffuse_horizontal, "W m-2", "diffuse horizontal irradiance (DHI) at the surface", "surface_diffuse_downwelling_shortwave_flux_in_air_assuming_clear_sky");
  scalar("global_horizontal_irradiance", r.global_horizontal, "W m-2", "global horizontal irradiance (GHI) at the surface", "surface_downwelling_shortwave_flux_in_air_assuming_clear_sky").notes = {{"caution", kSolarCaution}};
  if (r.has_spectral_products) {
    scalar("par_energy", r.par_w_m2, "W m-2", "photosynthetically active radiation (400-700 nm) at the surface, energy flux",
           "surface_downwelling_photosynthetic_radiative_flux_in_air");
    scalar("par_photon", r.par_umol_m2_s, "umol m-2 s-1", "photosynthetically active radiation (400-700 nm) at the surface, photon flux",
           "surface_downwelling_photosynthetic_photon_flux_in_air")
        .notes = {{"conversion", "per bin, energy x mean wavelength / (h c N_A) (McCree 1972; SI 2019 constants)"}};
    Field& uv = scalar("uv_index", r.uv_index, "1", "UV index at the surface: 40 m2 W-1 x CIE erythemally weighted irradiance",
                       "ultraviolet_index_assuming_clear_sky");
    uv.notes = {{"action_spectrum", "CIE erythema reference action spectrum, ISO 17166:1999 / CIE S 007/E:1998"},
                {"caution", kUvCaution}};
    if (r.solar_approximate) uv.notes.emplace_back("quality", "indicative: computed with the built-in approximate solar spectrum");
  }
  if (!r.layer_h2o_cm.empty()) {
    add("layer_precipitable_water", {"layer"}, r.layer_h2o_cm, "cm", "water vapour in the layer as precipitable water (liquid-equivalent depth)");
    Field& pw = scalar("precipitable_water", r.precipitable_water_cm, "cm", "total precipitable water of the column (liquid-equivalent depth)",
                              "lwe_thickness_of_atmosphere_mass_content_of_water_vapor");
    if (r.h2o_broadband) pw.notes = {{"quality", experiment::kH2oBroadbandNote}};
  }
  scalar("solar_zenith_angle", r.solar_zenith_deg, "degree", "solar zenith angle", "solar_zenith_angle");
  scalar("cos_solar_zenith", r.mu0, "1", "cosine of the solar zenith angle");
  scalar("earth_sun_factor", r.earth_sun_factor, "1", "(mean Earth-Sun distance / distance)^2 applied to the TOA irradiance");
  scalar("toa_normal_irradiance", r.toa_normal_w_m2, "W m-2", "TOA solar irradiance normal to the beam, all bins");
  if (r.has_sun_position) {
    scalar("solar_azimuth_angle", r.solar_azimuth_deg, "degree", "solar azimuth angle, clockwise from north", "solar_azimuth_angle");
    scalar("sun_above_horizon", r.sun_up ? 1.0 : 0.0, "1",
           "1 when the centre of the (refracted) sun is above the horizon; 0 at night, when every flux and ratio is 0 "
           "and nothing was solved");
  }
  if (r.has_plane) {
    const auto plane = [&](const char* name, double v, const char* what) -> Field& {
      Field& x = scalar(name, v, "W m-2", what);
      x.notes = {{"caution", sun::kPlaneCaution}};
      return x;
    };
    plane("plane_beam_irradiance", r.plane_beam, "direct-beam irradiance on the tilted plane, DNI cos(angle of incidence)");
    plane("plane_sky_diffuse_irradiance", r.plane_sky_diffuse, "sky-diffuse irradiance on the tilted plane");
    plane("plane_ground_reflected_irradiance", r.plane_ground, "ground-reflected irradiance on the tilted plane, albedo GHI (1 - cos tilt)/2");
    plane("plane_global_irradiance", r.plane_global, "global (plane-of-array) irradiance on the tilted plane: beam + sky diffuse + ground reflected");
    scalar("angle_of_incidence", r.angle_of_incidence_deg, "degree", "angle between the sun and the normal of the tilted plane");
    scalar("plane_ground_albedo", r.plane_ground_albedo, "1", "ground albedo seen by the tilted plane");
  }

  if (!r.bin_direct_down.empty()) {
    // Spectral fluxes per nm: the bin's integral divided by its width (bin_width), so that
    // sum(spectral_flux * bin_width) over the bins of a band is the band flux.
    const std::size_t nb = r.bin_lower_nm.size(), nl = r.n_levels;
    std::vector<double> width(nb), bounds(2 * nb);
    for (std::size_t b = 0; b < nb; ++b) {
      width[b] = r.bin_upper_nm[b] - r.bin_lower_nm[b];
      bounds[2 * b] = r.bin_lower_nm[b];
      bounds[2 * b + 1] = r.bin_upper_nm[b];
    }
    const auto per_nm = [&](const std::vector<double>& v) {
      std::vector<double> out(v.size());
      for (std::size_t i = 0; i < v.size(); ++i) out[i] = v[i] / width[i / nl];
      return out;
    };
    add("wavelength_bounds", {"wavelength", "nv"}, bounds, "nm", "wavelength edges of the spectral bin").per_scenario = false;
    add("bin_lower", {"wavelength"}, r.bin_lower_nm, "nm", "lower edge of the spectral bin").per_scenario = false;
    add("bin_upper", {"wavelength"}, r.bin_upper_nm, "nm", "upper edge of the spectral bin").per_scenario = false;
    add("bin_width", {"wavelength"}, width, "nm", "width of the spectral bin (upper minus lower edge)").per_scenario = false;
    add("bin_toa_normal_irradiance", {"wavelength"}, r.bin_toa_normal, "W m-2", "TOA solar irradiance normal to the beam, integrated over the bin");
    add("spectral_flux_direct_down", {"wavelength", "level"}, per_nm(r.bin_direct_down), "W m-2 nm-1",
        "direct downward spectral irradiance, mean over the bin (bin integral / bin_width)");
    add("spectral_flux_diffuse_down", {"wavelength", "level"}, per_nm(r.bin_diffuse_down), "W m-2 nm-1",
        "diffuse downward spectral irradiance, mean over the bin (bin integral / bin_width)");
    add("spectral_flux_up", {"wavelength", "level"}, per_nm(r.bin_diffuse_up), "W m-2 nm-1",
        "upward spectral irradiance, mean over the bin (bin integral / bin_width)", "upwelling_radiative_flux_per_unit_wavelength_in_air");
  }
  return f;
}

}  // namespace solstrata::io
