// Small experiment texts shared by the tests: cheap columns (a few hundredths of a second per
// scenario) that a test completes with its own sweep, times or site section.
#pragma once

#include <string>

namespace solstrata::testing {

/// A column on a coarse 290-2000 nm grid with two bands (uv, rest): ozone, a moderate continental
/// aerosol, the sun at 30 degrees, albedo 0.2. No sweep.
inline const std::string kSmallColumn = R"(atmosphere: {ozone_column_du: 300}
aerosol: {type: continental_moderate, optical_depth: 0.2}
sun: {solar_zenith_deg: 30}
surface: {albedo: 0.2}
spectrum:
  bins: [{from_nm: 290, to_nm: 400, step_nm: 10}, {from_nm: 400, to_nm: 2000, step_nm: 100}]
  bands: [{name: uv, from_nm: 290, to_nm: 400}, {name: rest, from_nm: 400, to_nm: 2000}]
)";

/// A column for time series on a coarse 300-3000 nm grid with three bands (uv, visible,
/// infrared): ozone, water vapour, a light continental aerosol, albedo 0.2. No sun, site or times.
inline const std::string kSeriesColumn = R"(atmosphere: {ozone_column_du: 300, precipitable_water_cm: 1.5}
aerosol: {type: continental_moderate, optical_depth: 0.15}
surface: {albedo: 0.2}
spectrum:
  bins: [{from_nm: 300, to_nm: 400, step_nm: 25}, {from_nm: 400, to_nm: 1000, step_nm: 100}, {from_nm: 1000, to_nm: 3000, step_nm: 500}]
  bands: [{name: uv, from_nm: 300, to_nm: 400}, {name: visible, from_nm: 400, to_nm: 700}, {name: infrared, from_nm: 700, to_nm: 3000}]
)";

}  // namespace solstrata::testing
