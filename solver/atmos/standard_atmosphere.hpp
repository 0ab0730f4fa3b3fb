// U.S. Standard Atmosphere 1976 (temperature and pressure below 86 km) and a profile generator.
#pragma once

#include <string>
#include <vector>

#include "atmos/profile.hpp"

namespace solstrata::atmos {

/// Temperature and pressure of the standard atmosphere at one altitude.
struct StandardState {
  double pressure_pa;    ///< Pa
  double temperature_k;  ///< K: molecular-scale temperature; equals kinetic temperature below 80 km
};

/// m: geopotential height H = r0 z / (r0 + z) of geometric altitude `z_m` (m), r0 = 6356766 m
/// (U.S. Standard Atmosphere 1976, NOAA/NASA/USAF).
double geopotential_height_m(double z_m);

/// The U.S. Standard Atmosphere 1976 at geometric altitude `z_m` in [-5000, 86000] m, from its
/// definition: seven layers of constant lapse rate in geopotential height (base heights 0, 11,
/// 20, 32, 47, 51, 71 km; lapse rates -6.5, 0, +1, +2.8, 0, -2.8, -2.0 K/km), sea-level 101325 Pa
/// and 288.15 K, g0 = 9.80665 m s-2, M0 = 28.9644 kg kmol-1, R* = 8314.32 J kmol-1 K-1, and the
/// hydrostatic equation integrated exactly in each layer.
/// Throws std::invalid_argument outside that range.
StandardState us_standard_1976(double z_m);

/// Parameters of the ozone shape placed on the standard profile (the 1976 standard's own ozone
/// table is not reproduced). Ozone column above altitude h after Green (1964), Appl. Opt. 3, 203:
///   u(h) = a (1 + exp(-b/c)) / (1 + exp((h - b)/c)),
/// whose number density -du/dh peaks at h = b; the profile is then rescaled so that the layer
/// columns sum to exactly `total_du`.
struct OzoneShape {
  double total_du = 343.0;  ///< DU: total column (mid-latitude standard value ~343 DU, from memory)
  double peak_km = 22.0;    ///< km: altitude b of the number-density maximum (from memory)
  double width_km = 4.5;    ///< km: scale c of the shape (from memory)
};

/// Parameters of the water-vapour shape (not part of the 1976 standard; an invented, documented
/// shape): density rho(z) = rho0 exp(-z / scale_height), rho0 chosen so that the integral from
/// the surface is `column_cm`, and a floor of `floor_ppmv` in the mixing ratio (stratosphere).
struct WaterShape {
  double column_cm = 1.42;      ///< cm: precipitable water of the exponential part
  double scale_height_km = 2.0;  ///< km: density scale height
  double floor_ppmv = 4.0;      ///< ppmv: minimum mixing ratio
};

/// km: the default level altitudes of the generated profile, top first: 80 to 50 km every 5 km,
/// 47.5 to 25 km every 2.5 km, 24 to 0 km every 1 km (42 levels).
std::vector<double> default_level_altitudes_km();

/// A Profile on `altitudes_km` (strictly decreasing, top first, within [0, 86] km) with the
/// standard's pressure and temperature and the documented ozone and water-vapour shapes.
Profile make_us_standard_1976(const std::vector<double>& altitudes_km = default_level_altitudes_km(),
                              const OzoneShape& ozone = {}, const WaterShape& water = {});

/// The profile as YAML text (written by hand: no YAML library), with `header` as leading comment
/// lines. Keys: name, latitude_deg, co2_ppmv, and under `levels` one flow sequence per Profile
/// field (altitude_km, pressure_hpa, temperature_k, ozone_ppmv, h2o_ppmv), top level first.
std::string to_yaml_text(const Profile& p, const std::string& header);

/// The complete text of profiles/us_standard_1976.yaml: make_us_standard_1976() with the default
/// levels and shapes, and a header documenting keys, units and sources. The committed file must
/// equal this text (a test checks it); regenerate with `build/solstrata_make_profile`.
std::string us_standard_1976_yaml();

}  // namespace solstrata::atmos
