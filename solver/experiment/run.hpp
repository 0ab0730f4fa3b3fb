// Running one experiment: optics, the two-stream solve, and the products users feed downstream.
#pragma once

#include <span>
#include <string>
#include <vector>

#include "experiment/experiment.hpp"

namespace solstrata::experiment {

/// Everything one run produces. Per-level arrays have level 0 at the top of the atmosphere;
/// [band * n_levels + level] and [bin * n_levels + level] for per-band and per-bin level arrays,
/// [band * n_layers + layer] for per-band layer arrays. Fluxes are on a horizontal surface.
struct RunResult {
  std::size_t n_levels = 0, n_layers = 0, n_bands = 0, n_bins = 0;

  // Coordinates.
  std::vector<double> level_pressure_hpa;  ///< hPa: level pressure (empty when not known)
  std::vector<double> level_altitude_km;   ///< km: level altitude (empty when not known)
  std::vector<std::string> band_names;     ///< reporting band labels
  std::vector<double> band_lower_nm;       ///< nm: band lower edge (0 when not stated)
  std::vector<double> band_upper_nm;       ///< nm: band upper edge (0 when not stated)
  std::vector<double> bin_lower_nm, bin_upper_nm, bin_center_nm;  ///< nm: spectral bins

  // Scenario.
  double solar_zenith_deg = 0.0;     ///< degrees: solar zenith angle
  double mu0 = 1.0;                  ///< dimensionless: cosine of the solar zenith angle
  double earth_sun_factor = 1.0;     ///< dimensionless: (r0/r)^2 applied to the TOA irradiance
  double toa_normal_w_m2 = 0.0;      ///< W m-2: TOA irradiance normal to the beam, all bins
  bool solar_approximate = false;    ///< the built-in approximate solar spectrum was used
  std::string solar_description;     ///< provenance of the solar spectrum
  std::string closure;               ///< two-stream closure name
  std::size_t n_points = 0;          ///< spectral points solved (bins, or bins x k-terms)

  // Gases.
  std::vector<double> layer_h2o_cm;  ///< cm: precipitable water in each layer [layer] (empty in given-optics mode)
  double precipitable_water_cm = 0;  ///< cm: total precipitable water of the column
  /// one line per absorbing gas: "<gas>: <table title> (<origin>)"; the table's provenance follows
  std::vector<std::string> gas_tables;
  /// gases the run does not model ("CO2"), for notes in outputs and on the terminal
  std::vector<std::string> gases_not_modelled;
  /// the built-in H2O table (Lacis & Hansen 1974 spread over the grid) was used: a broadband
  /// representation whose spectral detail in the near infrared is approximate
  bool h2o_broadband = false;

  // Level fluxes, W m-2.
  std::vector<double> direct_down, diffuse_down, diffuse_up, net_down;  ///< broadband [level]
  std::vector<double> band_direct_down, band_diffuse_down, band_diffuse_up, band_net_down;  ///< [band][level]
  std::vector<double> bin_direct_down, bin_diffuse_down, bin_diffuse_up;  ///< [bin][level], spectral output only
  std::vector<double> bin_toa_normal;  ///< W m-2: TOA irradiance normal to the beam per bin

  // Layers.
  std::vector<double> absorbed;          ///< W m-2: broadband absorbed per layer [layer]
  std::vector<double> band_absorbed;     ///< W m-2: per band [band][layer]
  std::vector<double> heating_rate;      ///< K day-1: broadband [layer] (empty without pressures)

  // Column quantities, dimensionless, per band [band] and broadband.
  std::vector<double> band_transmittance_direct, band_transmittance_diffuse, band_transmittance_total;
  std::vector<double> band_planetary_albedo;
  double transmittance_direct = 0, transmittance_diffuse = 0, transmittance_total = 0;
  double planetary_albedo = 0;
  double surface_reflectance = 0;        ///< up / down at the surface, broadband
  std::vector<double> band_tau_rayleigh, band_tau_ozone, band_tau_aerosol;  ///< irradiance-weighted band means (empty in given-optics mode)

