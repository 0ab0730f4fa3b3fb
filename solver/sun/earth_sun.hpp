// Earth–Sun distance correction of the top-of-atmosphere solar irradiance.
#pragma once

#include <string>

namespace solstrata::sun {

/// dimensionless: the factor (r0/r)^2 by which the mean-distance solar irradiance is multiplied on
/// day `day_of_year` (1 = 1 January, fractional days allowed, [1, 367)), from the Fourier series of
/// Spencer (1971), Search 2(5), 172 (as reproduced in Iqbal 1983, "An Introduction to Solar
/// Radiation"): Gamma = 2 pi (d - 1)/365,
///   (r0/r)^2 = 1.000110 + 0.034221 cos G + 0.001280 sin G + 0.000719 cos 2G + 0.000077 sin 2G.
/// Stated accuracy about 1e-4. Throws std::invalid_argument outside [1, 367).
double earth_sun_factor(double day_of_year);

/// rad: solar declination on day `day_of_year` from Spencer (1971) (same source and range as
/// earth_sun_factor); stated accuracy about 0.0006 rad.
double solar_declination(double day_of_year);

/// How the Earth–Sun distance factor of a scenario is fixed: from a day of year, or given directly.
struct DistanceSpec {
  /// day of year (1 = 1 January) used when `factor` is not given; 0 means "mean distance".
  double day_of_year = 0.0;
  /// dimensionless (r0/r)^2 given directly; used when > 0, overriding day_of_year.
  double factor = 0.0;

  /// Empty when valid, else a sentence naming the field, its value and the rule.
  [[nodiscard]] std::string validate() const;
  /// dimensionless: the resolved (r0/r)^2 (1 at mean distance). Throws on invalid specs.
  [[nodiscard]] double resolve() const;
};

}  // namespace solstrata::sun
