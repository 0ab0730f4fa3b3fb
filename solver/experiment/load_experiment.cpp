// Reading an experiment file into a typed Experiment. Every key, its unit, default and range is
// documented in docs/experiment-keys.md; keep the two in step.
#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <limits>
#include <map>
#include <memory>
#include <mutex>
#include <set>
#include <sstream>

#include "atmos/humidity.hpp"
#include "atmos/standard_atmosphere.hpp"
#include "experiment/closest_name.hpp"
#include "experiment/experiment.hpp"
#include "experiment/output_variables.hpp"
#include "experiment/yaml_reader.hpp"
#include "spectrum/solar.hpp"
#include "sun/position.hpp"

namespace solstrata::experiment {
namespace {

namespace fs = std::filesystem;

const std::vector<std::string> kClosureNames = [] {
  std::vector<std::string> v;
  for (rt::Closure c : rt::kAllClosures) v.emplace_back(rt::to_string(c));
  return v;
}();

const std::vector<std::string> kAerosolTypes = {
    "continental_background", "continental_moderate", "continental_industrial", "urban_haze",
    "mineral_dust",            "marine_background",      "marine_coastal",    "biomass_smoke"};

const std::vector<std::string> kShapes = {"exponential", "boundary_layer", "per_layer"};

/// Name of the built-in standard profile generated on the fly.
constexpr const char* kBuiltinProfile = "us_standard_1976";

/// Why `p` cannot be read as an input file: "does not exist", "is a directory", ...; "" if it can.
std::string file_problem(const fs::path& p) {
  std::error_code ec;
  const fs::file_status st = fs::status(p, ec);
  if (!fs::exists(st)) return "does not exist";
  if (fs::is_directory(st)) return "is a directory, not a file";
  if (!fs::is_regular_file(st)) return "is not a regular file";
  return {};
}

fs::path resolve(const fs::path& base, const std::string& p) {
  const fs::path q(p);
  return q.is_absolute() ? q : base / q;
}

/// Checks that `v` is strictly monotonic (increasing when `up`), pointing at the first offender.
void require_monotonic(const Document& doc, const LocatedNumbers& v, bool up, const char* what) {
  for (std::size_t i = 1; i < v.values.size(); ++i) {
    const bool ok = up ? v.values[i] > v.values[i - 1] : v.values[i] < v.values[i - 1];
    if (!ok) {
      std::ostringstream m;
      m << what << " must " << (up ? "increase" : "decrease") << " strictly from the top level to the surface; "
        << format_number(v.values[i]) << " follows " << format_number(v.values[i - 1]);
      throw doc.error(v.at(i), m.str());
    }
  }
}

using spectrum_range = std::pair<double, double>;

/// nm: first and last wavelength of a solar spectrum file's column, cached by path, column and
/// modification time (a sweep checks the same file once per scenario).
spectrum_range table_range(const fs::path& path, const std::string& column) {
  static std::mutex mutex;
  static std::map<std::string, std::pair<fs::file_time_type, spectrum_range>> cache;
  std::error_code ec;
  const fs::file_time_type mtime = fs::last_write_time(path, ec);
  const std::string key = path.string() + '\n' + column;
  {
    std::lock_guard<std::mutex> lock(mutex);
    const auto it = cache.find(key);
    if (!ec && it != cache.end() && it->second.first == mtime) return it->second.second;
  }
  const spectrum::TabulatedSpectrum t = spectrum::read_spectrum_csv(path.string(), column);
  const spectrum_range r{t.wavelength_nm.front(), t.wavelength_nm.back()};
  std::lock_guard<std::mutex> lock(mutex);
  if (!ec) cache[key] = {mtime, r};
  return r;
}

/// Reads a `levels` mapping (experiment inline levels or a profile file's levels).
atmos::Profile read_levels(Section& s) {
  const Document doc = s.document();
  atmos::Profile p;
  const LocatedNumbers pr = s.number_list("pressure_hpa", Range::greater_than(0.0), 2, "hPa");
  const LocatedNumbers te = s.number_list("temperature_k", Range::open(100.0, 400.0), 2, "K");
  const LocatedNumbers al = s.number_list("altitude_km", Range::open(-1.0, 200.0), 2, "km");
  LocatedNumbers oz, h2o;
  if (s.has("ozone_ppmv")) oz = s.number_list("ozone_ppmv", Range::closed(0.0, 1000.0), 2, "ppmv");
  // Water vapour: at most one of three forms, converted to ppmv at each level below.
  const char* const humidity_keys[] = {"h2o_ppmv", "specific_humidity_kg_kg", "relative_humidity_percent"};
  std::string humidity_key;
  for (const char* k : humidity_keys) {
    if (!s.has(k)) continue;
    if (!humidity_key.empty()) {
      throw s.error(k, "give the water vapour once: '" + humidity_key + "' is already given (choose one of h2o_ppmv, "
                       "specific_humidity_kg_kg, relative_humidity_percent)");
    }
    humidity_key = k;
  }
  if (humidity_key == "h2o_ppmv") h2o = s.number_list("h2o_ppmv", Range::closed(0.0, 1e5), 2, "ppmv");
  if (humidity_key == "specific_humidity_kg_kg") {
    h2o = s.number_list("specific_humidity_kg_kg", Range::closed(0.0, 0.1), 2, "kg/kg");
  }
  if (humidity_key == "relative_humidity_percent") {
    h2o = s.number_list("relative_humidity_percent", Range::closed(0.0, 100.0), 2, "%");
  }
  s.check_no_unknown_keys();
  const auto same_length = [&](const LocatedNumbers& v) {
    if (!v.values.empty() && v.values.size() != pr.values.size()) {
      throw doc.error(v.mark, v.key,
                      "has " + std::to_string(v.values.size()) + " values but pressure_hpa has " +
                          std::to_string(pr.values.size()) + "; every level list needs one value per level");
    }
  };
  same_length(te);
  same_length(al);
  same_length(oz);
  same_length(h2o);
  require_monotonic(doc, pr, true, "pressure_hpa");
  require_monotonic(doc, al, false, "altitude_km");
  p.pressure_hpa = pr.values;
  p.temperature_k = te.values;
  p.altitude_km = al.values;
  p.ozone_ppmv = oz.values;
  p.h2o_ppmv = h2o.values;
  for (std::size_t i = 0; i < p.h2o_ppmv.size(); ++i) {
    try {
      if (humidity_key == "specific_humidity_kg_kg") p.h2o_ppmv[i] = atmos::ppmv_from_specific_humidity(h2o.values[i]);
      if (humidity_key == "relative_humidity_percent") {
        p.h2o_ppmv[i] = atmos::ppmv_from_relative_humidity(h2o.values[i], p.temperature_k[i], p.pressure_hpa[i]);
      }
    } catch (const std::invalid_argument& ex) {
      throw doc.error(h2o.at(i), std::string(ex.what()) + " (level " + std::to_string(i) + ")");
    }
  }
  return p;
}

/// Reads a profile document (the format written by the standard-atmosphere generator).
atmos::Profile read_profile_document(const Document& doc, const std::string& default_name) {
  Section root = doc.root();
  atmos::Profile p;
  const std::string name = root.optional_string("name", default_name).value;
  const double lat = root.optional_number("latitude_deg", 45.0, Range::closed(-90, 90), "degrees").value;
  const double co2 = root.optional_number("co2_ppmv", 400.0, Range::closed(0, 1e5), "ppmv").value;
  Section lv = root.subsection("levels");
  p = read_levels(lv);
  root.check_no_unknown_keys();
  p.name = name;
  p.latitude_deg = lat;
  p.co2_ppmv = co2;
  if (const std::string m = p.validate(); !m.empty()) throw doc.error(lv.mark(), "levels", m);
  return p;
}

atmos::Profile read_profile_file(const fs::path& path) {
  return read_profile_document(Document::load_file(path), path.stem().string());
}

void read_absorbers(Section& s, Experiment& e, const fs::path& base);

void read_atmosphere(Section& s, Experiment& e, const fs::path& base, ProfileCache* cache) {
  const Document doc = s.document();
  const bool has_profile = s.has("profile"), has_levels = s.has("levels");
  if (has_profile && has_levels) {
    throw s.error("levels", "give either 'profile' (a file or '" + std::string(kBuiltinProfile) +
                                "') or inline 'levels', not both");
  }
  if (has_levels) {
    Section lv = s.subsection("levels");
    e.profile = read_levels(lv);
    e.profile.name = "inline levels";
    e.profile_origin = "inline levels in " + e.source.string();
    if (const std::string m = e.profile.validate(); !m.empty()) throw doc.error(lv.mark(), lv.path(), m);
  } else {
    const Located<std::string> prof = s.optional_string("profile", kBuiltinProfile);
    if (prof.value == kBuiltinProfile) {
      e.profile = atmos::make_us_standard_1976();
      e.profile_origin = "built-in U.S. Standard Atmosphere 1976 (generated)";
    } else {
      const fs::path path = resolve(base, prof.value);
      if (const std::string why = file_problem(path); !why.empty()) {
        throw doc.error(prof, "profile file '" + path.string() + "' " + why +
                                  "; give a path relative to the experiment file, or '" + kBuiltinProfile + "'");
      }
      e.profile = cache ? cache->get(path, [&] { return read_profile_file(path); }) : read_profile_file(path);
      e.profile_origin = path.string();
    }
  }
  const auto co2 = s.optional_number("co2_ppmv", e.profile.co2_ppmv, Range::closed(0, 1e5), "ppmv");
  const auto lat = s.optional_number("latitude_deg", e.profile.latitude_deg, Range::closed(-90, 90), "degrees");
  const auto ozone = s.optional_number("ozone_column_du", 0.0, Range::open_closed(0, 1000), "DU");
  const auto psfc = s.optional_number("surface_pressure_hpa", 0.0, Range::open_closed(0, 1200), "hPa");
  const auto pwv = s.optional_number("precipitable_water_cm", 0.0, Range::open_closed(0, 15), "cm");
  e.optics.rayleigh = s.optional_bool("rayleigh", true).value;
  e.optics.ozone = s.optional_bool("ozone", true).value;
  e.optics.ozone_temperature_dependence = s.optional_bool("ozone_temperature_dependence", true).value;
  e.absorbers.clear();
  if (auto ab = s.optional_subsection("absorbers")) read_absorbers(*ab, e, base);
  s.check_no_unknown_keys();
  e.profile.co2_ppmv = co2.value;
  e.profile.latitude_deg = lat.given() || !e.site.given ? lat.value : e.site.latitude_deg;
  if (e.site.elevation_given) {
    // The column above the site: the profile is cut at its elevation before any rescaling, so
    // that ozone, precipitable water and surface pressure apply to the column above the site.
    try {
      e.profile = atmos::cut_at_altitude(e.profile, e.site.elevation_m / 1000.0);
    } catch (const std::invalid_argument& ex) {
      throw doc.error(e.site.elevation_mark, "site.elevation_m", ex.what());
    }
    e.profile_origin += "; cut at the site elevation " + format_number(e.site.elevation_m) + " m";
  }
  if (ozone.given()) {
    if (atmos::total_ozone_du(e.profile) <= 0.0) {
      throw doc.error(ozone, "the profile has no ozone to rescale; give ozone_ppmv levels");
    }
    e.optics.total_ozone_du = ozone.value;
  }
  if (psfc.given()) {
    // Scales the whole column mass: every level pressure by p_sfc / p_profile_surface.
    const double f = psfc.value / e.profile.pressure_hpa.back();
    for (double& p : e.profile.pressure_hpa) p *= f;
  }
  if (pwv.given()) {
    // After the pressure scaling, so that the column is exactly the value asked for.
    if (atmos::total_h2o_cm(e.profile) > 0.0) {
      atmos::scale_h2o_to(e.profile, pwv.value);
    } else {
      e.profile.h2o_ppmv = atmos::default_h2o_ppmv(e.profile, pwv.value);
      e.profile_origin += "; water vapour: default shape (density scale height 2 km)";
    }
  }
}

/// File name of the shipped O2 table inside the data directory.
constexpr const char* kBuiltinO2Table = "gases/o2_hitran2012.ktab";

/// atmosphere.absorbers: per gas 'builtin', 'none' or a k-table file.
void read_absorbers(Section& s, Experiment& e, const fs::path& base) {
  const Document doc = s.document();
  struct Gas {
    const char* key;
    const char* formula;
    const char* fallback;  // default mode
  };
  for (const Gas g : {Gas{"h2o", "H2O", "builtin"}, Gas{"o2", "O2", "builtin"}, Gas{"co2", "CO2", "none"}}) {
    const Located<std::string> v = s.optional_string(g.key, g.fallback);
    Absorber a;
    a.gas = g.formula;
    if (v.value == "none") {
      a.mode = "none";
    } else if (v.value == "builtin") {
      if (std::string(g.formula) == "CO2") {
        throw doc.error(v, "there is no built-in CO2 table (no CO2 line data ship with solstrata): give a table "
                           "built with scripts/ktable_gen.py from your own line file, or 'none'");
      }
      a.mode = "builtin";
    } else {
      a.mode = "file";
      a.file = resolve(base, v.value);
      std::error_code ec;
      if (!fs::is_regular_file(a.file, ec)) {
        throw doc.error(v, "gas table '" + a.file.string() + "' does not exist; give 'builtin', 'none' or the path of a "
                           "k-table (docs/gas-tables.md) relative to the experiment file");
      }
      try {
        a.table = cached_ktable(a.file);
      } catch (const std::exception& ex) {
        throw doc.error(v, std::string("cannot use this gas table: ") + ex.what());
      }
      if (a.table->gas != g.formula) {
        throw doc.error(v, "the table '" + a.file.string() + "' is for " + a.table->gas + ", not " + g.formula);
      }
    }
    e.absorbers.push_back(std::move(a));
  }
  s.check_no_unknown_keys();
}

void read_aerosol(Section& s, Experiment& e) {
  const Document doc = s.document();
  optics::AerosolSpec& a = e.aerosol;
  if (s.has("type")) {
    // Names of earlier versions, renamed to descriptive names of our own: a clear pointer.
    static const std::map<std::string, std::string> kRenamed = {
        {"continental_clean", "continental_background"}, {"continental_average", "continental_moderate"},
        {"continental_polluted", "continental_industrial"}, {"urban", "urban_haze"},
        {"desert", "mineral_dust"}, {"maritime_clean", "marine_background"},
        {"maritime_polluted", "marine_coastal"}, {"smoke", "biomass_smoke"}};
    {
      const Located<std::string> raw = s.required_string("type");
      if (const auto it = kRenamed.find(raw.value); it != kRenamed.end()) {
        throw doc.error(raw, "the aerosol type '" + raw.value + "' is now called '" + it->second +
                                 "' (same single-scattering albedo, asymmetry and Angstrom exponent)");
      }
    }
    const auto t = s.choice("type", kAerosolTypes);
    const optics::AerosolPreset pre = optics::preset(*optics::parse_aerosol_type(t.value));
    a.omega = pre.omega;
    a.g = pre.g;
    a.angstrom = pre.angstrom;
    e.aerosol_type = t.value;
  }
  a.tau_ref = s.required_number("optical_depth", Range::closed(0.0, 50.0)).value;
  a.reference_nm = s.optional_number("reference_wavelength_nm", 550.0, Range::open(200.0, 5000.0), "nm").value;
  a.angstrom = s.optional_number("angstrom_exponent", a.angstrom, Range::closed(-1.0, 4.0)).value;
  if (s.has("second_wavelength_nm") || s.has("second_optical_depth")) {
    a.second_nm = s.required_number("second_wavelength_nm", Range::open(200.0, 5000.0), "nm").value;
    a.tau_second = s.required_number("second_optical_depth", Range::greater_than(0.0)).value;
    if (s.has("angstrom_exponent")) {
      throw s.error("angstrom_exponent", "give either angstrom_exponent or the two-wavelength form "
                                         "(second_wavelength_nm, second_optical_depth), not both");
    }
  }
  a.omega = s.optional_number("single_scattering_albedo", a.omega, Range::closed(0.0, 1.0)).value;
  a.g = s.optional_number("asymmetry_parameter", a.g, Range::open(-1.0, 1.0)).value;
  if (auto t = s.optional_subsection("spectral_table")) {
    const LocatedNumbers wl = t->number_list("wavelength_nm", Range::open(0.0, 1e6), 1, "nm");
    require_monotonic(doc, wl, true, "wavelength_nm");
    a.table_nm = wl.values;
    for (const char* key : {"single_scattering_albedo", "asymmetry_parameter"}) {
      if (!t->has(key)) continue;
      const bool w = std::string(key) == "single_scattering_albedo";
      const LocatedNumbers v = t->number_list(key, w ? Range::closed(0.0, 1.0) : Range::open(-1.0, 1.0), 1);
      if (v.values.size() != wl.values.size()) {
        throw doc.error(v.mark, v.key, "needs one value per wavelength_nm entry (" +
                                           std::to_string(wl.values.size()) + "), got " +
                                           std::to_string(v.values.size()));
      }
      (w ? a.omega_table : a.g_table) = v.values;
    }
    t->check_no_unknown_keys();
  }
  if (auto v = s.optional_subsection("vertical")) {
    const auto shape = v->optional_choice("shape", "exponential", kShapes);
    a.shape = *optics::parse_aerosol_shape(shape.value);
    a.scale_height_km = v->optional_number("scale_height_km", a.scale_height_km, Range::open(0.0, 100.0), "km").value;
    a.boundary_layer_top_km = v->optional_number("mixed_layer_top_km", a.boundary_layer_top_km, Range::open(0.0, 20.0), "km").value;
    a.boundary_layer_fraction = v->optional_number("mixed_layer_fraction", a.boundary_layer_fraction, Range::closed(0.0, 1.0)).value;
    if (a.shape == optics::AerosolShape::per_layer) {
      const LocatedNumbers w = v->number_list("layer_weights", Range::at_least(0.0), 1);
      if (w.values.size() != e.profile.n_layers()) {
        throw doc.error(w.mark, w.key, "needs one weight per layer of the atmosphere (" +
                                           std::to_string(e.profile.n_layers()) + "), got " +
                                           std::to_string(w.values.size()));
      }
      a.layer_weights = w.values;
    }
    v->check_no_unknown_keys();
  }
  s.check_no_unknown_keys();
  if (const std::string m = a.validate(); !m.empty()) throw doc.error(s.mark(), s.path(), m);
  try {
    (void)optics::layer_fractions(a, e.profile);
  } catch (const std::exception& ex) {
    throw doc.error(s.mark(), s.path(), ex.what());
  }
}

void read_sun(Section& s, Experiment& e, bool series, std::optional<double> step_time) {
  const bool has_zenith = s.has("solar_zenith_deg"), has_time = s.has("time");
  if (series) {
    for (const char* k : {"solar_zenith_deg", "time", "day_of_year", "distance_factor"}) {
      if (s.has(k)) {
        throw s.error(k, std::string("'") + k + "' cannot be given with a 'times' section: each step's time sets "
                         "the sun's position and the Earth-Sun distance");
      }
    }
  }
  if (has_zenith && has_time) {
    throw s.error("time", "give either solar_zenith_deg or time (with a site), not both");
  }
  if (series || has_time) {
    if (!e.site.given) {
      throw s.error(series ? "" : "time", "the sun's position from a time needs a 'site' section (latitude_deg, "
                                          "longitude_deg)");
    }
    for (const char* k : {"day_of_year", "distance_factor"}) {
      if (s.has(k)) throw s.error(k, std::string("'") + k + "' cannot be given with 'time': the time sets the Earth-Sun distance");
    }
    double t = step_time.value_or(e.series.given ? e.series.times_unix.front() : 0.0);
    if (has_time) {
      const Located<std::string> text = s.required_string("time");
      try {
        t = sun::parse_iso8601(text.value).unix_seconds;
      } catch (const std::invalid_argument& ex) {
        throw s.document().error(text, ex.what());
      }
    }
    place_sun(e, t);
  } else {
    e.solar_zenith_deg = s.required_number("solar_zenith_deg", Range::closed_open(0.0, 90.0), "degrees").value;
    const auto day = s.optional_number("day_of_year", 0.0, Range::closed_open(1.0, 367.0));
    const auto factor = s.optional_number("distance_factor", 0.0, Range::closed(0.9, 1.1));
    if (day.given() && factor.given()) {
      throw s.error("distance_factor", "give either day_of_year or distance_factor, not both");
    }
    e.distance.day_of_year = day.value;
    e.distance.factor = factor.value;
  }
  e.irradiance_scale = s.optional_number("irradiance_scale", 1.0, Range::open_closed(0.0, 10.0)).value;
  e.spherical_beam = s.optional_choice("beam_geometry", "spherical", {"spherical", "plane_parallel"}).value == "spherical";
  s.check_no_unknown_keys();
}

void read_site(Section& s, Experiment& e) {
  e.site.given = true;
  e.site.latitude_deg = s.required_number("latitude_deg", Range::closed(-90.0, 90.0), "degrees").value;
  e.site.longitude_deg = s.required_number("longitude_deg", Range::closed(-180.0, 180.0), "degrees").value;
  const auto z = s.optional_number("elevation_m", 0.0, Range::closed(-500.0, 9000.0), "m");
  e.site.elevation_given = z.given();
  e.site.elevation_m = z.value;
  e.site.elevation_mark = z.mark;
  s.check_no_unknown_keys();
}

void read_plane(Section& s, Experiment& e) {
  if (!e.has_sun_position) {
    throw s.error("", "plane-of-array irradiance needs the sun's azimuth: give a 'site' and sun.time, or a "
                      "'times' section");
  }
  e.plane.given = true;
  e.plane.tilt_deg = s.required_number("tilt_deg", Range::closed(0.0, 90.0), "degrees").value;
  e.plane.azimuth_deg = s.optional_number("azimuth_deg", e.site.latitude_deg >= 0.0 ? 180.0 : 0.0,
                                          Range::closed_open(0.0, 360.0), "degrees").value;
  e.plane.sky = *sun::parse_sky_diffuse_model(
      s.optional_choice("sky_diffuse", "perez", {"isotropic", "hay_davies", "perez"}).value);
  e.plane.ground_albedo = s.optional_number("ground_albedo", -1.0, Range::closed(0.0, 1.0)).value;
  s.check_no_unknown_keys();
}

/// Splits one CSV line into trimmed cells.
std::vector<std::string> csv_cells(const std::string& line) {
  std::vector<std::string> cells;
  std::string cell;
  std::stringstream ss(line);
  while (std::getline(ss, cell, ',')) {
    while (!cell.empty() && (cell.back() == ' ' || cell.back() == '\t' || cell.back() == '\r')) cell.pop_back();
    std::size_t b = 0;
    while (b < cell.size() && (cell[b] == ' ' || cell[b] == '\t')) ++b;
    cells.push_back(cell.substr(b));
  }
  if (!line.empty() && line.back() == ',') cells.emplace_back();
  return cells;
}

/// times.inputs_file: a `time` column (ISO 8601 with offset) and per-step key-path columns.
void read_inputs_file(const Document& doc, const Located<std::string>& f, const fs::path& base, TimeSeriesSpec& ts) {
  const fs::path path = resolve(base, f.value);
  std::error_code ec;
  if (!fs::is_regular_file(path, ec)) {
    throw doc.error(f, "inputs file '" + path.string() + "' does not exist or is not a regular file");
  }
  std::ifstream in(path, std::ios::binary);
  if (!in) throw doc.error(f, "inputs file '" + path.string() + "' cannot be read");
  ts.inputs_file = path;
  const auto at = [&](int line, const std::string& msg) {
    return InputError(path.string(), {line, 1}, "times.inputs_file", msg);
  };
  std::string line;
  int row = 0;
  std::vector<std::string> header;
  while (std::getline(in, line)) {
    ++row;
    if (row == 1 && line.rfind("\xEF\xBB\xBF", 0) == 0) line.erase(0, 3);  // UTF-8 byte-order mark
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (line.empty() || line[0] == '#') continue;
    header = csv_cells(line);
    break;
  }
  if (header.empty()) throw at(row, "the inputs file has no header line (expected e.g. 'time,aerosol.optical_depth')");
  std::size_t time_col = header.size();
  for (std::size_t c = 0; c < header.size(); ++c) {
    const std::string& h = header[c];
    if (h == "time") {
      if (time_col != header.size()) throw at(row, "column 'time' appears twice");
      time_col = c;
      continue;
    }
    for (const char* forbidden : {"sun.", "site.", "times", "output", "sweep", "plane_of_array."}) {
      if (h.rfind(forbidden, 0) == 0) {
        throw at(row, "column '" + h + "' cannot be given per step (per-step inputs are physical keys such as "
                      "aerosol.optical_depth, atmosphere.precipitable_water_cm, atmosphere.ozone_column_du, surface.albedo)");
      }
    }
    if (h.empty()) throw at(row, "column " + std::to_string(c + 1) + " has an empty name");
    if (std::find(ts.input_paths.begin(), ts.input_paths.end(), h) != ts.input_paths.end()) {
      throw at(row, "column '" + h + "' appears twice");
    }
    ts.input_paths.push_back(h);
  }
  if (time_col == header.size()) throw at(row, "the inputs file needs a 'time' column (ISO 8601 with UTC offset)");
  ts.inputs.assign(ts.input_paths.size(), {});
  while (std::getline(in, line)) {
    ++row;
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (line.empty() || line[0] == '#') continue;
    const std::vector<std::string> cells = csv_cells(line);
    if (cells.size() != header.size()) {
      throw at(row, "expected " + std::to_string(header.size()) + " cells, found " + std::to_string(cells.size()));
    }
    if (ts.times_unix.size() >= kMaxTimeSteps) {
      throw at(row, "more than " + std::to_string(kMaxTimeSteps) + " steps; split the series into several studies");
    }
    sun::UtcTime t;
    try {
      t = sun::parse_iso8601(cells[time_col]);
    } catch (const std::invalid_argument& ex) {
      throw at(row, ex.what());
    }
    if (ts.times_unix.empty()) ts.utc_offset_minutes = t.utc_offset_minutes;
    ts.times_unix.push_back(t.unix_seconds);
    ts.times_text.push_back(cells[time_col]);
    ts.inputs_line.push_back(row);
    std::size_t k = 0;
    for (std::size_t c = 0; c < cells.size(); ++c) {
      if (c == time_col) continue;
      double v = std::numeric_limits<double>::quiet_NaN();
      if (!cells[c].empty()) {
        char* end = nullptr;
        v = std::strtod(cells[c].c_str(), &end);
        if (end == cells[c].c_str() || *end != '\0' || !std::isfinite(v)) {
          throw at(row, "column '" + header[c] + "': '" + cells[c] + "' is not a finite number (leave the cell empty "
                        "to keep the experiment's value)");
        }
      }
      ts.inputs[k++].push_back(v);
    }
  }
  if (ts.times_unix.empty()) throw at(row, "the inputs file has no steps");
}

void read_times(Section& s, Experiment& e, const fs::path& base) {
  const Document doc = s.document();
  TimeSeriesSpec& ts = e.series;
  ts.given = true;
  ts.mark = s.mark();
  const int forms = int(s.has("start")) + int(s.has("list")) + int(s.has("inputs_file"));
  if (forms != 1) {
    throw s.error(s.has("list") ? "list" : "start",
                  "give exactly one of: start/end/step_minutes, a 'list' of times, or an 'inputs_file'");
  }
  const auto parse_time = [&](const Located<std::string>& text) {
    try {
      return sun::parse_iso8601(text.value);
    } catch (const std::invalid_argument& ex) {
      throw doc.error(text, ex.what());
    }
  };
  if (s.has("start")) {
    const Located<std::string> a = s.required_string("start"), b = s.required_string("end");
    const auto step = s.required_number("step_minutes", Range::closed(1.0, 1440.0 * 31), "min");
    const sun::UtcTime t0 = parse_time(a), t1 = parse_time(b);
    if (!(t1.unix_seconds >= t0.unix_seconds)) throw doc.error(b, "the end comes before the start");
    const double dt = step.value * 60.0;
    const double count = std::floor((t1.unix_seconds - t0.unix_seconds) / dt + 1e-9) + 1.0;
    if (count > double(kMaxTimeSteps)) {
      throw doc.error(step, "the period has " + format_number(count) + " steps, more than the " +
                                std::to_string(kMaxTimeSteps) + " one series may have; use a longer step or split it");
    }
    ts.utc_offset_minutes = t0.utc_offset_minutes;
    for (std::size_t k = 0; k < static_cast<std::size_t>(count); ++k) {
      const double t = t0.unix_seconds + double(k) * dt;
      ts.times_unix.push_back(t);
      ts.times_text.push_back(sun::format_iso8601_local(t, t0.utc_offset_minutes));
    }
  } else if (s.has("list")) {
    const std::vector<Located<std::string>> items = s.string_list("list");
    if (items.empty()) throw s.error("list", "the list of times is empty");
    if (items.size() > kMaxTimeSteps) throw s.error("list", "more than " + std::to_string(kMaxTimeSteps) + " times");
    for (const auto& it : items) {
      const sun::UtcTime t = parse_time(it);
      if (ts.times_unix.empty()) ts.utc_offset_minutes = t.utc_offset_minutes;
      ts.times_unix.push_back(t.unix_seconds);
      ts.times_text.push_back(it.value);
    }
  } else {
    read_inputs_file(doc, s.required_string("inputs_file"), base, ts);
  }
  for (std::size_t k = 1; k < ts.times_unix.size(); ++k) {
    if (!(ts.times_unix[k] > ts.times_unix[k - 1])) {
      const std::string where = ts.inputs_file.empty() ? "" : " (line " + std::to_string(ts.inputs_line[k]) + " of " + ts.inputs_file.string() + ")";
      throw s.error(ts.inputs_file.empty() ? (s.has("list") ? "list" : "start") : "inputs_file",
                    "times must increase strictly: " + ts.times_text[k] + " does not follow " + ts.times_text[k - 1] + where);
    }
  }
  ts.daily_totals = s.optional_bool("daily_totals", true).value;
  s.check_no_unknown_keys();
}

void read_surface(Section& s, Experiment& e) {
  const auto albedo = s.optional_number("albedo", 0.2, Range::closed(0.0, 1.0));
  e.albedo_direct = s.optional_number("albedo_direct", albedo.value, Range::closed(0.0, 1.0)).value;
  e.albedo_diffuse = s.optional_number("albedo_diffuse", albedo.value, Range::closed(0.0, 1.0)).value;
  if (auto by = s.optional_subsection("albedo_by_band")) {
    for (const std::string& k : by->keys()) {
      const bool known = std::any_of(e.bands.begin(), e.bands.end(),
                                     [&](const spectrum::Band& b) { return b.name == k; });
      if (!known || e.given_optics_mode) {
        std::string names;
        for (const auto& b : e.bands) names += (names.empty() ? "" : ", ") + b.name;
        (void)by->has(k);
        throw by->error(k, "'" + k + "' is not a reporting band" +
                               (e.given_optics_mode ? " (given_optics has no spectral bands)"
                                                    : " (bands: " + names + ")"));
      }
      e.albedo_by_band[k] = by->required_number(k, Range::closed(0.0, 1.0)).value;
    }
    by->check_no_unknown_keys();
  }
  s.check_no_unknown_keys();
}

void read_spectrum(Section& s, Experiment& e, const fs::path& base) {
  const Document doc = s.document();
  if (s.has("bins")) {
    e.segments.clear();
    for (Section& b : s.sequence("bins")) {
      spectrum::GridSegment g;
      g.from_nm = b.required_number("from_nm", Range::open(0.0, 1e6), "nm").value;
      g.to_nm = b.required_number("to_nm", Range::open(0.0, 1e6), "nm").value;
      g.step_nm = b.required_number("step_nm", Range::greater_than(0.0), "nm").value;
      b.check_no_unknown_keys();
      e.segments.push_back(g);
    }
    if (const std::string m = spectrum::validate(e.segments); !m.empty()) throw s.error("bins", m);
  }
  if (s.has("bins") && !s.has("bands")) {
    // Custom bins without bands: the default bands (with UV-C below 280 nm), clipped to the grid;
    // bands wholly outside it are left out.
    const double lo = e.segments.front().from_nm, hi = e.segments.back().to_nm;
    std::vector<spectrum::Band> all = spectrum::default_bands();
    all.insert(all.begin(), spectrum::Band{"UV-C", 100.0, all.front().lower_nm});
    e.bands.clear();
    for (spectrum::Band b : all) {
      b.lower_nm = std::max(b.lower_nm, lo);
      b.upper_nm = std::min(b.upper_nm, hi);
      if (b.upper_nm > b.lower_nm) e.bands.push_back(b);
    }
  }
  if (s.has("bands")) {
    e.bands.clear();
    for (Section& b : s.sequence("bands")) {
      spectrum::Band band;
      band.name = b.required_string("name").value;
      band.lower_nm = b.required_number("from_nm", Range::open(0.0, 1e6), "nm").value;
      band.upper_nm = b.required_number("to_nm", Range::open(0.0, 1e6), "nm").value;
      b.check_no_unknown_keys();
      e.bands.push_back(band);
    }
  }
  if (s.has("solar_spectrum") && !s.is_mapping("solar_spectrum")) {
    const auto which = s.choice("solar_spectrum", {"builtin", "planck"});
    e.solar = which.value == "planck" ? SolarChoice::planck : SolarChoice::e490;
  } else if (auto sol = s.optional_subsection("solar_spectrum")) {
    const auto file = sol->required_string("file");
    e.solar_column = sol->optional_string("column", "").value;
    e.solar_fill_zero = sol->optional_choice("fill", "none", {"none", "zero"}).value == "zero";
    sol->check_no_unknown_keys();
    e.solar = SolarChoice::file;
    e.solar_file = resolve(base, file.value);
    if (const std::string why = file_problem(e.solar_file); !why.empty()) {
      throw doc.error(file, "solar spectrum file '" + e.solar_file.string() + "' " + why);
    }
    // Coverage of the grid, checked here so that a run never starts on a short table.
    spectrum_range range;
    try {
      range = table_range(e.solar_file, e.solar_column);
    } catch (const spectrum::SpectrumColumnError& ex) {
      // At the column value, or at solar_spectrum when no column is given.
      throw sol->error("column", std::string(ex.what()) + (e.solar_column.empty() ? " with the 'column' key" : ""));
    } catch (const std::exception& ex) {
      throw doc.error(file, ex.what());
    }
    const double lo = e.segments.front().from_nm, hi = e.segments.back().to_nm;
    if (!e.solar_fill_zero && (range.first > lo || range.second < hi)) {
      throw doc.error(file, "solar spectrum file '" + e.solar_file.string() + "' covers " + format_number(range.first) + ".." +
                                format_number(range.second) + " nm but the spectral grid spans " + format_number(lo) + ".." +
                                format_number(hi) + " nm; extend the table, narrow spectrum.bins, or add 'fill: zero' "
                                "to give the uncovered part zero irradiance");
    }
  }
  s.check_no_unknown_keys();
}

std::vector<GivenLayer> read_given_layers(Section& s) {
  std::vector<GivenLayer> layers;
  for (Section& l : s.sequence("layers")) {
    GivenLayer g;
    g.tau = l.required_number("optical_depth", Range::closed(0.0, 1e4)).value;
    g.omega = l.required_number("single_scattering_albedo", Range::closed(0.0, 1.0)).value;
    g.g = l.optional_number("asymmetry_parameter", 0.0, Range::open(-1.0, 1.0)).value;
    l.check_no_unknown_keys();
    layers.push_back(g);
  }
  return layers;
}

/// output.variables: a list of variable names and groups (experiment/output_variables.hpp).
/// Spectral variables need the per-bin output: they turn it on unless `spectral: false` is given.
void read_output_variables(Section& o, OutputConfig& out, const Located<bool>* spectral) {
  const Document doc = o.document();
  const std::vector<Located<std::string>> names = o.string_list("variables");
  if (names.empty()) throw o.error("variables", "give at least one variable or group name, or leave the key out to write everything");
  for (const Located<std::string>& n : names) {
    if (!is_output_name(n.value)) {
      std::string groups, variables;
      std::vector<std::string> all;
      for (std::string_view g : kOutputGroups) {
        groups += (groups.empty() ? "" : ", ") + std::string(g);
        all.emplace_back(g);
      }
      for (const OutputVariable& v : kOutputVariables) {
        variables += (variables.empty() ? "" : ", ") + std::string(v.name);
        all.emplace_back(v.name);
      }
      const std::string near = closest_name(n.value, all);
      throw doc.error(n, "unknown output variable or group '" + n.value + "'" +
                             (near.empty() ? std::string() : " (did you mean '" + near + "'?)") +
                             "; allowed groups: " + groups + "; allowed variables: " + variables);
    }
    if (output_group(n.value) == "spectral" || n.value == "spectral") {
      if (spectral && !spectral->value) {
        throw doc.error(n, "'" + n.value + "' needs the per-bin output, but output.spectral is false; remove one of them");
      }
      out.spectral = true;
    }
    out.variables.push_back(n.value);
  }
}

void read_given_optics(Section& s, Experiment& e) {
  const Document doc = s.document();
  GivenOptics& g = e.given;
  if (s.has("bands")) {
    if (s.has("layers")) throw s.error("layers", "give either 'layers' (one band) or 'bands', not both");
    for (Section& b : s.sequence("bands")) {
      GivenBand band;
      band.name = b.required_string("name").value;
      const auto lo = b.optional_number("from_nm", 0.0, Range::open(0.0, 1e6), "nm");
      const auto hi = b.optional_number("to_nm", 0.0, Range::open(0.0, 1e6), "nm");
      if (lo.given() != hi.given()) throw b.error(lo.given() ? "to_nm" : "from_nm", "give both from_nm and to_nm, or neither");
      if (lo.given() && !(hi.value > lo.value)) throw doc.error(hi, "to_nm must exceed from_nm (" + format_number(lo.value) + ")");
      band.lower_nm = lo.value;
      band.upper_nm = hi.value;
      band.solar_w_m2 = b.required_number("solar_irradiance_w_m2", Range::closed(0.0, 1e4), "W m-2").value;
      band.layers = read_given_layers(b);
      b.check_no_unknown_keys();
      if (!g.bands.empty() && band.layers.size() != g.bands.front().layers.size()) {
        throw b.error("layers", "every band needs the same number of layers (" +
                                    std::to_string(g.bands.front().layers.size()) + "), got " +
                                    std::to_string(band.layers.size()));
      }
      g.bands.push_back(std::move(band));
    }
  } else {
    GivenBand band;
    band.name = "all";
    band.solar_w_m2 = s.required_number("solar_irradiance_w_m2", Range::closed(0.0, 1e4), "W m-2").value;
    band.layers = read_given_layers(s);
    g.bands.push_back(std::move(band));
  }
  if (s.has("pressure_hpa")) {
    const LocatedNumbers p = s.number_list("pressure_hpa", Range::at_least(0.0), 2, "hPa");
    require_monotonic(doc, p, true, "pressure_hpa");
    if (p.values.size() != g.bands.front().layers.size() + 1) {
      throw doc.error(p.mark, p.key, "needs one pressure per level, i.e. layers + 1 = " +
                                         std::to_string(g.bands.front().layers.size() + 1) +
                                         " values, got " + std::to_string(p.values.size()));
    }
    g.pressure_hpa = p.values;
  }
  s.check_no_unknown_keys();
}

}  // namespace

const std::vector<std::pair<std::string, std::string>>& top_level_keys() {
  static const std::vector<std::pair<std::string, std::string>> keys = {
      {"title", "a line describing the experiment"},
      {"atmosphere", "levels or profile, ozone column, CO2, which gases scatter/absorb"},
      {"aerosol", "optical depth, Angstrom law, single-scattering albedo, asymmetry, vertical shape"},
      {"site", "latitude, longitude and elevation of the site (sun position from a time)"},
      {"sun", "solar zenith angle or time, Earth-Sun distance, irradiance scaling, beam geometry"},
      {"times", "a time series at the site: start/end/step, a list of times, or a CSV of per-step inputs"},
      {"plane_of_array", "a tilted receiving plane: tilt, azimuth, sky-diffuse model, ground albedo"},
      {"surface", "Lambertian albedo (direct, diffuse, per band)"},
      {"spectrum", "wavelength bins, reporting bands, solar spectrum file"},
      {"solver", "two-stream closure, or the exact multi-stream reference"},
      {"sweep", "grid or zipped axes over any numeric key, or a scenario list"},
      {"output", "output file, spectral output, CSV summary"},
      {"given_optics", "user-given layer optics instead of atmosphere/aerosol/spectrum"},
  };
  return keys;
}

std::shared_ptr<const optics::KTable> cached_ktable(const fs::path& path) {
  static std::mutex mutex;
  static std::map<std::string, std::shared_ptr<const optics::KTable>> tables;
  const std::string key = fs::absolute(path).lexically_normal().string();
  {
    std::lock_guard<std::mutex> lock(mutex);
    if (const auto it = tables.find(key); it != tables.end()) return it->second;
  }
  auto t = std::make_shared<const optics::KTable>(optics::read_ktable(path));
  std::lock_guard<std::mutex> lock(mutex);
  return tables.try_emplace(key, std::move(t)).first->second;
}

struct ProfileCache::Impl {
  mutable std::mutex mutex;
  std::map<std::string, std::unique_ptr<atmos::Profile>> profiles;
};
ProfileCache::ProfileCache() : impl_(std::make_unique<Impl>()) {}
ProfileCache::~ProfileCache() = default;
const atmos::Profile* ProfileCache::find(const fs::path& path) const {
  std::lock_guard<std::mutex> lock(impl_->mutex);
  const auto it = impl_->profiles.find(path.string());
  return it == impl_->profiles.end() ? nullptr : it->second.get();
}
void ProfileCache::store(const fs::path& path, const atmos::Profile& p) {
  std::lock_guard<std::mutex> lock(impl_->mutex);
  impl_->profiles.try_emplace(path.string(), std::make_unique<atmos::Profile>(p));
}

Experiment parse_experiment(std::string text, const std::string& name, const fs::path& base_dir,
                            ProfileCache* profiles, std::optional<double> step_time) {
  const Document doc = Document::parse(std::move(text), name);
  Section root = doc.root();
  Experiment e;
  e.data_dir = default_data_dir();
  e.source = name;
  e.text = doc.text();
  e.title = root.optional_string("title", "").value;
  e.segments = spectrum::default_segments();
  e.bands = spectrum::default_bands();
  // The default bands start at 280 nm; a UV-C band over the rest of the default grid makes the
  // bands tile it, so that broadband = sum of bands.
  if (e.segments.front().from_nm < e.bands.front().lower_nm) {
    e.bands.insert(e.bands.begin(), spectrum::Band{"UV-C", e.segments.front().from_nm, e.bands.front().lower_nm});
  }

  if (auto site = root.optional_subsection("site")) read_site(*site, e);
  const bool series = root.has("times");
  if (series && !step_time) {
    if (root.has("sweep")) {
      throw root.error("times", "a 'times' series cannot be combined with a 'sweep' in one study; run one study per "
                                "sweep scenario");
    }
    if (!e.site.given) throw root.error("times", "a 'times' series needs a 'site' section (latitude_deg, longitude_deg)");
    Section t = root.subsection("times");
    read_times(t, e, base_dir);
  }
  e.given_optics_mode = root.has("given_optics");
  if (e.given_optics_mode && e.site.elevation_given) {
    throw doc.error(e.site.elevation_mark, "site.elevation_m",
                    "the site elevation cuts the atmosphere profile; given_optics has no profile (leave it out)");
  }
  if (e.given_optics_mode) {
    for (const char* k : {"atmosphere", "aerosol", "spectrum"}) {
      if (root.has(k)) {
        throw root.error(k, std::string("'") + k + "' cannot be combined with 'given_optics', which "
                             "replaces the atmosphere, aerosol and spectrum with the given layer optics");
      }
    }
    Section g = root.subsection("given_optics");
    read_given_optics(g, e);
  } else {
    if (root.has("atmosphere")) {
      Section a = root.subsection("atmosphere");
      read_atmosphere(a, e, base_dir, profiles);
    } else {
      e.profile = atmos::make_us_standard_1976();
      e.profile_origin = "built-in U.S. Standard Atmosphere 1976 (generated)";
    }
    if (e.absorbers.empty()) {
      e.absorbers = {{"H2O", "builtin", {}, nullptr}, {"O2", "builtin", {}, nullptr}, {"CO2", "none", {}, nullptr}};
    }
    if (auto a = root.optional_subsection("aerosol")) read_aerosol(*a, e);
    else e.aerosol.tau_ref = 0.0;
    if (auto sp = root.optional_subsection("spectrum")) read_spectrum(*sp, e, base_dir);
    if (const std::string m = spectrum::validate(e.bands, e.segments.front().from_nm, e.segments.back().to_nm); !m.empty()) {
      throw root.error("spectrum", m);
    }
  }
  {
    if (series && !root.has("sun")) {
      // Not value_or: its argument is evaluated even when a step time is given, and a step has no times.
      place_sun(e, step_time ? *step_time : e.series.times_unix.front());
    } else {
      Section s = root.subsection("sun");
      read_sun(s, e, series, step_time);
    }
  }
  if (auto p = root.optional_subsection("plane_of_array")) read_plane(*p, e);
  if (auto s = root.optional_subsection("surface")) read_surface(*s, e);
  if (auto s = root.optional_subsection("solver")) {
    e.closure = *rt::parse_closure(s->optional_choice("closure", "delta_eddington", kClosureNames).value);
    e.reference_solver = s->optional_choice("method", "two_stream", {"two_stream", "reference"}).value == "reference";
    const auto streams = s->optional_integer("streams", 16, Range::closed(4, 64));
    if (streams.value % 2 != 0) throw s->document().error(streams, "the number of streams must be even");
    e.reference_streams = static_cast<int>(streams.value);
    e.single_precision = s->optional_choice("precision", "double", {"double", "float"}).value == "float";
    s->check_no_unknown_keys();
  }
  {
    fs::path stem = fs::path(name).stem();
    e.output.file = stem.string() + ".h5";
    if (auto o = root.optional_subsection("output")) {
      const auto file = o->optional_string("file", e.output.file.string());
      e.output.file = file.value;
      e.output.file_mark = file.mark;
      const bool spectral_given = o->has("spectral");
      const Located<bool> spectral = o->optional_bool("spectral", false);
      e.output.spectral = spectral.value;
      const auto csv = o->optional_string("csv", "");
      e.output.csv = csv.value;
      e.output.csv_mark = csv.mark;
      if (o->has("variables")) read_output_variables(*o, e.output, spectral_given ? &spectral : nullptr);
      o->check_no_unknown_keys();
    }
  }
  (void)root.has("sweep");  // read by Study (experiment/sweep.hpp)
  root.check_no_unknown_keys();
  return e;
}

sun::Site refraction_site(const Experiment& e) {
  sun::Site site{e.site.latitude_deg, e.site.longitude_deg, 1013.25, 15.0};
  if (!e.given_optics_mode && e.profile.n_levels() >= 2) {
    site.pressure_hpa = e.profile.pressure_hpa.back();
    site.temperature_c = e.profile.temperature_k.back() - 273.15;
  }
  return site;
}

void place_sun(Experiment& e, double t_unix) {
  const sun::SolarPosition pos = sun::solar_position(refraction_site(e), {t_unix});
  e.has_sun_position = true;
  e.time_unix_s = t_unix;
  e.solar_azimuth_deg = pos.azimuth_deg;
  e.solar_zenith_deg = pos.zenith_deg;
  e.sun_up = pos.zenith_deg < 90.0;
  e.distance.day_of_year = 0.0;
  e.distance.factor = pos.distance_factor;
}

atmos::Profile parse_profile(std::string text, const std::string& name) {
  return read_profile_document(Document::parse(std::move(text), name), fs::path(name).stem().string());
}

fs::path default_data_dir() {
  if (const char* env = std::getenv("SOLSTRATA_DATA_DIR"); env && *env) return fs::path(env);
  // Installed: <prefix>/bin/solstrata finds <prefix>/share/solstrata/data (cmake --install).
  std::error_code ec;
  const fs::path exe = fs::read_symlink("/proc/self/exe", ec);
  if (!ec) {
    const fs::path installed = exe.parent_path().parent_path() / "share" / "solstrata" / "data";
    if (fs::is_regular_file(installed / "solar" / "astm_e490_00a.csv", ec)) return installed;
  }
#ifdef SOLSTRATA_SOURCE_DATA_DIR
  return fs::path(SOLSTRATA_SOURCE_DATA_DIR);
#else
  return fs::path("data");
#endif
}

std::string read_experiment_text(const fs::path& path) {
  // A directory is refused by name; pipes (e.g. /dev/stdin) are read like files.
  if (const std::string why = file_problem(path); why == "is a directory, not a file") {
    throw InputError(path.string(), {}, "", "the experiment file " + why);
  }
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    throw InputError(path.string(), {}, "", "cannot open the experiment file (does it exist and is it readable?)");
  }
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

Experiment load_experiment(const fs::path& path) {
  return parse_experiment(read_experiment_text(path), path.string(), path.parent_path());
}

}  // namespace solstrata::experiment
