#include "optics/aerosol.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <sstream>
#include <stdexcept>

#include "atmos/number_text.hpp"

namespace solstrata::optics {
namespace {

using atmos::number_text;
std::string num(double x) { return number_text(x); }

constexpr std::array<AerosolType, 8> kAllTypes = {
    AerosolType::continental_background, AerosolType::continental_moderate,
    AerosolType::continental_industrial, AerosolType::urban_haze, AerosolType::mineral_dust,
    AerosolType::marine_background, AerosolType::marine_coastal, AerosolType::biomass_smoke};

// Linear interpolation in wavelength, constant beyond the ends.
double interpolate(const std::vector<double>& x, const std::vector<double>& y, double at) {
  if (at <= x.front()) return y.front();
  if (at >= x.back()) return y.back();
  const std::size_t i = static_cast<std::size_t>(std::upper_bound(x.begin(), x.end(), at) - x.begin());
  const double t = (at - x[i - 1]) / (x[i] - x[i - 1]);
  return (1 - t) * y[i - 1] + t * y[i];
}

}  // namespace

std::string_view to_string(AerosolType t) {
  switch (t) {
    case AerosolType::continental_background: return "continental_background";
    case AerosolType::continental_moderate: return "continental_moderate";
    case AerosolType::continental_industrial: return "continental_industrial";
    case AerosolType::urban_haze: return "urban_haze";
    case AerosolType::mineral_dust: return "mineral_dust";
    case AerosolType::marine_background: return "marine_background";
    case AerosolType::marine_coastal: return "marine_coastal";
    case AerosolType::biomass_smoke: return "biomass_smoke";
  }
  return "unknown";
}

std::optional<AerosolType> parse_aerosol_type(std::string_view name) {
  for (AerosolType t : kAllTypes) {
    if (to_string(t) == name) return t;
  }
  return std::nullopt;
}

AerosolPreset preset(AerosolType t) {
  // omega and g at 550 nm, relative humidity 80 %: OPAC, Hess, Koepke & Schult (1998), Bull. Amer.
  // Meteor. Soc. 79, 831. Continental polluted is published; the others are from memory.
  // Ångström exponents: OPAC, 500-800 nm pair, from memory. Smoke: Dubovik et al. (2002),
  // J. Atmos. Sci. 59, 590, savanna biomass burning (omega, g at 440 nm; alpha 440-870 nm), from
  // memory.
  switch (t) {
    case AerosolType::continental_background:
      return {0.97, 0.71, 1.42, "OPAC (Hess et al. 1998), RH 80 %, from memory"};
    case AerosolType::continental_moderate:
      return {0.925, 0.70, 1.42, "OPAC (Hess et al. 1998), RH 80 %, from memory"};
    case AerosolType::continental_industrial:
      return {0.8925, 0.6977, 1.45,
              "OPAC (Hess et al. 1998), RH 80 %: omega, g published; alpha from memory"};
    case AerosolType::urban_haze:
      return {0.82, 0.69, 1.43, "OPAC (Hess et al. 1998), RH 80 %, from memory"};
    case AerosolType::mineral_dust:
      return {0.89, 0.73, 0.17, "OPAC (Hess et al. 1998), RH 80 %, from memory"};
    case AerosolType::marine_background:
      return {0.998, 0.77, 0.08, "OPAC (Hess et al. 1998), RH 80 %, from memory"};
    case AerosolType::marine_coastal:
      return {0.975, 0.76, 0.35, "OPAC (Hess et al. 1998), RH 80 %, from memory"};
    case AerosolType::biomass_smoke:
      return {0.88, 0.64, 1.8, "Dubovik et al. (2002), savanna biomass burning, from memory"};
  }
  return {0.9, 0.7, 1.3, "unknown"};
}

std::string_view to_string(AerosolShape s) {
  switch (s) {
    case AerosolShape::exponential: return "exponential";
    case AerosolShape::boundary_layer: return "boundary_layer";
    case AerosolShape::per_layer: return "per_layer";
  }
  return "unknown";
}

std::optional<AerosolShape> parse_aerosol_shape(std::string_view name) {
  for (AerosolShape s : {AerosolShape::exponential, AerosolShape::boundary_layer,
                         AerosolShape::per_layer}) {
    if (to_string(s) == name) return s;
  }
  return std::nullopt;
}

std::string AerosolSpec::validate() const {
  if (!std::isfinite(tau_ref) || tau_ref < 0.0 || tau_ref > 100.0) {
    return "aerosol tau_ref = " + num(tau_ref) + " must be in [0, 100]";
  }
  if (!std::isfinite(reference_nm) || reference_nm <= 0.0) {
    return "aerosol reference_nm = " + num(reference_nm) + " nm must be > 0";
  }
  if (second_nm != 0.0) {
    if (!std::isfinite(second_nm) || second_nm <= 0.0 || second_nm == reference_nm) {
      return "aerosol second_nm = " + num(second_nm) +
             " nm must be > 0 and differ from reference_nm (or 0 to use angstrom)";
    }
    if (!std::isfinite(tau_second) || tau_second <= 0.0 || tau_ref <= 0.0) {
      return "aerosol tau_second = " + num(tau_second) +
             " must be > 0, with tau_ref > 0, for the two-wavelength Ångström form";
    }
  }
  const double a = second_nm != 0.0 ? alpha() : angstrom;
  if (!std::isfinite(a) || a < -1.0 || a > 4.0) {
    return "aerosol Ångström exponent " + num(a) + " must be in [-1, 4]";
  }
  if (table_nm.empty()) {
    if (!omega_table.empty() || !g_table.empty()) {
      return "aerosol omega_table/g_table need table_nm (the wavelengths)";
    }
  } else {
    for (std::size_t i = 0; i < table_nm.size(); ++i) {
      if (!std::isfinite(table_nm[i]) || table_nm[i] <= 0.0 ||
          (i > 0 && !(table_nm[i] > table_nm[i - 1]))) {
        return "aerosol table_nm[" + std::to_string(i) + "] = " + num(table_nm[i]) +
               " nm must be > 0 and increasing";
      }
    }
    if (!omega_table.empty() && omega_table.size() != table_nm.size()) {
      return "aerosol omega_table has " + std::to_string(omega_table.size()) +
             " values, table_nm has " + std::to_string(table_nm.size());
    }
    if (!g_table.empty() && g_table.size() != table_nm.size()) {
      return "aerosol g_table has " + std::to_string(g_table.size()) + " values, table_nm has " +
             std::to_string(table_nm.size());
    }
  }
  for (std::size_t i = 0; i <= omega_table.size(); ++i) {
    const double w = i < omega_table.size() ? omega_table[i] : omega;
    if (!std::isfinite(w) || w < 0.0 || w > 1.0) {
      return "aerosol single-scattering albedo " + num(w) +
             (i < omega_table.size() ? " (omega_table[" + std::to_string(i) + "])" : " (omega)") +
             " must be in [0, 1]";
    }
  }
  for (std::size_t i = 0; i <= g_table.size(); ++i) {
    const double v = i < g_table.size() ? g_table[i] : g;
    if (!std::isfinite(v) || v <= -1.0 || v >= 1.0) {
      return "aerosol asymmetry parameter " + num(v) +
             (i < g_table.size() ? " (g_table[" + std::to_string(i) + "])" : " (g)") +
             " must be in (-1, 1)";
    }
  }
  if (!std::isfinite(scale_height_km) || scale_height_km <= 0.0 || scale_height_km > 100.0) {
    return "aerosol scale_height_km = " + num(scale_height_km) + " km must be in (0, 100]";
  }
  if (shape == AerosolShape::boundary_layer) {
    if (!std::isfinite(boundary_layer_top_km) || boundary_layer_top_km <= 0.0) {
      return "aerosol boundary_layer_top_km = " + num(boundary_layer_top_km) + " km must be > 0";
    }
    if (!std::isfinite(boundary_layer_fraction) || boundary_layer_fraction < 0.0 ||
        boundary_layer_fraction > 1.0) {
      return "aerosol boundary_layer_fraction = " + num(boundary_layer_fraction) +
             " must be in [0, 1]";
    }
  }
  if (shape == AerosolShape::per_layer) {
    double sum = 0.0;
    for (std::size_t i = 0; i < layer_weights.size(); ++i) {
      if (!std::isfinite(layer_weights[i]) || layer_weights[i] < 0.0) {
        return "aerosol layer_weights[" + std::to_string(i) + "] = " + num(layer_weights[i]) +
               " must be finite and >= 0";
      }
      sum += layer_weights[i];
    }
    if (!(sum > 0.0)) return "aerosol layer_weights must contain a value > 0 (shape per_layer)";
  }
  return {};
}

double AerosolSpec::alpha() const {
  if (second_nm == 0.0) return angstrom;
  return -std::log(tau_ref / tau_second) / std::log(reference_nm / second_nm);
}

double AerosolSpec::column_tau(double wavelength_nm) const {
  if (tau_ref == 0.0) return 0.0;
  // Ångström (1929): tau = tau_ref (lambda / lambda_ref)^-alpha.
  return tau_ref * std::pow(wavelength_nm / reference_nm, -alpha());
}

double AerosolSpec::omega_at(double wavelength_nm) const {
  return omega_table.empty() ? omega : interpolate(table_nm, omega_table, wavelength_nm);
}

double AerosolSpec::g_at(double wavelength_nm) const {
  return g_table.empty() ? g : interpolate(table_nm, g_table, wavelength_nm);
}

AerosolSpec from_preset(AerosolType t, double tau_550, double scale_height_km) {
  const AerosolPreset p = preset(t);
  AerosolSpec a;
  a.tau_ref = tau_550;
  a.reference_nm = 550.0;
  a.angstrom = p.angstrom;
  a.omega = p.omega;
  a.g = p.g;
  a.shape = AerosolShape::exponential;
  a.scale_height_km = scale_height_km;
  return a;
}

std::vector<double> layer_fractions(const AerosolSpec& a, const atmos::Profile& p) {
  if (const std::string msg = a.validate(); !msg.empty()) throw std::invalid_argument(msg);
  if (const std::string msg = p.validate(); !msg.empty()) throw std::invalid_argument(msg);
  const std::size_t nl = p.n_layers();
  std::vector<double> f(nl, 0.0);
  const double z_surface = p.altitude_km.back();
  // km: heights above the surface of a layer's top and bottom.
  auto top = [&](std::size_t i) { return p.altitude_km[i] - z_surface; };
  auto bottom = [&](std::size_t i) { return p.altitude_km[i + 1] - z_surface; };
  // Share of an exponential extinction profile exp(-h/H) between heights hb < ht.
  auto exp_share = [&](double hb, double ht) {
    const double H = a.scale_height_km;
    return std::exp(-hb / H) - std::exp(-ht / H);
  };
  if (a.shape == AerosolShape::per_layer) {
    if (a.layer_weights.size() != nl) {
      throw std::invalid_argument("aerosol layer_weights has " + std::to_string(a.layer_weights.size()) +
                                  " values but the profile has " + std::to_string(nl) + " layers");
    }
    f = a.layer_weights;
  } else {
    const double exp_total = exp_share(0.0, top(0));
    const double bl_share = a.shape == AerosolShape::boundary_layer ? a.boundary_layer_fraction : 0.0;
    const double bl_top = std::min(a.boundary_layer_top_km, top(0));
    for (std::size_t i = 0; i < nl; ++i) {
      f[i] = (1.0 - bl_share) * exp_share(bottom(i), top(i)) / exp_total;
      if (bl_share > 0.0) {
        const double overlap = std::max(0.0, std::min(top(i), bl_top) - bottom(i));
        f[i] += bl_share * overlap / bl_top;
      }
    }
  }
  double sum = 0.0;
  for (double v : f) sum += v;
  for (double& v : f) v /= sum;
  return f;
}

}  // namespace solstrata::optics
