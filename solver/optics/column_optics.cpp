#include "optics/column_optics.hpp"

#include <algorithm>
#include <cmath>
#include <mutex>
#include <sstream>
#include <stdexcept>

#include "optics/gas_absorption.hpp"
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

namespace {

/// The gas points of the last few distinct inputs: a sweep over aerosol, sun or surface keeps
/// its atmosphere, so its k-term optics are interpolated once, not once per scenario. Inputs
/// are compared exactly (no hash collisions); thread-safe.
std::shared_ptr<const GasPoints> cached_gas_points(const spectrum::Grid& grid, const LayerState& state,
                                                   const std::vector<GasColumn>& gases) {
  struct Entry {
    std::vector<double> edges;
    LayerState state;
    std::vector<std::shared_ptr<const KTable>> tables;  // held, so an address is never reused
    std::vector<std::vector<double>> columns;
    std::shared_ptr<const GasPoints> points;
  };
  static std::mutex mutex;
  static std::vector<Entry> entries;  // most recent last
  constexpr std::size_t kKeep = 8;
  Entry key;
  for (const spectrum::Bin& b : grid.bins()) key.edges.push_back(b.lower_nm), key.edges.push_back(b.upper_nm);
  key.state = state;
  for (const GasColumn& g : gases) {
    key.tables.push_back(g.table);
    key.columns.push_back(g.molecules);
  }
  const auto same = [&](const Entry& e) {
    return e.edges == key.edges && e.state.pressure_hpa == key.state.pressure_hpa &&
           e.state.temperature_k == key.state.temperature_k && e.state.h2o_vmr == key.state.h2o_vmr &&
           e.tables == key.tables && e.columns == key.columns;
  };
  {
    std::lock_guard<std::mutex> lock(mutex);
    for (const Entry& e : entries)
      if (same(e)) return e.points;
  }
  key.points = std::make_shared<const GasPoints>(gas_points(grid, state, gases));
  std::lock_guard<std::mutex> lock(mutex);
  entries.push_back(key);
  if (entries.size() > kKeep) entries.erase(entries.begin());
  return entries.back().points;
}

/// Rayleigh and ozone optical depth of every layer in every bin, [bin * n_layers + layer].
struct ClearOptics {
  std::vector<double> rayleigh, ozone;
};

/// The clear-sky (Rayleigh and ozone) optics of the last few distinct columns, for the same
/// reason and with the same exact comparison as cached_gas_points: a sweep over the aerosol, the
/// sun or the surface evaluates its cross sections (an exponential and a logarithm per layer and
/// bin for the ozone temperature dependence) once. Thread-safe.
std::shared_ptr<const ClearOptics> cached_clear_optics(const spectrum::Grid& grid, const atmos::LayerColumns& cols,
                                                       double co2_ppmv, const OpticsOptions& options) {
  struct Entry {
    std::vector<double> centres, air, ozone, temperature;
    double co2;
    bool rayleigh, ozone_on, ozone_t;
    std::shared_ptr<const ClearOptics> optics;
  };
  static std::mutex mutex;
  static std::vector<Entry> entries;  // most recent last
  constexpr std::size_t kKeep = 8;
  Entry key{{}, cols.air, cols.ozone_du, cols.temperature_k, co2_ppmv, options.rayleigh, options.ozone,
            options.ozone_temperature_dependence, nullptr};
  for (const spectrum::Bin& b : grid.bins()) key.centres.push_back(b.center_nm);
  const auto same = [&](const Entry& e) {
    return e.centres == key.centres && e.air == key.air && e.ozone == key.ozone && e.temperature == key.temperature &&
           e.co2 == key.co2 && e.rayleigh == key.rayleigh && e.ozone_on == key.ozone_on && e.ozone_t == key.ozone_t;
  };
  {
    std::lock_guard<std::mutex> lock(mutex);
    for (const Entry& e : entries)
      if (same(e)) return e.optics;
  }
  const std::size_t nb = grid.size(), nl = cols.air.size();
  auto c = std::make_shared<ClearOptics>();
  c->rayleigh.assign(nb * nl, 0.0);
  c->ozone.assign(nb * nl, 0.0);
  for (std::size_t b = 0; b < nb; ++b) {
    const double lam = grid.bins()[b].center_nm;
    const double sigma_r = options.rayleigh ? rayleigh_cross_section(lam, co2_ppmv) : 0.0;
    const double sigma_o3 = options.ozone ? ozone_cross_section(lam) : 0.0;
    for (std::size_t l = 0; l < nl; ++l) {
      c->rayleigh[b * nl + l] = sigma_r * cols.air[l];
      if (options.ozone) {
        const double s = options.ozone_temperature_dependence ? ozone_cross_section(lam, cols.temperature_k[l]) : sigma_o3;
        c->ozone[b * nl + l] = s * cols.ozone_du[l] * atmos::kDobsonUnit;
      }
    }
  }
  key.optics = std::move(c);
  std::lock_guard<std::mutex> lock(mutex);
  entries.push_back(std::move(key));
  if (entries.size() > kKeep) entries.erase(entries.begin());
  return entries.back().optics;
}

/// One layer of the mixing over its points (the arithmetic of OpticsMixer written out; Rayleigh,
/// ozone, gas, aerosol in this order), given per point the layer's Rayleigh + ozone depth `ro`,
/// aerosol depth `ap` and scattering depth `sp` (of the point's bin; only the gas depth differs
/// between the k-terms of a bin). A function of its own so that __restrict on the parameters
/// lets the loop vectorise.
void mix_layer(std::size_t np, const double* __restrict ro, const double* __restrict tg_row, const double* __restrict ap,
               const double* __restrict sp, double* __restrict tau, double* __restrict om) {
  for (std::size_t k = 0; k < np; ++k) {
    const double t = (ro[k] + tg_row[k]) + ap[k];
    // Division by a safe denominator, then a select: branch-free, so the loop vectorises.
    const double t_safe = t > 0.0 ? t : 1.0;
    const double w_mix = std::min(std::max(sp[k] / t_safe, 0.0), 1.0);
    tau[k] = t;
    om[k] = t > 0.0 ? w_mix : 0.0;
  }
}

}  // namespace

