#include "app/summary_table.hpp"

#include <algorithm>
#include <cstdio>
#include <ostream>
#include <string>

#include "io/hdf5_reader.hpp"
#include "spectrum/grid.hpp"
#include "sun/position.hpp"
#include "sun/tilted_plane.hpp"

namespace solstrata::app {
namespace {

std::string fmt(const char* f, double a) {
  char b[64];
  std::snprintf(b, sizeof b, f, a);
  return b;
}

}  // namespace

void print_check_summary(std::ostream& os, const experiment::Experiment& e) {
  os << e.source.string() << ": valid\n";
  if (!e.title.empty()) os << "  title:       " << e.title << "\n";
  if (e.given_optics_mode) {
    os << "  mode:        given optics, " << e.given.bands.size() << " band(s) x "
       << e.given.bands.front().layers.size() << " layers\n";
  } else {
    const spectrum::Grid g = spectrum::make_grid(e.segments, e.bands);
    os << "  atmosphere:  " << e.profile_origin << ", " << e.profile.n_levels() << " levels\n";
    os << "  aerosol:     "
       << (e.aerosol.tau_ref > 0 ? fmt("optical depth %.3g", e.aerosol.tau_ref) + fmt(" at %g nm", e.aerosol.reference_nm) +
                                       (e.aerosol_type.empty() ? "" : " (" + e.aerosol_type + ")")
                                 : std::string("none"))
       << "\n";
    if (e.aerosol.tau_ref > 0) {
      os << "               single-scattering albedo " << fmt("%.4g", e.aerosol.omega) << ", asymmetry "
         << fmt("%.4g", e.aerosol.g) << ", Angstrom exponent " << fmt("%.3g", e.aerosol.alpha());
      if (const auto t = optics::parse_aerosol_type(e.aerosol_type)) os << "\n               source: " << optics::preset(*t).source;
      os << "\n";
    }
    os << "  gases:       ";
    for (std::size_t i = 0; i < e.absorbers.size(); ++i) {
      const experiment::Absorber& a = e.absorbers[i];
      os << (i ? ", " : "") << a.gas << " " << (a.mode == "file" ? a.file.string() : a.mode);
    }
    os << fmt("; precipitable water %.3f cm", atmos::total_h2o_cm(e.profile)) << "\n";
    os << "  spectrum:    " << g.size() << fmt(" bins, %g", g.lower_nm()) << fmt("-%g nm, ", g.upper_nm())
       << (e.solar == experiment::SolarChoice::planck ? std::string("built-in approximate solar spectrum (Planck)")
           : e.solar == experiment::SolarChoice::e490 ? std::string("built-in solar spectrum ASTM E490-00a scaled to 1361 W m-2")
                                                      : "solar spectrum " + e.solar_file.string()) << "\n";
    os << "  bands:      ";
    for (const auto& b : g.bands()) os << " " << b.name << fmt(" (%g", b.lower_nm) << fmt("-%g)", b.upper_nm);
    os << "\n";
  }
  if (e.site.given) {
    os << "  site:        " << fmt("%.4f N, ", e.site.latitude_deg) << fmt("%.4f E", e.site.longitude_deg)
       << (e.site.elevation_given ? fmt(", %g m", e.site.elevation_m) : std::string()) << "\n";
  }
  if (e.series.given) {
    os << "  times:       " << e.series.times_unix.size() << " steps, " << e.series.times_text.front() << " to "
       << e.series.times_text.back() << (e.series.daily_totals ? ", with daily totals" : "") << "\n";
  } else if (e.has_sun_position) {
    os << "  sun:         " << (e.sun_up ? "apparent solar zenith " : "below the horizon, zenith ") << fmt("%.3f deg", e.solar_zenith_deg)
       << fmt(", azimuth %.3f deg", e.solar_azimuth_deg) << "\n";
  } else {
    os << "  sun:         solar zenith " << fmt("%g deg", e.solar_zenith_deg) << "\n";
  }
  if (e.plane.given) {
    os << "  plane:       tilt " << fmt("%g deg", e.plane.tilt_deg) << fmt(", facing azimuth %g deg, ", e.plane.azimuth_deg)
       << sun::to_string(e.plane.sky) << " sky diffuse\n";
  }
  os << "  closure:     " << rt::to_string(e.closure) << "\n";
  os << "  output:      " << e.output.file.string() << (e.output.spectral ? " (with spectral fluxes)" : "") << "\n";
}

void print_run_summary(std::ostream& os, const experiment::Experiment& e, const experiment::RunResult& r) {
  os << "solstrata run: " << e.source.string();
  if (!e.title.empty()) os << " - " << e.title;
  os << "\n";
  if (r.has_sun_position) {
    os << sun::format_iso8601_utc({r.time_unix_s}) << fmt(" at %.4f N", e.site.latitude_deg)
       << fmt(", %.4f E: ", e.site.longitude_deg) << fmt("solar azimuth %.2f deg, ", r.solar_azimuth_deg);
    if (!r.sun_up) os << "the sun is below the horizon (all fluxes 0); ";
  }
  os << fmt("solar zenith %.2f deg", r.solar_zenith_deg) << fmt(" (mu0 %.4f)", r.mu0)
     << fmt(", Earth-Sun factor %.4f", r.earth_sun_factor) << ", closure " << r.closure << "\n\n";
  char line[200];
  std::snprintf(line, sizeof line, "%-12s %15s %9s %9s %9s %9s %8s %9s\n", "band", "range nm", "TOA down",
                "sfc dir", "sfc diff", "sfc glob", "transm.", "absorbed");
  os << line;
  std::snprintf(line, sizeof line, "%-12s %15s %9s %9s %9s %9s %8s %9s\n", "", "", "W m-2", "W m-2", "W m-2",
                "W m-2", "", "atm W m-2");
  os << line;
  for (const experiment::BandSummary& x : experiment::band_summary(r)) {
    const std::string range = x.upper_nm > 0 ? fmt("%g-", x.lower_nm) + fmt("%g", x.upper_nm) : std::string();
    std::snprintf(line, sizeof line, "%-12s %15s %9.2f %9.2f %9.2f %9.2f %8.4f %9.2f\n", x.name.substr(0, 12).c_str(),
                  range.c_str(), x.toa_down, x.surface_direct, x.surface_diffuse, x.surface_global, x.transmittance,
                  x.absorbed_atmosphere);
    os << line;
  }
  os << "\nsurface: direct normal " << fmt("%.1f", r.direct_normal) << ", diffuse horizontal "
     << fmt("%.1f", r.diffuse_horizontal) << ", global horizontal " << fmt("%.1f W m-2", r.global_horizontal) << "\n";
  if (r.has_spectral_products) {
    os << "         PAR " << fmt("%.1f W m-2", r.par_w_m2) << fmt(" = %.0f umol m-2 s-1", r.par_umol_m2_s)
       << ", UV index " << fmt("%.1f", r.uv_index) << (r.solar_approximate ? " (indicative)" : "") << "\n";
  }
  if (r.has_plane) {
    os << "tilted plane (tilt " << fmt("%g", e.plane.tilt_deg) << fmt(", facing %g deg, ", e.plane.azimuth_deg)
       << sun::to_string(e.plane.sky) << " sky): " << fmt("%.1f W m-2", r.plane_global) << " = beam "
       << fmt("%.1f", r.plane_beam) << " + sky diffuse " << fmt("%.1f", r.plane_sky_diffuse) << " + ground "
       << fmt("%.1f", r.plane_ground) << fmt(", angle of incidence %.1f deg", r.angle_of_incidence_deg) << "\n";
  }
  os << "planetary albedo " << fmt("%.4f", r.planetary_albedo) << ", absorbed: atmosphere "
     << fmt("%.1f", r.absorbed_atmosphere) << ", surface " << fmt("%.1f W m-2", r.absorbed_surface) << "\n";
  if (!e.given_optics_mode) {
    os << "gases: ";
    for (std::size_t i = 0; i < r.gas_tables.size(); ++i) os << (i ? ", " : "") << r.gas_tables[i].substr(0, r.gas_tables[i].find(':'));
    if (r.gas_tables.empty()) os << "none";
    os << " (+ ozone); precipitable water " << fmt("%.3f", r.precipitable_water_cm) << " cm; " << r.n_points
       << " spectral points\n";
    for (const std::string& g : r.gases_not_modelled) os << "note: " << g << " absorption is not modelled (no table given)\n";
    if (r.h2o_broadband) os << "note: " << experiment::kH2oBroadbandNote << "\n";
  }
  if (r.solar_approximate) {
    os << "note: computed with the built-in approximate solar spectrum (Planck at 5772 K scaled to\n"
          "      1360.8 W m-2); band values are approximate and the UV index is indicative only.\n";
  }
  os << "caution: " << experiment::kSolarCaution << "\n";
  if (r.has_spectral_products) os << "caution: " << experiment::kUvCaution << "\n";
  if (r.has_plane) os << "caution: " << sun::kPlaneCaution << "\n";
}

}  // namespace solstrata::app

