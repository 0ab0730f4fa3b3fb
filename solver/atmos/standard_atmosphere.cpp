#include "atmos/standard_atmosphere.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>
#include <sstream>
#include <stdexcept>

namespace solstrata::atmos {
namespace {

// U.S. Standard Atmosphere 1976, defining constants.
constexpr double kR0 = 6356766.0;     // m: effective Earth radius for geopotential height
constexpr double kG0 = 9.80665;       // m s-2: standard gravity
constexpr double kM0 = 28.9644;       // kg kmol-1: sea-level molar mass of air
constexpr double kRstar = 8314.32;    // J kmol-1 K-1: gas constant as the standard defines it
constexpr double kP0 = 101325.0;      // Pa: sea-level pressure
constexpr double kT0 = 288.15;        // K: sea-level temperature
constexpr double kBoltzmann = 1.380649e-23;  // J K-1 (CODATA 2018, exact)

struct Layer {
  double base_m;  // m: geopotential base height
  double lapse;   // K m-1: dT/dH
};
// The standard's defining layers: base geopotential heights and lapse rates; the top is 84852 m.
constexpr std::array<Layer, 7> kLayers = {{{0, -0.0065},
                                           {11000, 0.0},
                                           {20000, 0.001},
                                           {32000, 0.0028},
                                           {47000, 0.0},
                                           {51000, -0.0028},
                                           {71000, -0.002}}};

// Pressure and temperature at geopotential height H (m) from the layer recursion.
StandardState at_geopotential(double H) {
  double Tb = kT0, pb = kP0;
  const double gmr = kG0 * kM0 / kRstar;  // K m-1
  for (std::size_t i = 0; i < kLayers.size(); ++i) {
    const double Hb = kLayers[i].base_m, L = kLayers[i].lapse;
    const double Htop = i + 1 < kLayers.size() ? kLayers[i + 1].base_m : 84852.0;
    const bool last = H <= Htop || i + 1 == kLayers.size();
    const double h = last ? H : Htop;
    const double T = Tb + L * (h - Hb);
    // L != 0: p = pb (Tb / T)^(g0 M0 / (R* L)); L = 0: p = pb exp(-g0 M0 (H - Hb) / (R* Tb)).
    const double p = L != 0.0 ? pb * std::pow(Tb / T, gmr / L) : pb * std::exp(-gmr * (h - Hb) / Tb);
    if (last) return {p, T};
    Tb = T;
    pb = p;
  }
  return {pb, Tb};  // not reached
}

std::string fmt(double x, const char* f) {
  char buf[64];
  std::snprintf(buf, sizeof buf, f, x);
  return buf;
}

}  // namespace

double geopotential_height_m(double z_m) { return kR0 * z_m / (kR0 + z_m); }

StandardState us_standard_1976(double z_m) {
  if (!(z_m >= -5000.0 && z_m <= 86000.0)) {
    throw std::invalid_argument("altitude " + std::to_string(z_m) +
                                " m is outside the standard atmosphere's lower part [-5000, 86000] m");
  }
  return at_geopotential(geopotential_height_m(z_m));
}

std::vector<double> default_level_altitudes_km() {
  std::vector<double> z;
  for (int k = 80; k >= 50; k -= 5) z.push_back(k);
  for (int k = 19; k >= 10; --k) z.push_back(2.5 * k);
  for (int k = 24; k >= 0; --k) z.push_back(k);
  return z;
}

Profile make_us_standard_1976(const std::vector<double>& altitudes_km, const OzoneShape& ozone,
                              const WaterShape& water) {
  if (!(ozone.total_du > 0 && ozone.width_km > 0 && water.column_cm >= 0 &&
        water.scale_height_km > 0 && water.floor_ppmv >= 0)) {
    throw std::invalid_argument("ozone/water shape parameters must be positive");
  }
  Profile p;
  p.name = "us_standard_1976";
  p.latitude_deg = 45.0;
  p.co2_ppmv = 400.0;
  const double b = ozone.peak_km, c = ozone.width_km;
  // g cm-3: surface water-vapour density of the exponential shape.
  const double rho0 = water.column_cm / (water.scale_height_km * 1e5);
  for (double z : altitudes_km) {
    if (!(z >= 0.0 && z <= 86.0)) {
      throw std::invalid_argument("level altitude " + std::to_string(z) + " km is outside [0, 86] km");
    }
    const StandardState s = us_standard_1976(z * 1000.0);
    p.altitude_km.push_back(z);
    p.pressure_hpa.push_back(s.pressure_pa / 100.0);
    p.temperature_k.push_back(s.temperature_k);
    // cm-3: air number density from the ideal gas law.
    const double n_air = s.pressure_pa / (kBoltzmann * s.temperature_k) * 1e-6;
    // DU km-1 -> molecules cm-3: -du/dh of Green's form, times 2.6868e16 / 1e5 cm.
    const double e = std::exp((z - b) / c);
    const double du_per_km = ozone.total_du * (1 + std::exp(-b / c)) * e / (c * (1 + e) * (1 + e));
    p.ozone_ppmv.push_back(du_per_km * kDobsonUnit / 1e5 / n_air * 1e6);
    const double n_h2o = rho0 * std::exp(-z / water.scale_height_km) * kAvogadro / kWaterMolarMass;
    p.h2o_ppmv.push_back(std::max(n_h2o / n_air * 1e6, water.floor_ppmv));
  }
  if (const std::string msg = p.validate(); !msg.empty()) throw std::invalid_argument(msg);
  scale_ozone_to(p, ozone.total_du);
  return p;
}

std::string to_yaml_text(const Profile& p, const std::string& header) {
  std::ostringstream o;
  std::istringstream h(header);
  for (std::string line; std::getline(h, line);) o << (line.empty() ? "#" : "# " + line) << '\n';
  o << "name: " << p.name << '\n';
  o << "latitude_deg: " << fmt(p.latitude_deg, "%.6g") << '\n';
  o << "co2_ppmv: " << fmt(p.co2_ppmv, "%.6g") << '\n';
  o << "levels:\n";
  auto seq = [&](const char* key, const std::vector<double>& v, const char* f) {
    o << "  " << key << ": [";
    for (std::size_t i = 0; i < v.size(); ++i) {
      if (i > 0) o << (i % 8 == 0 ? ",\n    " : ", ");
      o << fmt(v[i], f);
    }
    o << "]\n";
  };
  seq("altitude_km", p.altitude_km, "%.6g");
  seq("pressure_hpa", p.pressure_hpa, "%.7g");
  seq("temperature_k", p.temperature_k, "%.7g");
  if (!p.ozone_ppmv.empty()) seq("ozone_ppmv", p.ozone_ppmv, "%.6g");
  if (!p.h2o_ppmv.empty()) seq("h2o_ppmv", p.h2o_ppmv, "%.6g");
  return o.str();
}

std::string us_standard_1976_yaml() {
  const Profile p = make_us_standard_1976();
  const OzoneShape o;
  const WaterShape w;
  std::ostringstream h;
  h << "U.S. Standard Atmosphere 1976: pressure and temperature from the standard's definition\n"
       "(NOAA/NASA/USAF 1976: base heights, lapse rates, hydrostatic equation), levels 80-0 km.\n"
       "Generated by build/solstrata_make_profile (solver/atmos/standard_atmosphere.cpp); do not edit.\n"
       "\n"
       "Keys (all lists run from the top of the atmosphere down to the surface, one value a level):\n"
       "  name            label of the profile\n"
       "  latitude_deg    degrees north; sets gravity for the layer air columns\n"
       "  co2_ppmv        CO2 volume mixing ratio, ppmv (1e-6 mol/mol)\n"
       "  levels.altitude_km    geometric altitude above mean sea level, km\n"
       "  levels.pressure_hpa   pressure, hPa\n"
       "  levels.temperature_k  temperature, K (the standard's molecular-scale temperature, equal to\n"
       "                        the kinetic temperature below 80 km)\n"
       "  levels.ozone_ppmv     ozone volume mixing ratio, ppmv\n"
       "  levels.h2o_ppmv       water-vapour volume mixing ratio, ppmv\n"
       "\n"
       "Ozone is NOT the standard's own table: a documented shape, the column above h of Green (1964)\n"
       "u(h) = a (1 + exp(-b/c)) / (1 + exp((h - b)/c)) with b = "
    << o.peak_km << " km, c = " << o.width_km
    << " km (from memory),\n"
       "rescaled to a total column of "
    << o.total_du
    << " DU (mid-latitude value, from memory).\n"
       "Water vapour is an invented, documented shape (not part of the 1976 standard): density\n"
       "exp(-z / "
    << w.scale_height_km << " km) holding " << w.column_cm << " cm precipitable water, mixing ratio at least "
    << w.floor_ppmv << " ppmv.\n";
  char tot[160];
  std::snprintf(tot, sizeof tot, "Layer columns of this file: ozone %.2f DU, precipitable water %.3f cm.",
                total_ozone_du(p), total_h2o_cm(p));
  h << tot << '\n';
  return to_yaml_text(p, h.str());
}

}  // namespace solstrata::atmos