struct PreparedColumn::Tables {
  std::shared_ptr<const GasPoints> gas;       // k-term gas optical depths [layer * n_points + point]
  std::shared_ptr<const ClearOptics> clear;   // Rayleigh and ozone [bin * n_layers + layer]
  std::vector<double> ta, wa, ga;             // aerosol tau [bin * n_layers + layer], omega and g [bin]
};

PreparedColumn::~PreparedColumn() = default;
PreparedColumn::PreparedColumn(PreparedColumn&&) noexcept = default;
PreparedColumn& PreparedColumn::operator=(PreparedColumn&&) noexcept = default;

PreparedColumn::PreparedColumn(const atmos::Profile& profile, const spectrum::Grid& grid, const AerosolSpec& aerosol,
                               const OpticsOptions& options)
    : tables_(std::make_unique<Tables>()) {
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
  const atmos::Profile* pp = &profile;
  atmos::Profile scaled;
  if (options.ozone && options.total_ozone_du > 0.0) {
    scaled = profile;
    atmos::scale_ozone_to(scaled, options.total_ozone_du);
    pp = &scaled;
  }
  const atmos::Profile& p = *pp;
  const atmos::LayerColumns cols = atmos::layer_columns(p);
  const std::vector<double> share =
      options.aerosol ? layer_fractions(aerosol, p) : std::vector<double>(p.n_layers(), 0.0);

  // Gas columns per layer (molecules cm-2) and the layer states for the tables.
  LayerState state;
  for (std::size_t l = 0; l < p.n_layers(); ++l) {
    state.pressure_hpa.push_back(0.5 * (p.pressure_hpa[l] + p.pressure_hpa[l + 1]));
    state.temperature_k.push_back(cols.temperature_k[l]);
    state.h2o_vmr.push_back(p.h2o_ppmv.empty() ? 0.0 : 0.5e-6 * (p.h2o_ppmv[l] + p.h2o_ppmv[l + 1]));
  }
  std::vector<GasColumn> gases;
  for (const auto& t : options.gas_tables) {
    GasColumn g{t, {}};
    for (std::size_t l = 0; l < p.n_layers(); ++l) {
      if (t->gas == "H2O") {
        g.molecules.push_back(cols.h2o_cm[l] * atmos::kAvogadro / atmos::kWaterMolarMass);
      } else if (t->gas == "O2") {
        g.molecules.push_back(atmos::kO2VolumeFraction * cols.air[l]);
      } else if (t->gas == "CO2") {
        g.molecules.push_back(1e-6 * p.co2_ppmv * cols.air[l]);
      } else {
        throw std::invalid_argument("gas table " + t->origin + " is for '" + t->gas + "'; known gases are H2O, O2 and CO2");
      }
    }
    gases.push_back(std::move(g));
  }
  Tables& tb = *tables_;
  tb.gas = cached_gas_points(grid, state, gases);
  const GasPoints& gp = *tb.gas;

  ColumnOptics& o = meta_;
  o.n_layers = p.n_layers();
  o.n_points = gp.n_points();
  const std::size_t np = o.n_points;
  // Per bin: Rayleigh, ozone and aerosol optics, the same for every k-term of the bin.
  const std::size_t nb = grid.size(), nl = o.n_layers;
  tb.clear = cached_clear_optics(grid, cols, p.co2_ppmv, options);
  const std::vector<double>& tr = tb.clear->rayleigh;
  const std::vector<double>& to = tb.clear->ozone;
  tb.ta.resize(nb * nl);
  tb.wa.resize(nb);
  tb.ga.resize(nb);
  for (std::size_t b = 0; b < nb; ++b) {
    const double lam = grid.bins()[b].center_nm;
    const double tau_a = options.aerosol ? aerosol.column_tau(lam) : 0.0;
    tb.wa[b] = aerosol.omega_at(lam);
    tb.ga[b] = aerosol.g_at(lam);
    for (std::size_t l = 0; l < nl; ++l) tb.ta[b * nl + l] = tau_a * share[l];
  }
  // Column optical depths per component, summed over layers top down (per bin for the
  // components that are the same for every k-term of a bin).
  std::vector<double> col_r(nb, 0.0), col_o(nb, 0.0), col_a(nb, 0.0);
  for (std::size_t b = 0; b < nb; ++b) {
    for (std::size_t l = 0; l < nl; ++l) {
      col_r[b] += tr[b * nl + l];
      col_o[b] += to[b * nl + l];
      col_a[b] += tb.ta[b * nl + l];
    }
  }
  o.point_bin.resize(np);
  o.point_weight.resize(np);
  o.wavelength_nm.resize(np);
  o.column_tau_rayleigh.resize(np);
  o.column_tau_ozone.resize(np);
  o.column_tau_aerosol.resize(np);
  o.column_tau_gas.assign(np, 0.0);
  for (std::size_t k = 0; k < np; ++k) {
    const std::size_t b = gp.points[k].bin;
    o.point_bin[k] = b;
    o.point_weight[k] = gp.points[k].weight;
    o.wavelength_nm[k] = grid.bins()[b].center_nm;
    o.column_tau_rayleigh[k] = col_r[b];
    o.column_tau_ozone[k] = col_o[b];
    o.column_tau_aerosol[k] = col_a[b];
  }
  for (std::size_t l = 0; l < nl; ++l)
    for (std::size_t k = 0; k < np; ++k) o.column_tau_gas[k] += gp.tau[l * np + k];
}