namespace solstrata::app {

void print_time_series_summary(std::ostream& os, const std::filesystem::path& file, const experiment::Study& study) {
  const std::vector<std::string> present = io::list_datasets(file);
  const auto has = [&](const char* v) { return std::find(present.begin(), present.end(), v) != present.end(); };
  const experiment::TimePlan& tp = study.plan().time;
  const experiment::Experiment& e = study.base();
  os << "time series: " << tp.n_steps << " steps";
  if (tp.n_nodes()) os << " and " << tp.n_nodes() << " daily-total quadrature points";
  os << "\n";
  if (!has("daily_global_horizontal")) return;
  const bool par = has("daily_par_energy"), plane = has("daily_plane_global");
  const auto col = [&](const char* v) { return io::read_variable(file, v).values; };
  const std::vector<double> toa = col("daily_toa_horizontal"), ghi = col("daily_global_horizontal"),
                            dir = col("daily_direct_horizontal"), dif = col("daily_diffuse_horizontal"),
                            hours = col("daylight_length");
  const std::vector<double> pe = par ? col("daily_par_energy") : std::vector<double>(),
                            pp = par ? col("daily_par_photon") : std::vector<double>(),
                            poa = plane ? col("daily_plane_global") : std::vector<double>();
  os << "daily totals, MJ m-2 (PAR photons mol m-2), local days at UTC" << (e.series.utc_offset_minutes < 0 ? "" : "+")
     << fmt("%.4g h:", e.series.utc_offset_minutes / 60.0) << "\n";
  os << "  day         daylight h    TOA  global  direct diffuse";
  if (par) os << "   PAR  PAR mol";
  if (plane) os << "  plane";
  os << "\n";
  for (std::size_t d = 0; d < toa.size(); ++d) {
    const std::string day = sun::format_iso8601_utc({tp.day_start[d] + 60.0 * e.series.utc_offset_minutes}).substr(0, 10);
    os << "  " << day << fmt("  %9.2f", hours[d]) << fmt(" %6.2f", toa[d]) << fmt("  %6.2f", ghi[d]) << fmt("  %6.2f", dir[d])
       << fmt("  %6.2f", dif[d]);
    if (par) os << fmt(" %5.2f", pe[d]) << fmt("  %7.2f", pp[d]);
    if (plane) os << fmt(" %6.2f", poa[d]);
    os << "\n";
  }
  if (plane) os << "caution: " << sun::kPlaneCaution << "\n";
}

void print_study_outputs(std::ostream& os, const std::filesystem::path& file, const experiment::Study& study,
                         const experiment::Experiment& e, bool with_effect) {
  if (study.is_time_series()) print_time_series_summary(os, file, study);
  if (with_effect) os << "aerosol radiative effects: aerosol_effect_toa/surface/atmosphere (W m-2, negative = cooling)\n";
  os << "caution: " << experiment::kSolarCaution << "\n";
  os << "wrote " << file.string();
  if (!e.output.csv.empty()) os << " and " << e.output.csv.string();
  os << "\n";
}

}  // namespace solstrata::app
