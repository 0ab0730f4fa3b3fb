#include "atmos/profile.hpp"
#include "atmos/humidity.hpp"

#include <cmath>
#include <numbers>
#include <sstream>
#include <stdexcept>

#include "atmos/number_text.hpp"

namespace solstrata::atmos {
namespace {

std::string num(double x) { return number_text(x); }

std::string check_gas(const std::vector<double>& v, std::size_t n, const char* field) {
  if (v.empty()) return {};
  if (v.size() != n) {
    return std::string(field) + " has " + std::to_string(v.size()) + " values but the profile has " +
           std::to_string(n) + " levels";
  }
  for (std::size_t i = 0; i < n; ++i) {
    if (!std::isfinite(v[i]) || v[i] < 0.0 || v[i] > 1e6) {
      return std::string(field) + "[" + std::to_string(i) + "] = " + num(v[i]) +
             " ppmv must be finite and in [0, 1e6]";
    }
  }
  return {};
}

}  // namespace

std::string Profile::validate() const {
  const std::size_t n = pressure_hpa.size();
  if (n < 2) return "the profile needs at least 2 levels, has " + std::to_string(n);
  if (temperature_k.size() != n || altitude_km.size() != n) {
    return "pressure_hpa, temperature_k and altitude_km must have the same length (" +
           std::to_string(n) + ", " + std::to_string(temperature_k.size()) + ", " +
           std::to_string(altitude_km.size()) + ")";
  }
  for (std::size_t i = 0; i < n; ++i) {
    const std::string at = std::string("[").append(std::to_string(i)).append("] = ");
    if (!std::isfinite(pressure_hpa[i]) || pressure_hpa[i] < 0.0 || pressure_hpa[i] > 1e4) {
      return "pressure_hpa" + at + num(pressure_hpa[i]) + " hPa must be in [0, 1e4]";
    }
    if (i > 0 && !(pressure_hpa[i] > pressure_hpa[i - 1])) {
      return "pressure_hpa" + at + num(pressure_hpa[i]) +
             " hPa must exceed the level above (levels run from the top of the atmosphere down)";
    }
    if (!std::isfinite(temperature_k[i]) || temperature_k[i] <= 100.0 || temperature_k[i] >= 400.0) {
      return "temperature_k" + at + num(temperature_k[i]) + " K must be in (100, 400)";
    }
    if (!std::isfinite(altitude_km[i]) || altitude_km[i] < -1.0 || altitude_km[i] > 200.0) {
      return "altitude_km" + at + num(altitude_km[i]) + " km must be in [-1, 200]";
    }
    if (i > 0 && !(altitude_km[i] < altitude_km[i - 1])) {
      return "altitude_km" + at + num(altitude_km[i]) +
             " km must be below the level above (levels run from the top of the atmosphere down)";
    }
  }
  if (std::string m = check_gas(ozone_ppmv, n, "ozone_ppmv"); !m.empty()) return m;
  if (std::string m = check_gas(h2o_ppmv, n, "h2o_ppmv"); !m.empty()) return m;
  if (!std::isfinite(latitude_deg) || std::abs(latitude_deg) > 90.0) {
    return "latitude_deg = " + num(latitude_deg) + " must be in [-90, 90]";
  }
  if (!std::isfinite(co2_ppmv) || co2_ppmv < 0.0 || co2_ppmv > 1e5) {
    return "co2_ppmv = " + num(co2_ppmv) + " must be in [0, 1e5]";
  }
  return {};
}

double gravity_cm_s2(double latitude_deg, double z_m) {
  // Bodhaine et al. (1999), after List (1968).
  const double c2p = std::cos(2.0 * latitude_deg * std::numbers::pi / 180.0);
  const double g0 = 980.6160 * (1.0 - 0.0026373 * c2p + 0.0000059 * c2p * c2p);
  return g0 - (3.085462e-4 + 2.27e-7 * c2p) * z_m + (7.254e-11 + 1.0e-13 * c2p) * z_m * z_m -
         (1.517e-17 + 6e-20 * c2p) * z_m * z_m * z_m;
}

double air_molar_mass(double co2_ppmv) { return 15.0556 * co2_ppmv * 1e-6 + 28.9595; }

LayerColumns layer_columns(const Profile& p) {
  if (const std::string msg = p.validate(); !msg.empty()) throw std::invalid_argument(msg);
  const std::size_t nl = p.n_layers();
  LayerColumns c;
  c.air.resize(nl);
  c.ozone_du.assign(nl, 0.0);
  c.h2o_cm.assign(nl, 0.0);
  c.temperature_k.resize(nl);
  c.mid_altitude_km.resize(nl);
  // g: mass of one molecule of dry air.
  const double m_air = air_molar_mass(p.co2_ppmv) / kAvogadro;
  for (std::size_t i = 0; i < nl; ++i) {
    const double dp = (p.pressure_hpa[i + 1] - p.pressure_hpa[i]) * 1000.0;  // hPa -> dyn cm-2
    const double z = 0.5 * (p.altitude_km[i] + p.altitude_km[i + 1]);
    c.mid_altitude_km[i] = z;
    c.air[i] = dp / (m_air * gravity_cm_s2(p.latitude_deg, z * 1000.0));
    c.temperature_k[i] = 0.5 * (p.temperature_k[i] + p.temperature_k[i + 1]);
    if (!p.ozone_ppmv.empty()) {
      c.ozone_du[i] = 0.5e-6 * (p.ozone_ppmv[i] + p.ozone_ppmv[i + 1]) * c.air[i] / kDobsonUnit;
    }
    if (!p.h2o_ppmv.empty()) {
      const double molecules = 0.5e-6 * (p.h2o_ppmv[i] + p.h2o_ppmv[i + 1]) * c.air[i];
      c.h2o_cm[i] = molecules * kWaterMolarMass / kAvogadro;  // g cm-2 = cm of liquid water
    }
  }
  return c;
}

double total_ozone_du(const Profile& p) {
  double s = 0.0;
  for (double v : layer_columns(p).ozone_du) s += v;
  return s;
}

double total_h2o_cm(const Profile& p) {
  double s = 0.0;
  for (double v : layer_columns(p).h2o_cm) s += v;
  return s;
}

namespace {

/// Multiplies a gas's mixing ratios so that its total column `now` becomes `target` (in `unit`,
/// at most `max`); throws std::invalid_argument naming the value, or the profile without the gas.
void rescale_gas(const Profile& p, std::vector<double>& ppmv, double now, double target, double max,
                 const char* what, const char* unit, const char* key) {
  if (!std::isfinite(target) || target <= 0.0 || target > max) {
    throw std::invalid_argument(std::string("target ") + what + " " + num(target) + " " + unit + " must be in (0, " +
                                num(max) + "]");
  }
  if (!(now > 0.0)) {
    throw std::invalid_argument("profile '" + p.name + "' has no " + key + " to rescale (" + key +
                                "_ppmv is empty or all zero)");
  }
  for (double& v : ppmv) v *= target / now;
}

}  // namespace

void scale_ozone_to(Profile& p, double target_du) {
  rescale_gas(p, p.ozone_ppmv, total_ozone_du(p), target_du, 2000.0, "total ozone", "DU", "ozone");
}

void scale_h2o_to(Profile& p, double target_cm) {
  rescale_gas(p, p.h2o_ppmv, total_h2o_cm(p), target_cm, 100.0, "precipitable water", "cm", "h2o");
}

Profile cut_at_altitude(const Profile& p, double z_km) {
  if (const std::string m = p.validate(); !m.empty()) throw std::invalid_argument(m);
  const std::size_t n = p.n_levels();
  if (!std::isfinite(z_km) || !(z_km < p.altitude_km.front()) || z_km < p.altitude_km.back() - 1e-3) {
    std::ostringstream m;
    m << "the site elevation " << z_km * 1000.0 << " m is outside the profile's altitude range ("
      << p.altitude_km.back() * 1000.0 << " to " << p.altitude_km.front() * 1000.0 << " m)";
    throw std::invalid_argument(m.str());
  }
  // The first level at or below z (levels run from the top down).
  std::size_t k = 0;
  while (k < n && p.altitude_km[k] > z_km + 1e-3) ++k;
  Profile out = p;
  const auto keep = [&](std::vector<double>& v, std::size_t count) {
    if (!v.empty()) v.resize(count);
  };
  if (k < n && std::abs(p.altitude_km[k] - z_km) <= 1e-3) {
    // Cut at an existing level.
    for (auto* v : {&out.pressure_hpa, &out.temperature_k, &out.altitude_km, &out.ozone_ppmv, &out.h2o_ppmv}) keep(*v, k + 1);
  } else {
    // Between level k - 1 (above) and level k (below).
    const std::size_t a = k - 1, b = k;
    const double t = (p.altitude_km[a] - z_km) / (p.altitude_km[a] - p.altitude_km[b]);
    const auto lin = [&](const std::vector<double>& v) { return v[a] + t * (v[b] - v[a]); };
    for (auto* v : {&out.pressure_hpa, &out.temperature_k, &out.altitude_km, &out.ozone_ppmv, &out.h2o_ppmv}) keep(*v, k + 1);
    out.pressure_hpa[k] = std::exp(std::log(p.pressure_hpa[a]) + t * (std::log(p.pressure_hpa[b]) - std::log(p.pressure_hpa[a])));
    out.temperature_k[k] = lin(p.temperature_k);
    out.altitude_km[k] = z_km;
    if (!out.ozone_ppmv.empty()) out.ozone_ppmv[k] = lin(p.ozone_ppmv);
    if (!out.h2o_ppmv.empty()) out.h2o_ppmv[k] = lin(p.h2o_ppmv);
  }
  if (out.n_levels() < 2) throw std::invalid_argument("the site elevation leaves no layer of the profile");
  return out;
}

}  // namespace solstrata::atmos
