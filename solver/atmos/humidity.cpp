#include "atmos/humidity.hpp"

#include <cmath>
#include <sstream>
#include <stdexcept>

#include "atmos/number_text.hpp"

namespace solstrata::atmos {
namespace {

std::string num(double x) { return number_text(x); }

void check_temperature(double t_k) {
  if (!std::isfinite(t_k) || t_k <= 100.0 || t_k >= 400.0) {
    throw std::invalid_argument("temperature " + num(t_k) + " K must be in (100, 400)");
  }
}

// J mol-1 K-1: molar gas constant (CODATA 2018, exact from k and N_A).
constexpr double kGasConstant = 8.314462618;

}  // namespace

double saturation_pressure_water_pa(double t_k) {
  check_temperature(t_k);
  const double T = t_k, lt = std::log(T);
  // Murphy & Koop (2005), eq. (10).
  return std::exp(54.842763 - 6763.22 / T - 4.210 * lt + 0.000367 * T +
                  std::tanh(0.0415 * (T - 218.8)) *
                      (53.878 - 1331.22 / T - 9.44523 * lt + 0.014025 * T));
}

double saturation_pressure_ice_pa(double t_k) {
  check_temperature(t_k);
  const double T = t_k;
  // Murphy & Koop (2005), eq. (7).
  return std::exp(9.550426 - 5723.265 / T + 3.53068 * std::log(T) - 0.00728332 * T);
}

double ppmv_from_specific_humidity(double q) {
  if (!std::isfinite(q) || q < 0.0 || q >= 1.0) {
    throw std::invalid_argument("specific humidity " + num(q) + " kg/kg must be in [0, 1)");
  }
  return 1e6 * q / (q + (1.0 - q) * kWaterAirMassRatio);
}

double specific_humidity_from_ppmv(double ppmv) {
  const double x = ppmv * 1e-6;
  return kWaterAirMassRatio * x / (1.0 - x + kWaterAirMassRatio * x);
}

double ppmv_from_relative_humidity(double rh_percent, double t_k, double p_hpa) {
  if (!std::isfinite(rh_percent) || rh_percent < 0.0) {
    throw std::invalid_argument("relative humidity " + num(rh_percent) + " % must be >= 0");
  }
  if (!std::isfinite(p_hpa) || p_hpa <= 0.0) {
    throw std::invalid_argument("pressure " + num(p_hpa) + " hPa must be > 0");
  }
  const double e_pa = 0.01 * rh_percent * saturation_pressure_water_pa(t_k);
  const double x = e_pa / (100.0 * p_hpa);
  if (x >= 1.0) {
    throw std::invalid_argument("relative humidity " + num(rh_percent) + " % at " + num(t_k) +
                                " K means a vapour pressure of " + num(e_pa / 100.0) +
                                " hPa, not below the total pressure " + num(p_hpa) + " hPa");
  }
  return 1e6 * x;
}

double relative_humidity_from_ppmv(double ppmv, double t_k, double p_hpa) {
  return 100.0 * ppmv * 1e-6 * 100.0 * p_hpa / saturation_pressure_water_pa(t_k);
}

std::vector<double> default_h2o_ppmv(const Profile& p, double total_cm) {
  Profile q = p;
  q.h2o_ppmv.clear();
  if (const std::string m = q.validate(); !m.empty()) throw std::invalid_argument(m);
  const double zs = p.altitude_km.back();
  std::vector<double> x(p.n_levels());
  for (std::size_t i = 0; i < x.size(); ++i) {
    // Ideal gas: n_v / n = (rho_v / M_w) / (p / (R T)); rho_0 = 1 g m-3 here, scaled below.
    const double rho_v =
        1e-3 * std::exp(-(p.altitude_km[i] - zs) / kDefaultWaterScaleHeightKm);  // kg m-3
    x[i] = 1e6 * rho_v / (kWaterMolarMass * 1e-3) * kGasConstant * p.temperature_k[i] /
           (100.0 * p.pressure_hpa[i]);
    if (!(p.pressure_hpa[i] > 0.0)) x[i] = 0.0;  // a level at p = 0 (top of the atmosphere)
  }
  q.h2o_ppmv = x;
  scale_h2o_to(q, total_cm);
  return q.h2o_ppmv;
}

}  // namespace solstrata::atmos
