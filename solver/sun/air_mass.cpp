#include "sun/air_mass.hpp"

#include <cmath>
#include <numbers>
#include <stdexcept>

namespace solstrata::sun {

double kasten_young_air_mass(double z) {
  if (!(z >= 0.0 && z <= 90.0)) throw std::invalid_argument("air mass: the zenith angle must be in [0, 90] degrees");
  return 1.0 / (std::cos(z * std::numbers::pi / 180.0) + 0.50572 * std::pow(96.07995 - z, -1.6364));
}

std::vector<double> layer_slant_factors(const std::vector<double>& alt, double zenith_deg, double radius) {
  if (!(zenith_deg >= 0.0 && zenith_deg <= 90.0)) {
    throw std::invalid_argument("slant path: the zenith angle must be in [0, 90] degrees");
  }
  if (alt.size() < 2 || !(radius > 0.0)) throw std::invalid_argument("slant path: needs two or more levels");
  for (std::size_t i = 1; i < alt.size(); ++i)
    if (!(alt[i] < alt[i - 1])) throw std::invalid_argument("slant path: altitudes must decrease from the top");
  const double r0 = radius + alt.back();
  const double s = r0 * std::sin(zenith_deg * std::numbers::pi / 180.0);
  const auto leg = [&](double r) { return std::sqrt(std::max(0.0, (r - s) * (r + s))); };
  std::vector<double> m;
  for (std::size_t i = 0; i + 1 < alt.size(); ++i) {
    const double rt = radius + alt[i], rb = radius + alt[i + 1];
    m.push_back((leg(rt) - leg(rb)) / (rt - rb));
  }
  return m;
}

}  // namespace solstrata::sun
