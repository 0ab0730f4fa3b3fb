// Atmosphere profiles: levels from the top of the atmosphere to the surface, and layer columns.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

namespace solstrata::atmos {

/// molecules cm-2: one Dobson unit, 2.6868e16 molecules cm-2 (definition: a 10 um layer of pure
/// ozone at 273.15 K and 1013.25 hPa; WMO).
inline constexpr double kDobsonUnit = 2.6868e16;
/// mol-1: Avogadro constant (CODATA 2018, exact).
inline constexpr double kAvogadro = 6.02214076e23;
/// mol/mol: volume fraction of O2 in dry air, 0.20946 (U.S. Standard Atmosphere 1976, Table 3).
inline constexpr double kO2VolumeFraction = 0.20946;
/// g mol-1: molar mass of water.
inline constexpr double kWaterMolarMass = 18.01528;

/// An atmosphere as levels, index 0 at the top of the atmosphere, the last level at the surface.
/// Layers lie between consecutive levels (layer i between level i and level i + 1), so a profile
/// of n levels has n - 1 layers, matching the solver's layer order. Plain vectors, usable without
/// any file; the experiment loader fills it from profile YAML.
struct Profile {
  std::vector<double> pressure_hpa;   ///< hPa: pressure at each level, strictly increasing downwards
  std::vector<double> temperature_k;  ///< K: temperature at each level, in (100, 400)
  std::vector<double> altitude_km;    ///< km: altitude above mean sea level, strictly decreasing
  std::vector<double> ozone_ppmv;     ///< ppmv (1e-6 mol/mol): ozone volume mixing ratio, >= 0
  std::vector<double> h2o_ppmv;       ///< ppmv (1e-6 mol/mol): water-vapour volume mixing ratio, >= 0
  double latitude_deg = 45.0;         ///< degrees north: sets gravity (Bodhaine et al. 1999)
  double co2_ppmv = 400.0;            ///< ppmv: CO2 volume mixing ratio (Rayleigh, molar mass of air)
  std::string name;                   ///< label for provenance, e.g. "us_standard_1976"

  [[nodiscard]] std::size_t n_levels() const { return pressure_hpa.size(); }
  [[nodiscard]] std::size_t n_layers() const { return n_levels() < 2 ? 0 : n_levels() - 1; }
  /// Empty when valid, else a sentence naming the field, the level index, the value and the rule.
  /// Requires >= 2 levels, equal vector lengths (gas vectors may be empty: then zero), finite
  /// values, pressure increasing and altitude decreasing from top to surface.
  [[nodiscard]] std::string validate() const;
};

/// Column amounts of each layer (index 0 at the top).
struct LayerColumns {
  std::vector<double> air;         ///< molecules cm-2: air molecules (hydrostatic, from delta p / g)
  std::vector<double> ozone_du;    ///< DU: ozone column
  std::vector<double> h2o_cm;      ///< cm: precipitable water (liquid-equivalent depth)
  std::vector<double> temperature_k;  ///< K: pressure-weighted mean temperature (level mean)
  std::vector<double> mid_altitude_km;  ///< km: mean of the bounding level altitudes
};

/// cm s-2: gravitational acceleration at latitude `latitude_deg` and altitude `z_m` (m), from
/// Bodhaine et al. (1999), J. Atmos. Oceanic Technol. 16, 1854 (after List 1968):
/// g0 = 980.6160 (1 - 0.0026373 cos 2phi + 0.0000059 cos^2 2phi) and a cubic altitude correction.
double gravity_cm_s2(double latitude_deg, double z_m);

/// g mol-1: mean molar mass of dry air with CO2 at `co2_ppmv`, m_a = 15.0556 C + 28.9595 (C in
/// parts per volume; Bodhaine et al. 1999).
double air_molar_mass(double co2_ppmv);

/// Layer columns of a valid profile. Air: N = delta p / (m g) with the molecular mass of dry air
/// and gravity at the layer's mid altitude (hydrostatic balance; water vapour's small share of
/// the pressure is counted as air). Gases: mean of the two levels' mixing ratios times N (exact
/// when the mixing ratio is linear in pressure). Throws std::invalid_argument if validate() fails.
LayerColumns layer_columns(const Profile& p);

/// DU: total ozone column of a valid profile (sum of layer_columns().ozone_du).
double total_ozone_du(const Profile& p);
/// cm: total precipitable water of a valid profile.
double total_h2o_cm(const Profile& p);

/// The part of a valid profile above altitude `z_km` (a site's elevation): levels at or below
/// `z_km` are removed and a new surface level is put at `z_km`, with pressure interpolated
/// log-linearly in altitude (exact for an isothermal layer in hydrostatic balance, p = p0
/// exp(-z/H)), temperature and mixing ratios linearly. A `z_km` within 1 m of an existing level
/// cuts at that level. Throws std::invalid_argument when `z_km` is not inside the profile's
/// altitude range (it must leave at least one layer).
Profile cut_at_altitude(const Profile& p, double z_km);

/// Multiplies the ozone mixing ratios so that the total column becomes `target_du` (> 0; the
/// profile must have ozone). Throws std::invalid_argument naming the value otherwise.
void scale_ozone_to(Profile& p, double target_du);

}  // namespace solstrata::atmos
