#include "optics/column_optics.hpp"

#include <cmath>
#include <sstream>
#include <stdexcept>

#include "optics/mixing.hpp"
#include "optics/ozone.hpp"
#include "optics/rayleigh.hpp"

namespace solstrata::optics {

std::string OpticsOptions::validate() const {
  if (!std::isfinite(total_ozone_du) || total_ozone_du < 0.0 || total_ozone_du > 2000.0) {
    std::ostringstream s;
    s << "total_ozone_du = " << total_ozone_du << " DU must be in [0, 2000] (0 keeps the profile's)";
    return s.str();
  }
  return {};
}

ColumnOptics build_column_optics(const atmos::Profile& profile, const spectrum::Grid& grid,
                                 const AerosolSpec& aerosol, const OpticsOptions& options) {
  if (const std::string msg = options.validate(); !msg.empty()) throw std::invalid_argument(msg);
  if (const std::string msg = profile.validate(); !msg.empty()) throw std::invalid_argument(msg);
  if (grid.size() == 0) throw std::invalid_argument("the spectral grid has no bins");
  for (const spectrum::Bin& b : grid.bins()) {
    if (!(b.center_nm >= kOzoneTableLowerNm && b.center_nm <= 1e5)) {
      std::ostringstream s;
      s << "spectral bin centre " << b.center_nm << " nm is outside the optics' range 230 nm .. 100 um";
      throw std::invalid_argument(s.str());
    }
  }
  atmos::Profile p = profile;
  if (options.ozone && options.total_ozone_du > 0.0) atmos::scale_ozone_to(p, options.total_ozone_du);
  const atmos::LayerColumns cols = atmos::layer_columns(p);
  const std::vector<double> share =
      options.aerosol ? layer_fractions(aerosol, p) : std::vector<double>(p.n_layers(), 0.0);

  const std::vector<spectrum::SpectralPoint> points = spectrum::plain_points(grid);
  ColumnOptics o;
  o.n_layers = p.n_layers();
  o.n_points = points.size();
  const std::size_t np = o.n_points;
  o.tau.assign(o.n_layers * np, 0.0);
  o.omega.assign(o.n_layers * np, 0.0);
  o.g.assign(o.n_layers * np, 0.0);
  o.column_tau_rayleigh.assign(np, 0.0);
  o.column_tau_ozone.assign(np, 0.0);
  o.column_tau_aerosol.assign(np, 0.0);
  for (std::size_t k = 0; k < np; ++k) {
    const double lam = grid.bins()[points[k].bin].center_nm;
    o.point_bin.push_back(points[k].bin);
    o.point_weight.push_back(points[k].weight);
    o.wavelength_nm.push_back(lam);
    const double sigma_r = options.rayleigh ? rayleigh_cross_section(lam, p.co2_ppmv) : 0.0;
    const double sigma_o3 = options.ozone ? ozone_cross_section(lam) : 0.0;
    const double tau_a = options.aerosol ? aerosol.column_tau(lam) : 0.0;
    const double w_a = aerosol.omega_at(lam), g_a = aerosol.g_at(lam);
    for (std::size_t l = 0; l < o.n_layers; ++l) {
      OpticsMixer mix;
      const double tr = sigma_r * cols.air[l];
      mix.add_rayleigh(tr);
      o.column_tau_rayleigh[k] += tr;
      if (options.ozone) {
        const double s = options.ozone_temperature_dependence
                             ? ozone_cross_section(lam, cols.temperature_k[l])
                             : sigma_o3;
        const double to = s * cols.ozone_du[l] * atmos::kDobsonUnit;
        mix.add_absorber(to);
        o.column_tau_ozone[k] += to;
      }
      const double ta = tau_a * share[l];
      mix.add(ta, w_a, g_a);
      o.column_tau_aerosol[k] += ta;
      const LayerOptics r = mix.result();
      o.tau[l * np + k] = r.tau;
      o.omega[l * np + k] = r.omega;
      o.g[l * np + k] = r.g;
    }
  }
  return o;
}

}  // namespace solstrata::optics
