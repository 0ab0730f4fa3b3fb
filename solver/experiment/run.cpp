#include "experiment/run.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <mutex>
#include <cstdio>
#include <numbers>
#include <optional>
#include <span>
#include <stdexcept>
#include <utility>

#include "optics/column_optics.hpp"
#include "optics/h2o_lacis_hansen.hpp"
#include "products/surface_products.hpp"
#include "rt/discrete_ordinates.hpp"
#include "rt/two_stream.hpp"
#include "spectrum/solar.hpp"
#include "sun/air_mass.hpp"
#include "sun/tilted_plane.hpp"

namespace solstrata::experiment {
namespace {

/// The solver's problems: one per spectral point (atmosphere mode) or band (given optics); in a
/// batch of cases, the points of every case one after another.
struct Problems {
  std::size_t n = 0, nl = 0;
  std::vector<double> tau, omega, g, mu0, solar, albedo_direct, albedo_diffuse;
  std::vector<double> rayleigh_fraction;  ///< [layer * n + problem], empty unless the reference solves
  std::vector<double> beam_path;          ///< [layer * n + problem] slant factors, empty = plane-parallel
};

/// Level fluxes of the problems, [level * n + problem].
struct Fluxes {
  std::vector<double> dir, dif, up;
};

/// The level fluxes of a batch's problems, in buffers reused by the thread's next batch (the
/// solver writes every value; a sweep would otherwise allocate and zero them per scenario). Valid
/// until the thread's next call. `e` gives the solver settings (the same for every case of a batch).
const Fluxes& solve(const Problems& p, const Experiment& e) {
  thread_local Fluxes f;
  const std::size_t nlev = p.nl + 1;
  f.dir.resize(nlev * p.n);
  f.dif.resize(nlev * p.n);
  f.up.resize(nlev * p.n);
  // No light (the sun below the horizon): every flux is exactly 0, nothing to solve.
  if (std::all_of(p.solar.begin(), p.solar.end(), [](double v) { return v == 0.0; })) {
    std::fill(f.dir.begin(), f.dir.end(), 0.0);
    std::fill(f.dif.begin(), f.dif.end(), 0.0);
    std::fill(f.up.begin(), f.up.end(), 0.0);
    return f;
  }
  rt::ColumnBatch batch{p.n, p.nl, p.tau, p.omega, p.g, p.mu0, p.solar, p.albedo_direct, p.albedo_diffuse};
  batch.rayleigh_fraction = p.rayleigh_fraction;  // the reference's Rayleigh phase function
  batch.beam_path = p.beam_path;                  // pseudo-spherical direct beam
  if (e.reference_solver) {
    rt::ReferenceOptions ref;
    ref.streams = e.reference_streams;
    const rt::Status st = rt::solve_columns_reference(batch, ref, {f.dir, f.dif, f.up});
    if (!st.ok) throw std::runtime_error("reference solver: " + st.message);
    return f;
  }
  rt::SolverOptions opt;
  opt.closure = e.closure;
  opt.single_precision = e.single_precision;
  thread_local rt::Workspace work;  // reused: no allocation and zeroing per run
  const rt::Status st = rt::solve_columns(batch, opt, {f.dir, f.dif, f.up}, work);
  if (!st.ok) throw std::runtime_error("two-stream solver: " + st.message);
  return f;
}

/// Sums of consecutive problems into groups at every level, [group * nlev + level]: group b is
/// problems offset + first[b] .. offset + first[b + 1] of the batch (the points of a bin, the bands
/// of given optics), in order.
void group_sums(const Fluxes& f, std::size_t stride, std::size_t offset, std::size_t nlev,
              const std::vector<std::size_t>& first, std::vector<double>& dir, std::vector<double>& dif,
              std::vector<double>& up) {
  const std::size_t nbins = first.size() - 1;
  dir.resize(nbins * nlev);
  dif.resize(nbins * nlev);
  up.resize(nbins * nlev);
  // Level outermost: the fluxes of one level are contiguous over problems.
  for (std::size_t lev = 0; lev < nlev; ++lev) {
    const double* fd = f.dir.data() + lev * stride + offset;
    const double* ff = f.dif.data() + lev * stride + offset;
    const double* fu = f.up.data() + lev * stride + offset;
    for (std::size_t b = 0; b < nbins; ++b) {
      double sd = 0, sf = 0, su = 0;
      for (std::size_t q = first[b]; q < first[b + 1]; ++q) {
        sd += fd[q];
        sf += ff[q];
        su += fu[q];
      }
      dir[b * nlev + lev] = sd;
      dif[b * nlev + lev] = sf;
      up[b * nlev + lev] = su;
    }
  }
}

double safe_ratio(double a, double b) { return b > 0.0 ? a / b : 0.0; }

/// Fills the derived products of a result whose level fluxes are set.
void derive(RunResult& r) {
  const std::size_t nlev = r.n_levels, nl = r.n_layers;
  const auto net = [&](const std::vector<double>& d, const std::vector<double>& f,
                       const std::vector<double>& u, std::vector<double>& out) {
    out.resize(d.size());
    for (std::size_t i = 0; i < d.size(); ++i) out[i] = d[i] + f[i] - u[i];
  };
  net(r.direct_down, r.diffuse_down, r.diffuse_up, r.net_down);
  net(r.band_direct_down, r.band_diffuse_down, r.band_diffuse_up, r.band_net_down);
  r.absorbed.resize(nl);
  for (std::size_t l = 0; l < nl; ++l) r.absorbed[l] = r.net_down[l] - r.net_down[l + 1];
  r.band_absorbed.resize(r.n_bands * nl);
  for (std::size_t b = 0; b < r.n_bands; ++b)
    for (std::size_t l = 0; l < nl; ++l)
      r.band_absorbed[b * nl + l] = r.band_net_down[b * nlev + l] - r.band_net_down[b * nlev + l + 1];
  r.heating_rate.clear();
  if (r.level_pressure_hpa.size() == nlev) {
    r.heating_rate.resize(nl);
    for (std::size_t l = 0; l < nl; ++l) {
      const double dp = r.level_pressure_hpa[l + 1] - r.level_pressure_hpa[l];
      r.heating_rate[l] = dp > 0.0 ? products::heating_rate_k_per_day(r.absorbed[l], dp) : 0.0;
    }
  }
  const std::size_t s = nlev - 1;  // surface level
  r.toa_down = r.direct_down[0] + r.diffuse_down[0];
  r.toa_up = r.diffuse_up[0];
  r.transmittance_direct = safe_ratio(r.direct_down[s], r.toa_down);
  r.transmittance_diffuse = safe_ratio(r.diffuse_down[s], r.toa_down);
  r.transmittance_total = safe_ratio(r.direct_down[s] + r.diffuse_down[s], r.toa_down);
  r.planetary_albedo = safe_ratio(r.toa_up, r.toa_down);
  r.surface_reflectance = safe_ratio(r.diffuse_up[s], r.direct_down[s] + r.diffuse_down[s]);
  r.absorbed_surface = r.net_down[s];
  r.absorbed_atmosphere = r.net_down[0] - r.net_down[s];
  r.band_transmittance_direct.resize(r.n_bands);
  r.band_transmittance_diffuse.resize(r.n_bands);
  r.band_transmittance_total.resize(r.n_bands);
  r.band_planetary_albedo.resize(r.n_bands);
  for (std::size_t b = 0; b < r.n_bands; ++b) {
    const double top = r.band_direct_down[b * nlev] + r.band_diffuse_down[b * nlev];
    r.band_transmittance_direct[b] = safe_ratio(r.band_direct_down[b * nlev + s], top);
    r.band_transmittance_diffuse[b] = safe_ratio(r.band_diffuse_down[b * nlev + s], top);
    r.band_transmittance_total[b] =
        safe_ratio(r.band_direct_down[b * nlev + s] + r.band_diffuse_down[b * nlev + s], top);
    r.band_planetary_albedo[b] = safe_ratio(r.band_diffuse_up[b * nlev], top);
  }
  const products::SurfaceIrradiance si =
      products::surface_irradiance(r.direct_down[s], r.diffuse_down[s], r.mu0);
  r.direct_normal = si.direct_normal;
  r.diffuse_horizontal = si.diffuse_horizontal;
  r.global_horizontal = si.global_horizontal;
}

RunResult run_given(const Experiment& e, double mu0, double factor) {
  const GivenOptics& g = e.given;
  Problems p;
  p.n = g.bands.size();
  p.nl = g.bands.front().layers.size();
  p.tau.resize(p.nl * p.n);
  p.omega.resize(p.nl * p.n);
  p.g.resize(p.nl * p.n);
  for (std::size_t b = 0; b < p.n; ++b) {
    for (std::size_t l = 0; l < p.nl; ++l) {
      const GivenLayer& L = g.bands[b].layers[l];
      p.tau[l * p.n + b] = L.tau;
      p.omega[l * p.n + b] = L.omega;
      p.g[l * p.n + b] = L.g;
    }
    p.mu0.push_back(mu0);
    p.solar.push_back(g.bands[b].solar_w_m2 * factor);
    p.albedo_direct.push_back(e.albedo_direct);
    p.albedo_diffuse.push_back(e.albedo_diffuse);
  }
  const Fluxes& f = solve(p, e);
  RunResult r;
  r.n_levels = p.nl + 1;
  r.n_layers = p.nl;
  r.n_bands = p.n;
  r.level_pressure_hpa = g.pressure_hpa;
  std::vector<std::size_t> each(p.n + 1);  // one band per group, then all bands in one
  for (std::size_t b = 0; b <= p.n; ++b) each[b] = b;
  for (std::size_t b = 0; b < p.n; ++b) {
    r.band_names.push_back(g.bands[b].name);
    r.band_lower_nm.push_back(g.bands[b].lower_nm);
    r.band_upper_nm.push_back(g.bands[b].upper_nm);
    r.toa_normal_w_m2 += p.solar[b];
  }
  group_sums(f, p.n, 0, r.n_levels, each, r.band_direct_down, r.band_diffuse_down, r.band_diffuse_up);
  group_sums(f, p.n, 0, r.n_levels, {0, p.n}, r.direct_down, r.diffuse_down, r.diffuse_up);
  r.solar_description = "given in the experiment (given_optics)";
  return r;
}

/// The built-in H2O table (Lacis & Hansen 1974 spread over the bins by optics::h2o_lacis_hansen),
/// made once per process on the default grid with the ASTM E490 spectrum as the weighting. Its
/// weights are fractions of the whole solar spectrum, so it is always made on the full default
/// grid; a run on another grid takes it through the table-to-grid mapping of optics::gas_points.
std::shared_ptr<const optics::KTable> builtin_h2o_table(const std::filesystem::path& data_dir) {
  static std::mutex mutex;
  static std::map<std::string, std::shared_ptr<const optics::KTable>> made;
  std::lock_guard<std::mutex> lock(mutex);
  auto& t = made[data_dir.string()];
  if (!t) {
    const spectrum::Grid grid = spectrum::make_grid(spectrum::default_segments(), spectrum::default_bands());
    t = std::make_shared<const optics::KTable>(
        optics::h2o_lacis_hansen(grid, spectrum::builtin_e490_solar(grid, data_dir.string()).bin_irradiance));
  }
  return t;
}

/// What no case of a study changes: the grid, the solar source on it and the gas tables. Built
/// once per distinct spectral set-up (spectral_setup caches it), not once per case.
struct SpectralSetup {
  spectrum::Grid grid;
  spectrum::SolarSource solar;
  std::vector<std::shared_ptr<const optics::KTable>> gas_tables;
  std::vector<std::string> gas_lines, not_modelled;
  bool h2o_broadband = false;
};

/// The inputs a SpectralSetup depends on, as exact text (doubles in hexadecimal).
std::string setup_key(const Experiment& e) {
  std::string k;
  char buf[96];
  for (const spectrum::GridSegment& g : e.segments) {
    std::snprintf(buf, sizeof buf, "s%a,%a,%a;", g.from_nm, g.to_nm, g.step_nm);
    k += buf;
  }
  for (const spectrum::Band& b : e.bands) {
    std::snprintf(buf, sizeof buf, "b%a,%a,", b.lower_nm, b.upper_nm);
    k += buf;
    k += b.name + ";";
  }
  k += "solar" + std::to_string(static_cast<int>(e.solar)) + (e.solar_fill_zero ? "z" : "") + ";" +
       e.solar_file.string() + ";" + e.solar_column + ";" + e.data_dir.string() + ";";
  for (const Absorber& a : e.absorbers) {
    std::snprintf(buf, sizeof buf, "%p", static_cast<const void*>(a.table.get()));
    k += a.gas + "," + a.mode + "," + a.file.string() + "," + buf + ";";
  }
  return k;
}

SpectralSetup make_setup(const Experiment& e) {
  SpectralSetup s;
  s.grid = spectrum::make_grid(e.segments, e.bands);
  s.solar = e.solar == experiment::SolarChoice::planck ? spectrum::builtin_solar(s.grid)
            : e.solar == experiment::SolarChoice::e490
                ? spectrum::builtin_e490_solar(s.grid, e.data_dir.string())
                : spectrum::tabulated_solar(spectrum::read_spectrum_csv(e.solar_file.string(), e.solar_column), s.grid);
  // Absorbing gases: the built-in H2O table is made for this grid (weighted by ASTM E490), the
  // built-in O2 table and users' tables were read at load time or come from the data directory.
  for (const Absorber& a : e.absorbers) {
    if (a.mode == "none") {
      s.not_modelled.push_back(a.gas);
      continue;
    }
    std::shared_ptr<const optics::KTable> t = a.table;
    if (a.mode == "builtin" && a.gas == "H2O") {
      t = builtin_h2o_table(e.data_dir);
      s.h2o_broadband = true;
    } else if (a.mode == "builtin" && a.gas == "O2") {
      t = cached_ktable(e.data_dir / "gases" / "o2_hitran2012.ktab");
    }
    std::string line = a.gas + ": " + t->title + " (" + t->origin + ")";
    for (const std::string& src : t->source) line += "; " + src;
    s.gas_lines.push_back(std::move(line));
    s.gas_tables.push_back(std::move(t));
  }
  return s;
}

/// The set-up of `e`, shared with every earlier case of the same key (the last few are kept; the
/// key is compared exactly). Thread-safe.
std::shared_ptr<const SpectralSetup> spectral_setup(const Experiment& e) {
  static std::mutex mutex;
  static std::vector<std::pair<std::string, std::shared_ptr<const SpectralSetup>>> made;  // most recent last
  constexpr std::size_t kKeep = 4;
  std::string key = setup_key(e);
  {
    std::lock_guard<std::mutex> lock(mutex);
    for (const auto& [k, v] : made)
      if (k == key) return v;
  }
  auto v = std::make_shared<const SpectralSetup>(make_setup(e));
  std::lock_guard<std::mutex> lock(mutex);
  made.emplace_back(std::move(key), v);
  if (made.size() > kKeep) made.erase(made.begin());
  return v;
}

/// One atmosphere-mode case of a batch: its set-up, its prepared optics and its sun.
struct PreparedCase {
  const Experiment* e = nullptr;
  std::shared_ptr<const SpectralSetup> setup;
  std::optional<optics::PreparedColumn> column;
  double zenith = 0, mu0 = 1, factor = 1;  ///< the beam's zenith (0 at night), its cosine, the TOA factor
  std::size_t offset = 0;                 ///< the case's first problem in the batch
};

/// Writes case `c`'s problems into the batch `p` (sized for all cases) from c.offset on.
void fill_problems(const PreparedCase& c, Problems& p) {
  const Experiment& e = *c.e;
  const optics::ColumnOptics& co = c.column->per_point();
  const std::size_t n = co.n_points, N = p.n, off = c.offset;
  c.column->mix_into({p.tau.data(), p.omega.data(), p.g.data(),
                     p.rayleigh_fraction.empty() ? nullptr : p.rayleigh_fraction.data(), N, off});
  if (!p.beam_path.empty()) {
    // Pseudo-spherical direct beam: each layer's geometric slant factor in a spherical shell
    // (sun::layer_slant_factors), the same for every spectral point.
    const std::vector<double> m = sun::layer_slant_factors(e.profile.altitude_km, c.zenith);
    for (std::size_t l = 0; l < p.nl; ++l)
      std::fill_n(p.beam_path.begin() + static_cast<long>(l * N + off), n, m[l]);
  }
  // Surface albedo per bin: the default, overridden inside named bands.
  const spectrum::Grid& grid = c.setup->grid;
  std::vector<double> alb_dir(grid.size(), e.albedo_direct), alb_dif(grid.size(), e.albedo_diffuse);
  for (std::size_t b = 0; b < grid.bands().size(); ++b) {
    const auto it = e.albedo_by_band.find(grid.bands()[b].name);
    if (it == e.albedo_by_band.end()) continue;
    const spectrum::BinRange br = grid.band_bins(b);
    for (std::size_t i = br.first; i < br.last; ++i) alb_dir[i] = alb_dif[i] = it->second;
  }
  const std::vector<double>& irr = c.setup->solar.bin_irradiance;
  for (std::size_t q = 0; q < n; ++q) {
    const std::size_t bin = co.point_bin[q];
    p.mu0[off + q] = c.mu0;
    p.solar[off + q] = irr[bin] * co.point_weight[q] * c.factor;
    p.albedo_direct[off + q] = alb_dir[bin];
    p.albedo_diffuse[off + q] = alb_dif[bin];
  }
}

/// The result of case `c` from the batch's fluxes.
RunResult finish_case(const PreparedCase& c, const Problems& p, const Fluxes& f) {
  const Experiment& e = *c.e;
  const SpectralSetup& setup = *c.setup;
  const spectrum::Grid& grid = setup.grid;
  const optics::ColumnOptics& co = c.column->per_point();
  const std::size_t n = co.n_points, off = c.offset;
  const double* solar = p.solar.data() + off;  // this case's TOA irradiance per point

  RunResult r;
  r.n_levels = p.nl + 1;
  r.n_layers = p.nl;
  r.n_bands = grid.bands().size();
  r.n_bins = grid.size();
  r.level_pressure_hpa = e.profile.pressure_hpa;
  r.level_altitude_km = e.profile.altitude_km;
  r.solar_approximate = setup.solar.approximate;
  r.solar_description = setup.solar.description;
  r.n_points = n;
  r.layer_h2o_cm = atmos::layer_columns(e.profile).h2o_cm;
  for (double v : r.layer_h2o_cm) r.precipitable_water_cm += v;
  r.gas_tables = setup.gas_lines;
  r.gases_not_modelled = setup.not_modelled;
  r.h2o_broadband = setup.h2o_broadband;
  for (const spectrum::Bin& b : grid.bins()) {
    r.bin_lower_nm.push_back(b.lower_nm);
    r.bin_upper_nm.push_back(b.upper_nm);
    r.bin_center_nm.push_back(b.center_nm);
  }
  // The points of bin i are first[i] .. first[i + 1] (points are ordered by bin).
  std::vector<std::size_t> first(grid.size() + 1, 0);
  for (std::size_t q = 0; q < n; ++q) ++first[co.point_bin[q] + 1];
  for (std::size_t i = 0; i < grid.size(); ++i) first[i + 1] += first[i];
  for (std::size_t b = 0; b < r.n_bands; ++b) {
    const spectrum::Band& band = grid.bands()[b];
    r.band_names.push_back(band.name);
    r.band_lower_nm.push_back(band.lower_nm);
    r.band_upper_nm.push_back(band.upper_nm);
  }
  // Points to bins in one pass; bands and broadband then from the bins (sums over a few hundred
  // bins instead of every point again).
  std::vector<double> bdir, bdif, bup;
  const std::size_t nlev = r.n_levels;
  group_sums(f, p.n, off, nlev, first, bdir, bdif, bup);
  const auto from_bins = [&](const std::vector<double>& per_bin, std::size_t lo, std::size_t hi, double* out) {
    for (std::size_t lev = 0; lev < nlev; ++lev) out[lev] = 0.0;
    for (std::size_t i = lo; i < hi; ++i)
      for (std::size_t lev = 0; lev < nlev; ++lev) out[lev] += per_bin[i * nlev + lev];
  };
  r.band_direct_down.assign(r.n_bands * nlev, 0.0);
  r.band_diffuse_down.assign(r.n_bands * nlev, 0.0);
  r.band_diffuse_up.assign(r.n_bands * nlev, 0.0);
  for (std::size_t b = 0; b < r.n_bands; ++b) {
    const spectrum::BinRange br = grid.band_bins(b);
    from_bins(bdir, br.first, br.last, r.band_direct_down.data() + b * nlev);
    from_bins(bdif, br.first, br.last, r.band_diffuse_down.data() + b * nlev);
    from_bins(bup, br.first, br.last, r.band_diffuse_up.data() + b * nlev);
  }
  r.direct_down.assign(nlev, 0.0);
  r.diffuse_down.assign(nlev, 0.0);
  r.diffuse_up.assign(nlev, 0.0);
  from_bins(bdir, 0, grid.size(), r.direct_down.data());
  from_bins(bdif, 0, grid.size(), r.diffuse_down.data());
  from_bins(bup, 0, grid.size(), r.diffuse_up.data());
  r.bin_toa_normal.assign(grid.size(), 0.0);
  for (std::size_t q = 0; q < n; ++q) {
    r.bin_toa_normal[co.point_bin[q]] += solar[q];
    r.toa_normal_w_m2 += solar[q];
  }

  // Irradiance-weighted band means of the column optical depth per component (the points of a
  // band are those of its bins, contiguous).
  const auto band_mean = [&](const std::vector<double>& col, std::vector<double>& out) {
    out.assign(r.n_bands, 0.0);
    for (std::size_t b = 0; b < r.n_bands; ++b) {
      const spectrum::BinRange br = grid.band_bins(b);
      double w = 0.0, s = 0.0;
      for (std::size_t q = first[br.first]; q < first[br.last]; ++q) {
        w += solar[q];
        s += solar[q] * col[q];
      }
      out[b] = w > 0.0 ? s / w : 0.0;
    }
  };
  band_mean(co.column_tau_rayleigh, r.band_tau_rayleigh);
  band_mean(co.column_tau_ozone, r.band_tau_ozone);
  band_mean(co.column_tau_aerosol, r.band_tau_aerosol);

  // Spectral products at the surface: PAR (400-700 nm) and the UV index. A bin straddling a
  // PAR edge contributes the overlapping share of its flux (flat within the bin).
  const std::size_t s = r.n_levels - 1;
  r.has_spectral_products = true;
  for (std::size_t i = 0; i < grid.size(); ++i) {
    const spectrum::Bin& b = grid.bins()[i];
    const double global = bdir[i * r.n_levels + s] + bdif[i * r.n_levels + s];
    const double lo = std::max(b.lower_nm, 400.0), hi = std::min(b.upper_nm, 700.0);
    if (hi > lo) {
      const double share = global * (hi - lo) / b.width_nm();
      r.par_w_m2 += share;
      r.par_umol_m2_s += products::photon_flux_umol(share, lo, hi);
    }
    r.uv_index += products::kUvIndexPerWattPerM2 * global * products::erythema_action_mean(b.lower_nm, b.upper_nm);
  }
  if (e.output.spectral) {
    r.bin_direct_down = std::move(bdir);
    r.bin_diffuse_down = std::move(bdif);
    r.bin_diffuse_up = std::move(bup);
  }
  return r;
}

/// Whether two atmosphere-mode cases can share one kernel call: the same solver settings and
/// layer count (their spectral points may differ).
bool same_solver(const Experiment& a, const Experiment& b) {
  return a.reference_solver == b.reference_solver && a.reference_streams == b.reference_streams &&
         a.closure == b.closure && a.single_precision == b.single_precision &&
         a.spherical_beam == b.spherical_beam && a.profile.n_layers() == b.profile.n_layers();
}

/// The beam of a case: `zenith` is the zenith angle the slant paths are built for (0 for a night
/// run, which has no light), `mu0` its cosine, `factor` the TOA factor (0 at night).
struct Beam {
  double zenith, mu0, factor;
};
Beam beam_of(const Experiment& e) {
  const bool night = !e.sun_up;
  const double zenith = night ? 0.0 : e.solar_zenith_deg;
  return {zenith, std::cos(zenith * std::numbers::pi / 180.0), night ? 0.0 : e.distance.resolve() * e.irradiance_scale};
}

/// Atmosphere-mode cases [first, last) of `cases` (same_solver holds for all) as one batch: one
/// kernel call over every case's points.
void run_atmosphere_batch(std::span<const Experiment* const> cases, std::vector<RunResult>& out) {
  std::vector<PreparedCase> prep;
  prep.reserve(cases.size());
  std::size_t total = 0;
  for (const Experiment* e : cases) {
    PreparedCase c;
    c.e = e;
    c.setup = spectral_setup(*e);
    optics::OpticsOptions oo = e->optics;
    oo.gas_tables = c.setup->gas_tables;
    c.column.emplace(e->profile, c.setup->grid, e->aerosol, oo);
    const Beam beam = beam_of(*e);
    c.zenith = beam.zenith;
    c.mu0 = beam.mu0;
    c.factor = beam.factor;
    c.offset = total;
    total += c.column->n_points();
    prep.push_back(std::move(c));
  }
  const Experiment& e0 = *cases.front();
  // The batch's arrays: the thread's own, reused by its next batch; every value is written.
  thread_local Problems p;
  p.n = total;
  p.nl = e0.profile.n_layers();
  const std::size_t layered = p.nl * p.n;
  p.tau.resize(layered);
  p.omega.resize(layered);
  p.g.resize(layered);
  p.rayleigh_fraction.resize(e0.reference_solver ? layered : 0);
  p.beam_path.resize(e0.spherical_beam ? layered : 0);
  p.mu0.resize(total);
  p.solar.resize(total);
  p.albedo_direct.resize(total);
  p.albedo_diffuse.resize(total);
  for (const PreparedCase& c : prep) fill_problems(c, p);
  const Fluxes& f = solve(p, e0);
  for (const PreparedCase& c : prep) out.push_back(finish_case(c, p, f));
}

}  // namespace

std::vector<double> band_and_broadband(const RunResult& r, const std::string& q) {
  const std::vector<double>* band = &r.band_direct_down;
  const std::vector<double>* bb = &r.direct_down;
  if (q == "diffuse_down") band = &r.band_diffuse_down, bb = &r.diffuse_down;
  if (q == "up") band = &r.band_diffuse_up, bb = &r.diffuse_up;
  if (q == "net_down") band = &r.band_net_down, bb = &r.net_down;
  std::vector<double> t(*band);
  t.insert(t.end(), bb->begin(), bb->end());
  return t;
}

std::vector<BandSummary> band_summary(const RunResult& r) {
  const std::size_t n = r.n_levels, s = n - 1;
  const std::vector<double> dir = band_and_broadband(r, "direct_down"), dif = band_and_broadband(r, "diffuse_down"),
                            up = band_and_broadband(r, "up"), net = band_and_broadband(r, "net_down");
  std::vector<BandSummary> rows;
  for (std::size_t b = 0; b <= r.n_bands; ++b) {
    const bool bb = b == r.n_bands;
    BandSummary x;
    x.name = bb ? "broadband" : r.band_names[b];
    x.lower_nm = bb ? (r.bin_lower_nm.empty() ? 0.0 : r.bin_lower_nm.front()) : r.band_lower_nm[b];
    x.upper_nm = bb ? (r.bin_upper_nm.empty() ? 0.0 : r.bin_upper_nm.back()) : r.band_upper_nm[b];
    x.toa_down = dir[b * n] + dif[b * n];
    x.surface_direct = dir[b * n + s];
    x.surface_diffuse = dif[b * n + s];
    x.surface_global = x.surface_direct + x.surface_diffuse;
    x.transmittance = safe_ratio(x.surface_global, x.toa_down);
    x.absorbed_atmosphere = net[b * n] - net[b * n + s];
    x.toa_up = up[b * n];
    rows.push_back(std::move(x));
  }
  return rows;
}

namespace {

/// Plane-of-array irradiance of a finished result (sun/tilted_plane.hpp).
void add_plane(const Experiment& e, RunResult& r) {
  r.has_plane = true;
  r.angle_of_incidence_deg =
      sun::angle_of_incidence_deg(e.solar_zenith_deg, e.solar_azimuth_deg, e.plane.tilt_deg, e.plane.azimuth_deg);
  r.plane_ground_albedo = e.plane.ground_albedo >= 0.0 ? e.plane.ground_albedo : r.surface_reflectance;
  if (!r.sun_up) return;
  sun::PlaneInputs in;
  in.dni = r.direct_normal;
  in.dhi = r.diffuse_horizontal;
  in.ghi = r.global_horizontal;
  in.albedo = r.plane_ground_albedo;
  in.zenith_deg = e.solar_zenith_deg;
  in.aoi_deg = r.angle_of_incidence_deg;
  in.tilt_deg = e.plane.tilt_deg;
  in.extraterrestrial_normal = r.toa_normal_w_m2;
  in.air_mass = sun::kasten_young_air_mass(std::min(e.solar_zenith_deg, 90.0));
  const sun::PlaneIrradiance pi = sun::plane_of_array(in, e.plane.sky);
  r.plane_beam = pi.beam;
  r.plane_sky_diffuse = pi.sky_diffuse;
  r.plane_ground = pi.ground;
  r.plane_global = pi.total();
}

}  // namespace

namespace {

/// The case-independent part of a result: sun, closure, products derived from the fluxes.
void complete(const Experiment& e, RunResult& r) {
  const bool night = !e.sun_up;
  r.solar_zenith_deg = e.solar_zenith_deg;
  r.mu0 = std::cos(e.solar_zenith_deg * std::numbers::pi / 180.0);  // the true zenith, also at night
  r.earth_sun_factor = e.distance.resolve();
  r.closure = e.reference_solver ? "reference_discrete_ordinates_" + std::to_string(e.reference_streams) + "_streams"
                                 : std::string(rt::to_string(e.closure));
  derive(r);
  r.has_sun_position = e.has_sun_position;
  r.time_unix_s = e.time_unix_s;
  r.solar_azimuth_deg = e.solar_azimuth_deg;
  r.sun_up = e.sun_up;
  if (night) r.direct_normal = r.diffuse_horizontal = r.global_horizontal = 0.0;
  if (e.plane.given) add_plane(e, r);
}

}  // namespace

std::vector<RunResult> run_experiments(std::span<const Experiment* const> cases) {
  std::vector<RunResult> out;
  out.reserve(cases.size());
  try {
    for (std::size_t i = 0; i < cases.size();) {
      const Experiment& e = *cases[i];
      if (e.given_optics_mode) {
        const Beam beam = beam_of(e);
        out.push_back(run_given(e, beam.mu0, beam.factor));
        ++i;
        continue;
      }
      // The longest run of consecutive cases that can share the kernel call.
      std::size_t j = i + 1;
      while (j < cases.size() && !cases[j]->given_optics_mode && same_solver(e, *cases[j])) ++j;
      run_atmosphere_batch(cases.subspan(i, j - i), out);
      i = j;
    }
  } catch (const std::invalid_argument& ex) {
    throw std::runtime_error(ex.what());
  }
  for (std::size_t i = 0; i < cases.size(); ++i) complete(*cases[i], out[i]);
  return out;
}

RunResult run_experiment(const Experiment& e) {
  const Experiment* one[] = {&e};
  return std::move(run_experiments(one).front());
}

}  // namespace solstrata::experiment
