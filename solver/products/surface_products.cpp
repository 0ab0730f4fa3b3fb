#include "products/surface_products.hpp"

#include <algorithm>
#include <cmath>

namespace solstrata::products {

double heating_rate_k_per_day(double absorbed_w_m2, double dp_hpa) {
  return kStandardGravity / kDryAirCp * absorbed_w_m2 / (dp_hpa * 100.0) * 86400.0;
}

double erythema_action(double nm) {
  if (nm < 250.0 || nm > 400.0) return 0.0;
  if (nm <= 298.0) return 1.0;
  if (nm <= 328.0) return std::pow(10.0, 0.094 * (298.0 - nm));
  return std::pow(10.0, 0.015 * (140.0 - nm));
}

namespace {
// Integral of 10^(a (b - x)) dx from x0 to x1.
double exp10_integral(double a, double b, double x0, double x1) {
  const double c = a * std::log(10.0);
  return (std::pow(10.0, a * (b - x0)) - std::pow(10.0, a * (b - x1))) / c;
}
}  // namespace

double erythema_action_mean(double lower_nm, double upper_nm) {
  const double width = upper_nm - lower_nm;
  if (!(width > 0.0)) return erythema_action(lower_nm);
  double sum = 0.0;
  const auto piece = [&](double lo, double hi, auto integral) {
    const double a = std::max(lo, lower_nm), b = std::min(hi, upper_nm);
    if (b > a) sum += integral(a, b);
  };
  piece(250.0, 298.0, [](double a, double b) { return b - a; });
  piece(298.0, 328.0, [](double a, double b) { return exp10_integral(0.094, 298.0, a, b); });
  piece(328.0, 400.0, [](double a, double b) { return exp10_integral(0.015, 140.0, a, b); });
  return sum / width;
}

double photon_flux_umol(double energy_w_m2, double lower_nm, double upper_nm) {
  const double mean_wavelength_m = 0.5 * (lower_nm + upper_nm) * 1e-9;
  return energy_w_m2 * mean_wavelength_m / (kPlanck * kSpeedOfLight * kAvogadroConstant) * 1e6;
}

SurfaceIrradiance surface_irradiance(double direct_horizontal, double diffuse_horizontal,
                                     double mu0) {
  return {direct_horizontal / mu0, diffuse_horizontal, direct_horizontal + diffuse_horizontal};
}

}  // namespace solstrata::products
