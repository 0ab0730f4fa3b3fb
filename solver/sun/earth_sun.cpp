#include "sun/earth_sun.hpp"

#include <cmath>
#include <numbers>
#include <stdexcept>
#include <string>

namespace solstrata::sun {
namespace {

// rad: Spencer's day angle Gamma = 2 pi (d - 1)/365.
double day_angle(double day_of_year) {
  if (!(day_of_year >= 1.0 && day_of_year < 367.0)) {
    throw std::invalid_argument("day of year " + std::to_string(day_of_year) +
                                " is outside [1, 367)");
  }
  return 2.0 * std::numbers::pi * (day_of_year - 1.0) / 365.0;
}

}  // namespace

double earth_sun_factor(double day_of_year) {
  const double G = day_angle(day_of_year);
  // Spencer (1971), coefficients as reproduced by Iqbal (1983).
  return 1.000110 + 0.034221 * std::cos(G) + 0.001280 * std::sin(G) +
         0.000719 * std::cos(2 * G) + 0.000077 * std::sin(2 * G);
}

double solar_declination(double day_of_year) {
  const double G = day_angle(day_of_year);
  // Spencer (1971), coefficients as reproduced by Iqbal (1983).
  return 0.006918 - 0.399912 * std::cos(G) + 0.070257 * std::sin(G) -
         0.006758 * std::cos(2 * G) + 0.000907 * std::sin(2 * G) -
         0.002697 * std::cos(3 * G) + 0.00148 * std::sin(3 * G);
}

std::string DistanceSpec::validate() const {
  if (!std::isfinite(factor) || factor < 0.0) {
    return "distance factor " + std::to_string(factor) + " must be > 0 (or 0 to use the day of year)";
  }
  if (factor > 0.0 && (factor < 0.9 || factor > 1.1)) {
    return "distance factor " + std::to_string(factor) +
           " must lie in [0.9, 1.1] (the Earth's orbit gives 0.967..1.035)";
  }
  if (factor == 0.0 && day_of_year != 0.0 && !(day_of_year >= 1.0 && day_of_year < 367.0)) {
    return "day_of_year " + std::to_string(day_of_year) +
           " must lie in [1, 367) (or be 0 for the mean Earth-Sun distance)";
  }
  return {};
}

double DistanceSpec::resolve() const {
  if (const std::string msg = validate(); !msg.empty()) throw std::invalid_argument(msg);
  if (factor > 0.0) return factor;
  if (day_of_year == 0.0) return 1.0;
  return earth_sun_factor(day_of_year);
}

}  // namespace solstrata::sun
