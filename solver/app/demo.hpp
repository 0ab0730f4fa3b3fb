// `solstrata demo`: a built-in single-band column, solved and printed.
#pragma once

#include <iosfwd>
#include <string>

#include "rt/closure.hpp"

namespace solstrata::app {

/// Options of the demo subcommand.
struct DemoOptions {
  /// Solar zenith angle in degrees, [0, 90).
  double solar_zenith_deg = 30.0;
  /// Lambertian surface albedo (direct and diffuse), [0, 1].
  double albedo = 0.2;
  /// Two-stream closure.
  rt::Closure closure = rt::Closure::delta_eddington;
};

/// Solves the demo column and writes the level fluxes as a table to `os`. Returns an exit code.
int run_demo(const DemoOptions& options, std::ostream& os, std::ostream& err);

}  // namespace solstrata::app
