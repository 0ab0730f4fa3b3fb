#include "optics/rayleigh.hpp"

#include <cmath>
#include <numbers>
#include <stdexcept>
#include <string>

#include "atmos/profile.hpp"

namespace solstrata::optics {
namespace {

void check_wavelength(double wavelength_nm) {
  if (!(wavelength_nm > 200.0 && wavelength_nm < 1e5)) {
    throw std::invalid_argument("Rayleigh: wavelength " + std::to_string(wavelength_nm) +
                                " nm is outside (200, 1e5) nm");
  }
}

}  // namespace

double air_refractive_index(double wavelength_nm, double co2_ppmv) {
  check_wavelength(wavelength_nm);
  const double sigma = 1000.0 / wavelength_nm;  // um-1
  const double s2 = sigma * sigma;
  // Peck & Reeder (1972), 300 ppm CO2 (as in Bodhaine et al. 1999).
  const double n300m1 = (8060.51 + 2480990.0 / (132.274 - s2) + 17455.7 / (39.32957 - s2)) * 1e-8;
  // Edlén (1966) CO2 scaling (as in Bodhaine et al. 1999).
  return 1.0 + n300m1 * (1.0 + 0.54 * (co2_ppmv * 1e-6 - 0.0003));
}

double air_king_factor(double wavelength_nm, double co2_ppmv) {
  check_wavelength(wavelength_nm);
  const double l2 = std::pow(wavelength_nm / 1000.0, -2);  // um-2
  // Bates (1984) as in Bodhaine et al. (1999); Ar 1.00, CO2 1.15.
  const double f_n2 = 1.034 + 3.17e-4 * l2;
  const double f_o2 = 1.096 + 1.385e-3 * l2 + 1.448e-4 * l2 * l2;
  const double c_pct = co2_ppmv * 1e-4;  // percent by volume
  // Bodhaine et al. (1999): volume-weighted mean (N2 78.084 %, O2 20.946 %, Ar 0.934 %).
  return (78.084 * f_n2 + 20.946 * f_o2 + 0.934 * 1.00 + c_pct * 1.15) /
         (78.084 + 20.946 + 0.934 + c_pct);
}

double rayleigh_cross_section(double wavelength_nm, double co2_ppmv) {
  const double n = air_refractive_index(wavelength_nm, co2_ppmv);
  const double F = air_king_factor(wavelength_nm, co2_ppmv);
  constexpr double kNs = 2.546899e19;  // cm-3: molecules at 288.15 K, 1013.25 hPa
  const double lam = wavelength_nm * 1e-7;  // cm
  const double n2 = n * n;
  const double pi3 = std::numbers::pi * std::numbers::pi * std::numbers::pi;
  const double r = (n2 - 1.0) / (n2 + 2.0);
  // Bodhaine et al. (1999), cross section per molecule.
  return 24.0 * pi3 * r * r / (lam * lam * lam * lam * kNs * kNs) * F;
}

double rayleigh_column_optical_depth(double wavelength_nm, double pressure_hpa,
                                     double latitude_deg, double surface_altitude_m,
                                     double co2_ppmv) {
  if (!(pressure_hpa >= 0.0 && pressure_hpa < 2000.0)) {
    throw std::invalid_argument("Rayleigh: pressure " + std::to_string(pressure_hpa) +
                                " hPa is outside [0, 2000)");
  }
  const double zc = 0.73737 * surface_altitude_m + 5517.56;  // m: mass-weighted column height
  const double g = atmos::gravity_cm_s2(latitude_deg, zc);
  const double m = atmos::air_molar_mass(co2_ppmv) / atmos::kAvogadro;  // g per molecule
  // Bodhaine et al. (1999), in cgs: P in dyn cm-2 (1 hPa = 1000 dyn cm-2).
  return rayleigh_cross_section(wavelength_nm, co2_ppmv) * pressure_hpa * 1000.0 / (m * g);
}

double depolarisation_ratio(double king_factor) {
  // Inverting F = (6 + 3 rho)/(6 - 7 rho): rho = 6 (F - 1)/(3 + 7 F).
  return 6.0 * (king_factor - 1.0) / (3.0 + 7.0 * king_factor);
}

}  // namespace solstrata::optics
