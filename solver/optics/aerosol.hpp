// Aerosol optical properties: Ångström law, vertical shapes and typed presets.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "atmos/profile.hpp"

namespace solstrata::optics {

/// Typed aerosol presets (single-scattering albedo, asymmetry parameter, Ångström exponent).
enum class AerosolType {
  continental_background,
  continental_moderate,
  continental_industrial,
  urban_haze,
  mineral_dust,
  marine_background,
  marine_coastal,
  biomass_smoke,
};
/// Stable lower-case name ("continental_background", ...).
std::string_view to_string(AerosolType t);
/// Inverse of to_string; std::nullopt for an unknown name.
std::optional<AerosolType> parse_aerosol_type(std::string_view name);

/// Optical properties of a preset with their source.
struct AerosolPreset {
  double omega;     ///< dimensionless: single-scattering albedo at 550 nm
  double g;         ///< dimensionless: asymmetry parameter at 550 nm
  double angstrom;  ///< dimensionless: Ångström exponent
  std::string_view source;  ///< citation, with 'from memory' where it applies
};
/// The preset's values; see aerosol.cpp for the source of each.
AerosolPreset preset(AerosolType t);

/// How the column aerosol optical depth is spread over the layers.
enum class AerosolShape {
  exponential,     ///< extinction ~ exp(-h/H) with h the height above the surface
  boundary_layer,  ///< a well-mixed layer from the surface up to a top, plus an exponential background
  per_layer,       ///< the user's weight for each layer (normalised to sum 1)
};
std::string_view to_string(AerosolShape s);
std::optional<AerosolShape> parse_aerosol_shape(std::string_view name);

/// An aerosol: column optical depth at a reference wavelength, Ångström spectral dependence,
/// single-scattering albedo and asymmetry parameter (constant or tabulated), vertical shape.
struct AerosolSpec {
  /// dimensionless: column optical depth at reference_nm, >= 0 (0 = no aerosol)
  double tau_ref = 0.0;
  /// nm: reference wavelength of tau_ref, > 0
  double reference_nm = 550.0;
  /// dimensionless: Ångström exponent alpha in tau(l) = tau_ref (l / reference)^-alpha,
  /// used unless the two-wavelength form below is given; in [-1, 4]
  double angstrom = 1.3;
  /// nm: second wavelength of the two-wavelength form (0 = not used); then alpha =
  /// -ln(tau_ref / tau_second) / ln(reference_nm / second_nm) (Ångström 1929)
  double second_nm = 0.0;
  /// dimensionless: column optical depth at second_nm (> 0 when second_nm is set)
  double tau_second = 0.0;
  /// dimensionless: single-scattering albedo, [0, 1], used when omega_table is empty
  double omega = 0.93;
  /// dimensionless: asymmetry parameter, (-1, 1), used when g_table is empty
  double g = 0.70;
  /// nm: wavelengths of the optional omega/g tables, strictly increasing
  std::vector<double> table_nm;
  /// dimensionless: single-scattering albedo at table_nm (linear in wavelength, constant beyond)
  std::vector<double> omega_table;
  /// dimensionless: asymmetry parameter at table_nm (linear in wavelength, constant beyond)
  std::vector<double> g_table;
  /// vertical distribution
  AerosolShape shape = AerosolShape::exponential;
  /// km: extinction scale height of the exponential shape and of the boundary-layer background
  double scale_height_km = 1.5;
  /// km: top of the well-mixed layer above the surface (boundary_layer shape)
  double boundary_layer_top_km = 1.5;
  /// dimensionless: share of the column optical depth inside the well-mixed layer, [0, 1]
  double boundary_layer_fraction = 0.8;
  /// dimensionless: per-layer weights, top layer first, >= 0, one per layer (per_layer shape)
  std::vector<double> layer_weights;

  /// Empty when valid, else a sentence naming the field, its value and the rule.
  [[nodiscard]] std::string validate() const;
  /// dimensionless: the Ångström exponent in use (from the two-wavelength form when given).
  [[nodiscard]] double alpha() const;
  /// dimensionless: column optical depth at wavelength_nm.
  [[nodiscard]] double column_tau(double wavelength_nm) const;
  /// dimensionless: single-scattering albedo at wavelength_nm.
  [[nodiscard]] double omega_at(double wavelength_nm) const;
  /// dimensionless: asymmetry parameter at wavelength_nm.
  [[nodiscard]] double g_at(double wavelength_nm) const;
};

/// An exponential-shape spec with a preset's omega, g and Ångström exponent.
AerosolSpec from_preset(AerosolType t, double tau_550, double scale_height_km = 1.5);

/// dimensionless: share of the column aerosol optical depth in each layer of `p` (top first),
/// summing to 1. Heights are measured from the profile's surface level. Throws
/// std::invalid_argument when the spec or the profile is invalid or the weights do not fit.
std::vector<double> layer_fractions(const AerosolSpec& a, const atmos::Profile& p);

}  // namespace solstrata::optics
