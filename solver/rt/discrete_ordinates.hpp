// Exact multi-stream reference: discrete ordinates for the azimuthally averaged fluxes.
#pragma once

#include <string>

#include "rt/two_stream.hpp"

namespace solstrata::rt {

/// Options of the multi-stream reference solver.
struct ReferenceOptions {
  /// Total number of streams 2N (dimensionless, even, 4..64): N Gauss-Legendre directions per
  /// hemisphere. The phase function keeps Legendre moments 0..2N-1.
  int streams = 16;
  /// Delta-M scaling (Wiscombe 1977): fold the Legendre moment of order 2N into the forward peak.
  bool delta_m = true;

  /// Empty when valid, else a sentence naming the field, its value and the rule.
  [[nodiscard]] std::string validate() const;
};

/// Solves every column of the batch with the discrete-ordinate method (Chandrasekhar 1960;
/// Stamnes, Tsay, Wiscombe & Jayaweera 1988) for the azimuthally averaged (m = 0) intensity,
/// which is all that the fluxes need. Same inputs, output layout and direct-beam convention as
/// solve_columns: `direct_down` is the unscattered beam of the unscaled optical depth, and
/// `diffuse_down` is the total downward flux minus it. Phase function: Henyey-Greenstein with
/// asymmetry g (Legendre moments g^l), truncated after order streams - 1 (after delta-M scaling
/// when `delta_m` is set). Fluxes are in the unit of `solar` (W m-2 for broadband).
///
/// Slow and exact: problems are solved one at a time (an eigenproblem per layer and a sparse
/// boundary-value solve per column). Meant as the yardstick for the two-stream closures, not as a
/// production path. Validates the inputs (rt::validate) and the options first; returns a failed
/// Status (leaving `out` untouched) when either is invalid. Never produces NaN or Inf for valid
/// input; omega = 1 (conservative scattering) is handled exactly.
Status solve_columns_reference(const ColumnBatch& in, const ReferenceOptions& options,
                               LevelFluxes out);

}  // namespace solstrata::rt