  // Energy budget, W m-2.
  double toa_down = 0, toa_up = 0;
  double absorbed_atmosphere = 0, absorbed_surface = 0;

  // Surface products.
  double direct_normal = 0, diffuse_horizontal = 0, global_horizontal = 0;  ///< W m-2
  bool has_spectral_products = false;   ///< PAR and UV index computed (needs wavelength bins)
  double par_w_m2 = 0;                   ///< W m-2: global PAR (400-700 nm) at the surface
  double par_umol_m2_s = 0;              ///< umol m-2 s-1: PAR photon flux at the surface
  double uv_index = 0;                   ///< dimensionless: UV index at the surface

  // Sun position (experiments with a site and a time).
  bool has_sun_position = false;
  double time_unix_s = 0;                ///< s since 1970-01-01T00:00:00Z
  double solar_azimuth_deg = 0;          ///< degrees from north, eastward
  /// false: the sun is below the horizon; every flux and ratio is 0 and nothing was solved
  bool sun_up = true;

  // Plane of array (experiments with plane_of_array), W m-2 on the tilted plane.
  bool has_plane = false;
  double plane_beam = 0, plane_sky_diffuse = 0, plane_ground = 0, plane_global = 0;
  double angle_of_incidence_deg = 0;     ///< degrees: between the sun and the plane's normal
  double plane_ground_albedo = 0;        ///< dimensionless: the ground albedo used
};

/// One row of the per-band summary: what the terminal table and the CSV summary show.
struct BandSummary {
  std::string name;                 ///< band label, or "broadband"
  double lower_nm = 0, upper_nm = 0;  ///< nm: band edges (0 when not stated)
  double toa_down = 0;              ///< W m-2: downward flux at the top of the atmosphere
  double surface_direct = 0, surface_diffuse = 0, surface_global = 0;  ///< W m-2: at the surface
  double transmittance = 0;         ///< dimensionless: surface global / TOA down
  double absorbed_atmosphere = 0;   ///< W m-2: net flux at the top minus at the surface
  double toa_up = 0;                ///< W m-2: upward flux at the top of the atmosphere
};

/// The summary rows: every reporting band, then broadband.
std::vector<BandSummary> band_summary(const RunResult& r);

/// A level quantity ("direct_down", "diffuse_down", "up" or "net_down") per band and then
/// broadband, [band * n_levels + level] with n_bands + 1 bands.
std::vector<double> band_and_broadband(const RunResult& r, const std::string& quantity);

/// Runs several experiments as one batch (the engine under single runs, sweeps, time series and
/// `accuracy`): each case contributes its own optics, sun and surface; the spectral set-up (grid,
/// solar source, gas tables) is built once per distinct set-up and shared; consecutive cases with
/// the same solver settings and layer count are solved by one batched kernel call over all their
/// spectral points. Result i is that of run_experiment(*cases[i]) bit for bit (the problems of a
/// batch are independent). Throws as run_experiment.
std::vector<RunResult> run_experiments(std::span<const Experiment* const> cases);

/// Runs one experiment (a batch of one). Throws std::runtime_error when the physics modules reject an input that
/// the loader could not check (the message names it).
RunResult run_experiment(const Experiment& e);

/// The caution stored with UV index output and printed beside it.
inline constexpr const char* kUvCaution =
    "UV index values are model estimates for clear skies, not medical advice; follow your local "
    "health authority's sun-protection guidance.";
/// The note stored and printed when the built-in water-vapour table is used.
inline constexpr const char* kH2oBroadbandNote =
    "water vapour from the built-in Lacis & Hansen (1974) exponential sum spread over the near-infrared "
    "bins: broadband absorption is represented, spectral detail in the near infrared is approximate";

/// The caution stored with irradiance output for solar-energy use.
inline constexpr const char* kSolarCaution =
    "Clear-sky model irradiance; not a substitute for measured resource data when sizing or "
    "certifying solar equipment - follow local codes and licensed engineering practice.";

}  // namespace solstrata::experiment
