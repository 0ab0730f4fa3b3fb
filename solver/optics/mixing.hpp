// Mixing of optical components (Rayleigh, gases, aerosol) into one layer's tau, omega, g.
#pragma once

#include <algorithm>

namespace solstrata::optics {

/// Optical properties of one layer at one spectral point.
struct LayerOptics {
  double tau = 0.0;    ///< dimensionless: optical depth, >= 0
  double omega = 0.0;  ///< dimensionless: single-scattering albedo, [0, 1]
  double g = 0.0;      ///< dimensionless: asymmetry parameter, (-1, 1)
};

/// Running sums for mixing components: tau = sum tau_i, omega = sum(omega_i tau_i) / tau,
/// g = sum(g_i omega_i tau_i) / (omega tau) (extinction- and scattering-weighted means; e.g.
/// Liou 2002, "An Introduction to Atmospheric Radiation", sec. 6.5 / common practice).
class OpticsMixer {
 public:
  /// Adds a component with optical depth `tau` (>= 0), albedo `omega` and asymmetry `g`.
  void add(double tau, double omega, double g) {
    tau_ += tau;
    scat_ += omega * tau;
    scat_g_ += g * omega * tau;
  }
  /// Adds a pure absorber (omega = 0), e.g. ozone.
  void add_absorber(double tau) { tau_ += tau; }
  /// Adds a Rayleigh scatterer (omega = 1, g = 0: the Rayleigh phase function is symmetric).
  void add_rayleigh(double tau) {
    tau_ += tau;
    scat_ += tau;
  }

  /// The mixture. tau = 0 gives omega = 0 and g = 0 (no extinction: the values do not matter to
  /// the solver but must be finite); omega tau = 0 gives g = 0. Round-off is clamped so that
  /// omega <= 1 and |g| < 1.
  [[nodiscard]] LayerOptics result() const {
    LayerOptics o;
    o.tau = tau_;
    if (tau_ > 0.0) o.omega = std::clamp(scat_ / tau_, 0.0, 1.0);
    if (scat_ > 0.0) o.g = std::clamp(scat_g_ / scat_, -kMaxG, kMaxG);
    return o;
  }

 private:
  static constexpr double kMaxG = 1.0 - 1e-12;
  double tau_ = 0.0;
  double scat_ = 0.0;
  double scat_g_ = 0.0;
};

}  // namespace solstrata::optics
