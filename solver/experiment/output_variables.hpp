// The names `output.variables` accepts: groups of output variables, and every variable a result
// or sweep file can hold with the group it belongs to. Coordinates, bounds and the band table are
// not listed: they are always written. io::result_fields makes the variables; a test checks that
// every variable it makes is listed here (tests/io/cf_metadata_test.cpp).
#pragma once

#include <string>
#include <string_view>
#include <vector>

namespace solstrata::experiment {

/// One selectable output variable.
struct OutputVariable {
  std::string_view name;   ///< variable name in the file
  std::string_view group;  ///< the group that selects it with the others of its kind
};

/// The groups, in the order the docs list them.
inline constexpr std::string_view kOutputGroups[] = {"broadband", "bands", "layers", "spectral", "products", "sun"};

/// Every selectable variable.
inline constexpr OutputVariable kOutputVariables[] = {
    {"flux_direct_down", "broadband"},
    {"flux_diffuse_down", "broadband"},
    {"flux_up", "broadband"},
    {"flux_net_down", "broadband"},
    {"transmittance_direct", "broadband"},
    {"transmittance_diffuse", "broadband"},
    {"transmittance_total", "broadband"},
    {"planetary_albedo", "broadband"},
    {"surface_reflectance", "broadband"},
    {"toa_flux_down", "broadband"},
    {"toa_flux_up", "broadband"},
    {"absorbed_atmosphere", "broadband"},
    {"absorbed_surface", "broadband"},
    {"band_flux_direct_down", "bands"},
    {"band_flux_diffuse_down", "bands"},
    {"band_flux_up", "bands"},
    {"band_flux_net_down", "bands"},
    {"band_absorbed", "bands"},
    {"band_transmittance_direct", "bands"},
    {"band_transmittance_diffuse", "bands"},
    {"band_transmittance_total", "bands"},
    {"band_planetary_albedo", "bands"},
    {"band_optical_depth_rayleigh", "bands"},
    {"band_optical_depth_ozone", "bands"},
    {"band_optical_depth_aerosol", "bands"},
    {"absorbed", "layers"},
    {"heating_rate", "layers"},
    {"layer_precipitable_water", "layers"},
    {"bin_toa_normal_irradiance", "spectral"},
    {"spectral_flux_direct_down", "spectral"},
    {"spectral_flux_diffuse_down", "spectral"},
    {"spectral_flux_up", "spectral"},
    {"direct_normal_irradiance", "products"},
    {"diffuse_horizontal_irradiance", "products"},
    {"global_horizontal_irradiance", "products"},
    {"par_energy", "products"},
    {"par_photon", "products"},
    {"uv_index", "products"},
    {"precipitable_water", "products"},
    {"aerosol_effect_toa", "products"},
    {"aerosol_effect_surface", "products"},
    {"aerosol_effect_atmosphere", "products"},
    {"solar_zenith_angle", "sun"},
    {"cos_solar_zenith", "sun"},
    {"earth_sun_factor", "sun"},
    {"toa_normal_irradiance", "sun"},
    {"solar_azimuth_angle", "sun"},
    {"sun_above_horizon", "sun"},
    {"angle_of_incidence", "sun"},
    {"plane_beam_irradiance", "products"},
    {"plane_sky_diffuse_irradiance", "products"},
    {"plane_ground_reflected_irradiance", "products"},
    {"plane_global_irradiance", "products"},
    {"plane_ground_albedo", "products"},
};

/// The group of a selectable variable, or "" when `variable` is not selectable (a coordinate,
/// bounds or band-table variable, always written).
[[nodiscard]] constexpr std::string_view output_group(std::string_view variable) {
  for (const OutputVariable& v : kOutputVariables)
    if (v.name == variable) return v.group;
  return {};
}

/// Whether `name` is a group or a selectable variable.
[[nodiscard]] constexpr bool is_output_name(std::string_view name) {
  for (std::string_view g : kOutputGroups)
    if (g == name) return true;
  return !output_group(name).empty();
}

/// Whether a file written with the selection `chosen` (names and groups; empty = everything)
/// holds `variable`. Variables that are not selectable are always written.
[[nodiscard]] inline bool output_selected(const std::vector<std::string>& chosen, std::string_view variable) {
  const std::string_view group = output_group(variable);
  if (chosen.empty() || group.empty()) return true;
  for (const std::string& c : chosen)
    if (c == variable || c == group) return true;
  return false;
}

}  // namespace solstrata::experiment