void PreparedColumn::mix_into(const MixedTarget& t) const {
  const ColumnOptics& o = meta_;
  const Tables& tb = *tables_;
  const std::size_t np = o.n_points, nl = o.n_layers;
  const std::vector<double>& tr = tb.clear->rayleigh;
  const std::vector<double>& to = tb.clear->ozone;
  // Mixing (the arithmetic of OpticsMixer, written out so that the loop over points vectorises:
  // layer outermost, every store contiguous). Order of the sums as in OpticsMixer: Rayleigh,
  // ozone, gas, aerosol. What is the same for every k-term of a bin (the scattering depth, the
  // mixed asymmetry and Rayleigh share) is computed per bin; per layer the bin values are spread
  // over the points (a plain copy loop; gathers are not generated for every target), then the
  // per-point arithmetic (total depth, single-scattering albedo) runs as one vector loop. The
  // buffers are the thread's own, reused.
  constexpr double kMaxG = 1.0 - 1e-12;  // OpticsMixer's bound on |g|
  const std::size_t nb = tb.wa.size();
  thread_local std::vector<double> buf;
  buf.resize(3 * np + 5 * nb);
  double* __restrict ro = buf.data();
  double* __restrict ap = ro + np;
  double* __restrict sp = ro + 2 * np;
  double* __restrict ro_b = ro + 3 * np;
  double* __restrict sc_b = ro_b + nb;
  double* __restrict g_b = sc_b + nb;
  double* __restrict rf_b = g_b + nb;
  double* __restrict a_b = rf_b + nb;
  const std::size_t* bin = o.point_bin.data();
  for (std::size_t l = 0; l < nl; ++l) {
    for (std::size_t b = 0; b < nb; ++b) {
      const double r = tr[b * nl + l], a = tb.ta[b * nl + l], w = tb.wa[b];
      const double scat = r + w * a;
      const double scat_g = tb.ga[b] * w * a;
      const double scat_safe = scat > 0.0 ? scat : 1.0;
      ro_b[b] = r + to[b * nl + l];
      a_b[b] = a;
      sc_b[b] = scat;
      g_b[b] = scat > 0.0 ? std::min(std::max(scat_g / scat_safe, -kMaxG), kMaxG) : 0.0;
      rf_b[b] = scat > 0.0 ? std::min(1.0, r / scat_safe) : 0.0;
    }
    const std::size_t at = l * t.stride + t.offset;
    double* __restrict g_out = t.g + at;
    double* __restrict rf_out = t.rayleigh_fraction ? t.rayleigh_fraction + at : nullptr;
    for (std::size_t k = 0; k < np; ++k) {
      const std::size_t b = bin[k];
      ro[k] = ro_b[b];
      ap[k] = a_b[b];
      sp[k] = sc_b[b];
      g_out[k] = g_b[b];
    }
    if (rf_out)
      for (std::size_t k = 0; k < np; ++k) rf_out[k] = rf_b[bin[k]];
    mix_layer(np, ro, tb.gas->tau.data() + l * np, ap, sp, t.tau + at, t.omega + at);
  }
}

ColumnOptics build_column_optics(const atmos::Profile& profile, const spectrum::Grid& grid,
                                 const AerosolSpec& aerosol, const OpticsOptions& options) {
  const PreparedColumn prep(profile, grid, aerosol, options);
  ColumnOptics o = prep.per_point();
  const std::size_t n = o.n_layers * o.n_points;
  o.tau.assign(n, 0.0);
  o.omega.assign(n, 0.0);
  o.g.assign(n, 0.0);
  o.rayleigh_fraction.assign(n, 0.0);
  prep.mix_into({o.tau.data(), o.omega.data(), o.g.data(), o.rayleigh_fraction.data(), o.n_points, 0});
  return o;
}

}  // namespace solstrata::optics
