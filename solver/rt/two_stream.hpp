// Two-stream solution of plane-parallel layers: one layer, and batched multi-layer columns.
#pragma once

#include <cstddef>
#include <span>
#include <string>
#include <vector>

#include "rt/closure.hpp"

namespace solstrata::rt {

/// Options of the two-stream solver.
struct SolverOptions {
  /// Two-stream closure; delta scaling follows the closure (only delta_eddington scales).
  Closure closure = Closure::delta_eddington;
  /// Problems solved together in one cache-sized block (the vector loop runs over a block).
  std::size_t block_size = 128;
  /// Arithmetic of the kernel: double (default), or float, twice the vector width, with fluxes
  /// good to about 1e-5 relative (inputs and outputs stay double).
  bool single_precision = false;

  /// Empty when valid, else a sentence naming the field, its value and the rule.
  [[nodiscard]] std::string validate() const;
};

/// Reflectance and transmittance of one homogeneous layer over a black surface.
/// All quantities are dimensionless fractions of the incident flux on a horizontal surface.
struct LayerResponse {
  double r_beam;      ///< diffuse reflectance for collimated incidence at mu0
  double t_beam;      ///< diffuse (scattered) transmittance for collimated incidence at mu0
  double t_direct;    ///< direct transmittance exp(-tau'/mu0) of the (delta-scaled) beam
  double r_diffuse;   ///< reflectance for diffuse (isotropic) incidence
  double t_diffuse;   ///< transmittance for diffuse (isotropic) incidence
};

/// Solves one layer (optical depth tau >= 0, single-scattering albedo omega in [0, 1], asymmetry
/// g in (-1, 1), cosine of solar zenith mu0 in (0, 1]) with the chosen closure, after delta
/// scaling where the closure calls for it (then t_direct is the scaled beam). For a layer with a
/// pseudo-spherical slant factor m (ColumnBatch::beam_path) pass its effective cosine mu0 = 1/m:
/// the responses are per unit direct flux at the layer's top, so nothing else changes. Throws
/// std::invalid_argument on out-of-range input. Reference scalar path; the batch kernel uses the
/// same formulas.
LayerResponse solve_layer(double tau, double omega, double g, double mu0,
                          Closure closure = Closure::delta_eddington);

/// Outcome of a solver call: a value, not an exception (the library never prints or exits).
struct Status {
  bool ok = true;
  std::string message;  ///< empty when ok; otherwise names the array, index, value and rule
};

/// Inputs of a batch of independent columns ("problems": columns x spectral points).
/// Memory layout (struct of arrays): per-layer arrays are [layer * n_problems + problem], layer 0
/// at the top of the atmosphere; per-problem arrays are [problem]. All spans must stay valid for
/// the call.
struct ColumnBatch {
  std::size_t n_problems = 0;
  std::size_t n_layers = 0;
  std::span<const double> tau;     ///< layer optical depth, >= 0 (dimensionless)
  std::span<const double> omega;   ///< layer single-scattering albedo, [0, 1]
  std::span<const double> g;       ///< layer asymmetry parameter, (-1, 1)
  std::span<const double> mu0;     ///< cosine of the solar zenith angle, (0, 1]
  std::span<const double> solar;   ///< TOA irradiance normal to the beam (W m-2 or W m-2 nm-1), >= 0
  std::span<const double> albedo_direct;   ///< Lambertian surface albedo for the direct beam, [0, 1]
  std::span<const double> albedo_diffuse;  ///< Lambertian surface albedo for diffuse light, [0, 1]
  /// Optional pseudo-spherical direct beam: slant factor m of each layer, the beam's path length
  /// per unit vertical optical depth (dimensionless, finite, >= 1), [layer * n_problems +
  /// problem]. Empty = plane-parallel, m = 1/mu0 everywhere. Layer l attenuates the beam by
  /// exp(-tau_l m_l), and its scattering of the beam is that of a plane-parallel layer lit at the
  /// effective cosine 1/m_l by the direct flux arriving at its top (the pseudo-spherical
  /// approximation, e.g. Dahlback & Stamnes 1991, Planet. Space Sci. 39, 671). The incident flux
  /// at the top stays mu0 * solar; the direct flux at level l is mu0 * solar * exp(-sum tau m).
  std::span<const double> beam_path{};
  /// Optional share of each layer's scattering optical depth due to Rayleigh scattering, [0, 1]
  /// (dimensionless), [layer * n_problems + problem]. Empty = 0. Only the multi-stream reference
  /// uses it (for the Rayleigh phase function); the two-stream closures see g alone (Rayleigh
  /// scattering has g = 0, so `g` already is the layer's mean asymmetry).
  std::span<const double> rayleigh_fraction{};
};

/// Level fluxes of a batch, [level * n_problems + problem], level 0 = top of atmosphere,
/// level n_layers = surface, in the unit of `solar` (W m-2 for broadband). Fluxes are on a
/// horizontal surface.
///
/// Direct-beam convention: `direct_down` is the true unscattered beam mu0 * solar *
/// exp(-sum tau / mu0) of the *unscaled* optical depth. `diffuse_down` is the total downward flux
/// minus that beam, so the forward-scattered light that delta scaling folds back into the scaled
/// beam is reported as diffuse, where it physically belongs.
struct LevelFluxes {
  std::span<double> direct_down;
  std::span<double> diffuse_down;
  std::span<double> diffuse_up;
};

/// Scratch memory for solve_columns, reused across calls so the hot path does not allocate.
class Workspace {
 public:
  /// Grows the buffers to hold `n_layers` layers of a block of `block_size` problems.
  void reserve(std::size_t n_layers, std::size_t block_size);
  /// The same for the float kernel.
  void reserve_float(std::size_t n_layers, std::size_t block_size);
  double* data() { return buf_.data(); }
  float* data_float() { return buf_f_.data(); }

 private:
  std::vector<double> buf_;
  std::vector<float> buf_f_;
};

/// Checks every input of a batch: sizes, finiteness and ranges. Status names the first offender.
Status validate(const ColumnBatch& in, const LevelFluxes& out);

/// Solves every column of the batch with the two-stream closure over a Lambertian surface,
/// combining layers by the adding method (e.g. Liou 2002, "An Introduction to Atmospheric
/// Radiation", sec. 6.5). Validates the inputs first and returns a failed Status (leaving `out`
/// untouched) for invalid input. Never produces NaN or Inf for valid input.
Status solve_columns(const ColumnBatch& in, const SolverOptions& options, LevelFluxes out,
                     Workspace& work);

/// The same without input validation: the caller guarantees valid input (as validate() checks).
/// This is the kernel that bench/ times.
void solve_columns_unchecked(const ColumnBatch& in, const SolverOptions& options, LevelFluxes out,
                             Workspace& work);

}  // namespace solstrata::rt
