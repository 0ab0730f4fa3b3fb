#include "experiment/sweep.hpp"

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <set>
#include <stdexcept>
#include <sstream>

#include <yaml-cpp/yaml.h>

#include "experiment/yaml_reader.hpp"
#include "atmos/profile.hpp"
#include "optics/aerosol.hpp"
#include "sun/daily.hpp"
#include "sun/tilted_plane.hpp"

namespace solstrata::experiment {
namespace {

namespace fs = std::filesystem;

/// Reads the values of one sweep item: an explicit list, or a range {from, to, count, spacing}.
/// `max_count`: the most values the ceiling kMaxScenarios leaves for this axis (given the axes
/// read before it), so that a range of too many values is refused before it is expanded.
/// `shape_before`: the sizes of those axes ("10 x 20"), for the message.
SweepParameter read_parameter(Section& item, std::size_t max_count, const std::string& shape_before = {}) {
  const Document doc = item.document();
  SweepParameter p;
  const Located<std::string> path = item.required_string("parameter");
  p.path = path.value;
  p.mark = path.mark;
  if (item.has("values") == item.has("range")) {
    throw item.error("values", "give either 'values' (a list) or 'range' ({from, to, count, spacing}), exactly one");
  }
  if (item.has("values")) {
    p.values = item.number_list("values").values;
  } else {
    Section r = item.subsection("range");
    const auto from = r.required_number("from");
    const auto to = r.required_number("to");
    const auto count = r.required_integer("count", Range::closed(1, 1e7));
    const auto spacing = r.optional_choice("spacing", "linear", {"linear", "log"});
    r.check_no_unknown_keys();
    if (static_cast<std::size_t>(count.value) > max_count) {
      const std::string shape = (shape_before.empty() ? "" : shape_before + " x ") + std::to_string(count.value);
      throw doc.error(count, "the sweep has " + shape + std::string(max_count == 0 ? " x ..." : "") + " scenarios or more, more than the " +
                                 std::to_string(kMaxScenarios) + " one study may have (this range can have at most " +
                                 std::to_string(max_count) + " values); split it into several studies");
    }
    const bool log = spacing.value == "log";
    if (log && !(from.value > 0 && to.value > 0)) {
      throw doc.error(from, "a log range needs from > 0 and to > 0");
    }
    const auto n = static_cast<std::size_t>(count.value);
    for (std::size_t k = 0; k < n; ++k) {
      const double t = n == 1 ? 0.0 : double(k) / double(n - 1);
      const double v = log ? std::exp(std::log(from.value) + t * (std::log(to.value) - std::log(from.value)))
                           : from.value + t * (to.value - from.value);
      // Rounded to 15 significant digits, so that decimal steps come out as written (20, not
      // 20.000000000000004; 0.05, not 0.05000000000000001) and selecting by value works.
      char buf[32];
      std::snprintf(buf, sizeof buf, "%.15g", v);
      p.values.push_back(std::strtod(buf, nullptr));
    }
    if (n > 1) p.values.back() = to.value;  // exact end point
  }
  item.check_no_unknown_keys();
  return p;
}

/// Splits "a.b[2].c" into {("a",-1), ("b",2), ("c",-1)}; empty on a malformed path.
std::vector<std::pair<std::string, long>> split_path(const std::string& path) {
  std::vector<std::pair<std::string, long>> out;
  std::stringstream ss(path);
  std::string tok;
  while (std::getline(ss, tok, '.')) {
    long index = -1;
    const auto lb = tok.find('[');
    if (lb != std::string::npos) {
      if (tok.back() != ']') return {};
      try {
        index = std::stol(tok.substr(lb + 1, tok.size() - lb - 2));
      } catch (...) {
        return {};
      }
      if (index < 0) return {};
      tok = tok.substr(0, lb);
    }
    if (tok.empty()) return {};
    out.emplace_back(tok, index);
  }
  return out;
}

/// Sets the value at `path` in `root`, creating missing mappings. Returns an error text or "".
std::string set_path(YAML::Node root, const std::string& path, double value) {
  const auto parts = split_path(path);
  if (parts.empty()) return "malformed parameter path '" + path + "' (expected keys joined by '.', e.g. aerosol.optical_depth)";
  YAML::Node cur;
  cur.reset(root);
  for (std::size_t i = 0; i < parts.size(); ++i) {
    const auto& [key, index] = parts[i];
    const bool last = i + 1 == parts.size();
    if (!cur.IsMap() && cur.IsDefined() && !cur.IsNull()) return "'" + key + "' in '" + path + "' is inside a value that is not a mapping";
    YAML::Node next = cur[key];
    if (index >= 0) {
      if (!next.IsSequence() || static_cast<std::size_t>(index) >= next.size()) {
        return "'" + key + "[" + std::to_string(index) + "]' in '" + path + "' does not exist in the experiment";
      }
      YAML::Node elem = next[static_cast<std::size_t>(index)];
      if (last) {
        elem = value;
        return "";
      }
      cur.reset(elem);
    } else {
      if (last) {
        if (next.IsDefined() && !next.IsNull() && !next.IsScalar()) return "'" + path + "' is a section, not a number";
        cur[key] = value;
        return "";
      }
      if (!next.IsDefined() || next.IsNull()) cur[key] = YAML::Node(YAML::NodeType::Map);
      cur.reset(cur[key]);
    }
  }
  return "";
}

std::string emit(const YAML::Node& n) {
  YAML::Emitter out;
  out.SetDoublePrecision(17);
  out << n;
  return std::string(out.c_str()) + "\n";
}

std::string format_value(double v) {
  std::ostringstream os;
  os.precision(10);
  os << v;
  return os.str();
}

/// A key that sweeps and per-step inputs can set on the typed experiment directly, without the
/// YAML round trip: its rule (the loader's range for the key) and what it sets. The loader is the
/// reference: tests/experiment/sweep_test.cpp checks that both paths give the same results.
struct TypedKey {
  const char* path;
  const char* name;  ///< the key's last part, for the rule's text
  Range range;
  void (*set)(Experiment&, double);
};
const TypedKey kTypedKeys[] = {
    {"sun.solar_zenith_deg", "solar_zenith_deg", Range::closed_open(0.0, 90.0), [](Experiment& e, double v) { e.solar_zenith_deg = v; }},
    {"surface.albedo", "albedo", Range::closed(0.0, 1.0), [](Experiment& e, double v) { e.albedo_direct = e.albedo_diffuse = v; }},
    {"surface.albedo_direct", "albedo_direct", Range::closed(0.0, 1.0), [](Experiment& e, double v) { e.albedo_direct = v; }},
    {"surface.albedo_diffuse", "albedo_diffuse", Range::closed(0.0, 1.0), [](Experiment& e, double v) { e.albedo_diffuse = v; }},
    {"aerosol.optical_depth", "optical_depth", Range::closed(0.0, 50.0), [](Experiment& e, double v) { e.aerosol.tau_ref = v; }},
    {"aerosol.single_scattering_albedo", "single_scattering_albedo", Range::closed(0.0, 1.0), [](Experiment& e, double v) { e.aerosol.omega = v; }},
    {"aerosol.asymmetry_parameter", "asymmetry_parameter", Range::open(-1.0, 1.0), [](Experiment& e, double v) { e.aerosol.g = v; }},
    {"aerosol.angstrom_exponent", "angstrom_exponent", Range::closed(-1.0, 4.0), [](Experiment& e, double v) { e.aerosol.angstrom = v; }},
    {"atmosphere.ozone_column_du", "ozone_column_du", Range::open_closed(0.0, 1000.0), [](Experiment& e, double v) { e.optics.total_ozone_du = v; }},
};

const TypedKey* typed_key(const std::string& path) {
  for (const TypedKey& k : kTypedKeys)
    if (path == k.path) return &k;
  return nullptr;
}

/// Whether `path` can be set typed on `base`, read from the file `root`: the key is in the table,
/// and nothing else in the file changes what it means (a separate direct/diffuse albedo, an
/// aerosol spectral table or two-wavelength form, a zenith from a time, a profile without ozone).
bool typed_usable(const std::string& path, const Experiment& base, const YAML::Node& root) {
  if (!typed_key(path) || !root.IsMap()) return false;
  // A missing key of a const node reads as an invalid node: IsDefined() first (it never throws).
  const auto is_map = [&](const char* section) {
    const YAML::Node sec = root[section];
    return sec.IsDefined() && sec.IsMap();
  };
  const auto has = [&](const char* section, const char* key) {
    if (!is_map(section)) return false;
    const YAML::Node sec = root[section];
    return sec[key].IsDefined();
  };
  const bool aerosol = is_map("aerosol") && !base.given_optics_mode;
  if (path == "sun.solar_zenith_deg") return !base.has_sun_position && !base.series.given;
  if (path == "surface.albedo") return !has("surface", "albedo_direct") && !has("surface", "albedo_diffuse");
  if (path == "aerosol.optical_depth") return aerosol;
  if (path == "aerosol.single_scattering_albedo" || path == "aerosol.asymmetry_parameter") {
    return aerosol && !has("aerosol", "spectral_table");
  }
  if (path == "aerosol.angstrom_exponent") {
    return aerosol && !has("aerosol", "second_wavelength_nm") && !has("aerosol", "second_optical_depth");
  }
  if (path == "atmosphere.ozone_column_du") return !base.given_optics_mode && atmos::total_ozone_du(base.profile) > 0.0;
  return true;
}

/// Applies typed values to a copy of `base`. False when the result fails a cross-check the loader
/// makes (the aerosol's own rules): the caller then takes the YAML path, whose error names it.
bool apply_typed(Experiment& e, const std::vector<std::pair<std::string, double>>& values) {
  bool aerosol = false;
  for (const auto& [path, v] : values) {
    typed_key(path)->set(e, v);
    aerosol = aerosol || path.rfind("aerosol.", 0) == 0;
  }
  if (aerosol) {
    if (!e.aerosol.validate().empty()) return false;
    try {
      (void)optics::layer_fractions(e.aerosol, e.profile);
    } catch (const std::exception&) {
      return false;
    }
  }
  return true;
}

/// The steps and daily-total nodes of a time series.
TimePlan make_time_plan(const Experiment& base) {
  const TimeSeriesSpec& ts = base.series;
  TimePlan tp;
  tp.n_steps = ts.times_unix.size();
  if (!ts.daily_totals) return tp;
  const sun::Site site = refraction_site(base);
  const double offset = 60.0 * ts.utc_offset_minutes;
  const auto local_midnight = [&](double t) { return std::floor((t + offset) / 86400.0) * 86400.0 - offset; };
  const double first = local_midnight(ts.times_unix.front()), last = local_midnight(ts.times_unix.back());
  const sun::GaussLegendre q = sun::gauss_legendre(kDailyNodes), q_low = sun::gauss_legendre(kDailyLowSunNodes);
  const auto add_nodes = [&](const sun::GaussLegendre& g, double a, double b, std::size_t day) {
    const double mid = 0.5 * (a + b), half = 0.5 * (b - a);
    for (std::size_t k = 0; k < g.x.size(); ++k) {
      const double t = mid + half * g.x[k];
      tp.node_time.push_back(t);
      tp.node_weight.push_back(half * g.w[k]);
      tp.node_day.push_back(day);
      // The step nearest in time gives the node its per-step inputs.
      const auto it = std::lower_bound(ts.times_unix.begin(), ts.times_unix.end(), t);
      std::size_t j = static_cast<std::size_t>(it - ts.times_unix.begin());
      if (j == ts.times_unix.size() || (j > 0 && t - ts.times_unix[j - 1] <= ts.times_unix[j] - t)) --j;
      tp.node_step.push_back(j);
    }
  };
  for (double d0 = first; d0 <= last + 1.0; d0 += 86400.0) {
    const std::size_t day = tp.day_start.size();
    tp.day_start.push_back(d0);
    double daylight = 0.0;
    for (const auto& [rise, set] : sun::daylight_intervals(site, d0, d0 + 86400.0, true)) {
      daylight += set - rise;
      // Pieces between the instants where the integrand has a kink: the sun crossing kLowSunDeg
      // of elevation (the sky-diffuse models change form there) and, with a tilted plane, the sun
      // crossing the plane (the beam on it starts or stops). Each piece has its own
      // Gauss-Legendre rule: kDailyNodes with the sun high, kDailyLowSunNodes with it low.
      const auto elevation = [&](double t) { return 90.0 - sun::solar_position(site, {t}).zenith_deg; };
      std::vector<double> cuts = sun::sign_changes([&](double t) { return elevation(t) - kLowSunDeg; }, rise, set);
      if (base.plane.given) {
        for (double c : sun::sign_changes(
                 [&](double t) {
                   const sun::SolarPosition p = sun::solar_position(site, {t});
                   return 90.0 - sun::angle_of_incidence_deg(p.zenith_deg, p.azimuth_deg, base.plane.tilt_deg,
                                                             base.plane.azimuth_deg);
                 },
                 rise, set))
          cuts.push_back(c);
      }
      cuts.push_back(rise);
      cuts.push_back(set);
      std::sort(cuts.begin(), cuts.end());
      for (std::size_t c = 0; c + 1 < cuts.size(); ++c) {
        const double a = cuts[c], b = cuts[c + 1];
        if (b - a < 1e-3) continue;
        add_nodes(elevation(0.5 * (a + b)) > kLowSunDeg ? q : q_low, a, b, day);
      }
    }
    tp.daylight_s.push_back(daylight);
  }
  return tp;
}

}  // namespace

SweepAxis parse_scenario_csv(const std::string& text, const std::string& file, const SourceMark& mark) {
  // A UTF-8 byte order mark (written by some spreadsheet programs) is not part of the header.
  std::istringstream csv(text.rfind("\xEF\xBB\xBF", 0) == 0 ? text.substr(3) : text);
  const auto trim = [](std::string& c) {
    while (!c.empty() && (c.back() == '\r' || c.back() == ' ' || c.back() == '\t')) c.pop_back();
    std::size_t b = 0;
    while (b < c.size() && (c[b] == ' ' || c[b] == '\t')) ++b;
    c.erase(0, b);
  };
  const auto fail = [&](std::size_t row, const std::string& what) {
    throw std::invalid_argument(file + " line " + std::to_string(row) + ": " + what);
  };
  std::string line;
  std::size_t row = 0;
  bool have_header = false;
  // Comment lines ('#') and blank lines may stand before the header too.
  while (std::getline(csv, line)) {
    ++row;
    trim(line);
    if (!line.empty() && line[0] != '#') {
      have_header = true;
      break;
    }
  }
  if (!have_header) throw std::invalid_argument("scenario file '" + file + "' has no header line (the swept parameters)");
  SweepAxis axis;
  {
    std::stringstream hs(line);
    std::string col;
    while (std::getline(hs, col, ',')) {
      trim(col);
      if (col.empty()) fail(row, "empty column name in the header (expected key paths such as aerosol.optical_depth)");
      axis.parameters.push_back({col, {}, mark});
    }
    if (line.back() == ',') fail(row, "empty column name in the header (a trailing comma)");
  }
  while (std::getline(csv, line)) {
    ++row;
    trim(line);
    if (line.empty() || line[0] == '#') continue;
    std::stringstream rs(line);
    std::string cell;
    std::size_t c = 0;
    while (std::getline(rs, cell, ',')) {
      if (c >= axis.parameters.size()) fail(row, "more cells than header columns (" + std::to_string(axis.parameters.size()) + ")");
      trim(cell);
      const char* begin = cell.c_str();
      char* end = nullptr;
      errno = 0;
      const double v = std::strtod(begin, &end);
      if (cell.empty() || end == begin || *end != '\0' || errno == ERANGE || !std::isfinite(v)) {
        fail(row, "'" + cell + "' in column '" + axis.parameters[c].path + "' is not a finite number");
      }
      axis.parameters[c].values.push_back(v);
      ++c;
    }
    if (line.back() == ',') fail(row, "empty last cell (a trailing comma)");
    if (c != axis.parameters.size()) {
      fail(row, "expected " + std::to_string(axis.parameters.size()) + " cells, found " + std::to_string(c));
    }
    if (axis.parameters.front().values.size() > kMaxScenarios) {
      fail(row, "more than " + std::to_string(kMaxScenarios) + " scenarios, the most one study may have");
    }
  }
  if (axis.parameters.front().values.empty()) throw std::invalid_argument("scenario file '" + file + "' has no scenarios");
  return axis;
}

std::size_t SweepPlan::n_scenarios() const {
  if (time_series) return time.n_steps + time.n_nodes();
  std::size_t n = 1;
  for (const SweepAxis& a : axes) n *= a.size();
  return n;
}

std::vector<std::size_t> SweepPlan::shape() const {
  if (time_series) return {time.n_steps};
  std::vector<std::size_t> s;
  for (const SweepAxis& a : axes) s.push_back(a.size());
  return s;
}

std::vector<const SweepParameter*> SweepPlan::parameters() const {
  std::vector<const SweepParameter*> v;
  for (const SweepAxis& a : axes)
    for (const SweepParameter& p : a.parameters) v.push_back(&p);
  return v;
}

std::vector<std::pair<std::string, double>> SweepPlan::assignment(std::size_t i) const {
  std::vector<std::pair<std::string, double>> out;
  // Row-major: the last axis varies fastest.
  std::vector<std::size_t> idx(axes.size());
  for (std::size_t a = axes.size(); a-- > 0;) {
    idx[a] = i % axes[a].size();
    i /= axes[a].size();
  }
  for (std::size_t a = 0; a < axes.size(); ++a)
    for (const SweepParameter& p : axes[a].parameters) out.emplace_back(p.path, p.values[idx[a]]);
  return out;
}

struct Study::Impl {
  std::string text, name;
  fs::path base_dir;
  YAML::Node root;  // the file without its sweep section
  std::shared_ptr<Document> doc;
  std::unique_ptr<ProfileCache> profiles = std::make_unique<ProfileCache>();
  /// every swept parameter (or per-step input) is set typed on the base experiment (kTypedKeys);
  /// false: each scenario is the file with its values written in, read like a file of its own
  bool typed = false;
  Experiment lite;  ///< the base experiment without its series: what typed cases copy
};

Study::Study() : impl_(std::make_unique<Impl>()) {}
Study::Study(Study&&) noexcept = default;
Study& Study::operator=(Study&&) noexcept = default;
Study::~Study() = default;

Study Study::load(const fs::path& path) {
  return parse(read_experiment_text(path), path.string(), path.parent_path());
}

Study Study::parse(std::string text, const std::string& name, const fs::path& base_dir) {
  Study s;
  s.base_ = parse_experiment(text, name, base_dir);
  s.impl_->text = text;
  s.impl_->name = name;
  s.impl_->base_dir = base_dir;
  s.impl_->doc = std::make_shared<Document>(Document::parse(text, name));
  Section root = s.impl_->doc->root();
  if (root.has("sweep")) {
    Section sw = root.subsection("sweep");
    if (sw.has("scenario_file")) {
      if (sw.has("grid") || sw.has("zip")) throw sw.error("scenario_file", "give either a scenario_file or grid/zip axes, not both");
      const Located<std::string> f = sw.required_string("scenario_file");
      const fs::path path = fs::path(f.value).is_absolute() ? fs::path(f.value) : base_dir / f.value;
      std::error_code ec;
      if (fs::is_directory(path, ec)) throw s.impl_->doc->error(f, "scenario file '" + path.string() + "' is a directory");
      if (fs::exists(path, ec) && !fs::is_regular_file(path, ec)) {
        throw s.impl_->doc->error(f, "scenario file '" + path.string() + "' is not a regular file");
      }
      std::ifstream csv(path, std::ios::binary);
      if (!csv) throw s.impl_->doc->error(f, "scenario file '" + path.string() + "' cannot be read");
      std::ostringstream csv_text;
      csv_text << csv.rdbuf();
      if (csv.bad()) throw s.impl_->doc->error(f, "scenario file '" + path.string() + "' cannot be read");
      SweepAxis axis;
      try {
        axis = parse_scenario_csv(csv_text.str(), path.string(), f.mark);
      } catch (const std::invalid_argument& ex) {
        throw s.impl_->doc->error(f, ex.what());
      }
      s.plan_.axes.push_back(std::move(axis));
      s.plan_.from_list = true;
    } else {
      if (!sw.has("grid") && !sw.has("zip")) {
        sw.check_no_unknown_keys();  // a misspelt 'grid' is the likely cause
        throw sw.error("grid", "a sweep needs 'grid' axes, 'zip' lists or a 'scenario_file'");
      }
      if (sw.has("grid")) {
        std::size_t product = 1;
        std::string shape;
        for (Section& item : sw.sequence("grid")) {
          s.plan_.axes.push_back({{read_parameter(item, kMaxScenarios / product, shape)}});
          shape += (shape.empty() ? "" : " x ") + std::to_string(s.plan_.axes.back().size());
          product *= std::max<std::size_t>(1, std::min(s.plan_.axes.back().size(), kMaxScenarios));
          if (product > kMaxScenarios) product = kMaxScenarios + 1;
        }
      }
      if (sw.has("zip")) {
        SweepAxis zip;
        for (Section& item : sw.sequence("zip")) {
          SweepParameter p = read_parameter(item, kMaxScenarios);
          if (!zip.parameters.empty() && p.values.size() != zip.parameters.front().values.size()) {
            throw s.impl_->doc->error(p.mark, "sweep.zip", "zipped lists must have the same length: '" + p.path + "' has " +
                                                                 std::to_string(p.values.size()) + " values, '" +
                                                                 zip.parameters.front().path + "' has " +
                                                                 std::to_string(zip.parameters.front().values.size()));
          }
          zip.parameters.push_back(std::move(p));
        }
        s.plan_.axes.push_back(std::move(zip));
      }
    }
    sw.check_no_unknown_keys();
    // Checked product of the axis sizes: refuse at once what would overflow or exceed the ceiling.
    {
      std::size_t n = 1;
      std::string shape;
      bool over = false;
      for (const SweepAxis& a : s.plan_.axes) {
        shape += (shape.empty() ? "" : " x ") + std::to_string(a.size());
        if (a.size() != 0 && n > kMaxScenarios / a.size()) over = true;
        else n *= a.size();
      }
      if (over || n > kMaxScenarios) {
        throw s.impl_->doc->error(s.plan_.parameters().front()->mark, "sweep",
                                  "the sweep has " + shape + " scenarios, more than the " +
                                      std::to_string(kMaxScenarios) + " one study may have; split it into several studies");
      }
    }
    std::set<std::string> seen;
    for (const SweepParameter* p : s.plan_.parameters()) {
      if (!seen.insert(p->path).second) throw s.impl_->doc->error(p->mark, "sweep", "parameter '" + p->path + "' is swept twice");
      if (p->path.rfind("sweep", 0) == 0 || p->path.rfind("output", 0) == 0) {
        throw s.impl_->doc->error(p->mark, "sweep", "'" + p->path + "' cannot be swept (only physical parameters)");
      }
    }
  }
  if (s.base_.series.given) {
    s.plan_.time_series = true;
    s.plan_.time = make_time_plan(s.base_);
    if (s.plan_.n_scenarios() > kMaxScenarios) {
      throw s.impl_->doc->error(s.base_.series.mark, "times", "the series has too many steps and daily-total nodes");
    }
  }
  s.impl_->root = YAML::Load(text);
  if (s.impl_->root.IsMap()) s.impl_->root.remove("sweep");
  // Typed patches: when every swept key (or per-step input) is one the study can set directly,
  // scenarios are copies of the base experiment with the values set, each value checked once here
  // against its key's rule; otherwise every scenario goes through the loader.
  {
    std::vector<std::string> paths;
    for (const SweepParameter* p : s.plan_.parameters()) paths.push_back(p->path);
    for (const std::string& p : s.base_.series.input_paths) paths.push_back(p);
    bool typed = true;
    for (const std::string& p : paths) typed = typed && typed_usable(p, s.base_, s.impl_->root);
    if (typed) {
      for (const SweepParameter* p : s.plan_.parameters()) {
        const TypedKey& k = *typed_key(p->path);
        for (std::size_t j = 0; j < p->values.size(); ++j) {
          const double v = p->values[j];
          if (!k.range.contains(v)) {
            // In a scenario list the value's position is the scenario number.
            const std::string where = s.plan_.from_list ? " in scenario " + std::to_string(j) : "";
            throw s.impl_->doc->error(p->mark, "sweep", "value " + format_number(v) + " of '" + p->path + "'" + where +
                                                           " is outside its allowed range: " + k.range.describe(k.name));
          }
        }
      }
      const TimeSeriesSpec& ts = s.base_.series;
      for (std::size_t c = 0; c < ts.input_paths.size(); ++c) {
        const TypedKey& k = *typed_key(ts.input_paths[c]);
        for (std::size_t i = 0; i < ts.inputs[c].size(); ++i) {
          const double v = ts.inputs[c][i];
          if (!std::isnan(v) && !k.range.contains(v)) {
            throw InputError(ts.inputs_file.string(), {ts.inputs_line[i], 1}, ts.input_paths[c],
                             "step " + std::to_string(i) + " (" + ts.times_text[i] + "): value " + format_number(v) +
                                 " is outside its allowed range: " + k.range.describe(k.name));
          }
        }
      }
    }
    s.impl_->typed = typed;
    s.impl_->lite = s.base_;
    s.impl_->lite.series = {};  // the study holds the series; each case is one instant
  }
  return s;
}

Experiment Study::scenario(std::size_t i) const {
  if (plan_.time_series) return time_step(i);
  if (plan_.axes.empty()) return parse_experiment(impl_->text, impl_->name, impl_->base_dir);
  if (impl_->typed) {
    Experiment e = impl_->lite;
    if (apply_typed(e, plan_.assignment(i))) return e;
    // A cross-check failed: the loader gives the message.
  }
  YAML::Node n = YAML::Clone(impl_->root);
  const auto assign = plan_.assignment(i);
  for (const auto& [path, value] : assign) {
    if (std::string err = set_path(n, path, value); !err.empty()) {
      for (const SweepParameter* p : plan_.parameters())
        if (p->path == path) throw impl_->doc->error(p->mark, "sweep", err);
    }
  }
  try {
    Experiment e = parse_experiment(emit(n), impl_->name, impl_->base_dir, impl_->profiles.get());
    e.text = impl_->text;
    return e;
  } catch (const InputError& ex) {
    // Point at the sweep entry whose value the scenario rejected (or the first one).
    const SweepParameter* culprit = plan_.parameters().front();
    for (const SweepParameter* p : plan_.parameters())
      if (ex.key_path() == p->path || ex.key_path().rfind(p->path, 0) == 0) culprit = p;
    std::string values;
    for (const auto& [path, value] : assign) values += (values.empty() ? "" : ", ") + path + " = " + format_value(value);
    throw impl_->doc->error(culprit->mark, "sweep",
                            "scenario " + std::to_string(i) + " (" + values + ") is invalid: " + ex.key_path() + ": " + ex.message());
  }
}

Experiment Study::time_step(std::size_t i) const {
  const TimeSeriesSpec& ts = base_.series;
  const TimePlan& tp = plan_.time;
  if (i >= plan_.n_scenarios()) throw std::out_of_range("time series case " + std::to_string(i) + " does not exist");
  const bool node = i >= tp.n_steps;
  const double t = node ? tp.node_time[i - tp.n_steps] : ts.times_unix[i];
  const std::size_t row = node ? tp.node_step[i - tp.n_steps] : i;
  std::vector<std::pair<std::string, double>> assign;
  for (std::size_t k = 0; k < ts.input_paths.size(); ++k) {
    const double v = ts.inputs[k][row];
    if (!std::isnan(v)) assign.emplace_back(ts.input_paths[k], v);
  }
  const std::string when = "step " + std::to_string(row) + " (" + ts.times_text[row] + ")";
  const auto at_row = [&](const std::string& key, const std::string& msg) {
    return InputError(ts.inputs_file.string(), {ts.inputs_line.empty() ? 0 : ts.inputs_line[row], 1}, key, msg);
  };
  if (impl_->typed) {
    Experiment e = impl_->lite;
    if (apply_typed(e, assign)) {
      place_sun(e, t);
      return e;
    }
  }
  if (assign.empty()) {
    Experiment e = parse_experiment(impl_->text, impl_->name, impl_->base_dir, impl_->profiles.get(), t);
    return e;
  }
  YAML::Node n = YAML::Clone(impl_->root);
  for (const auto& [path, value] : assign) {
    if (std::string err = set_path(n, path, value); !err.empty()) throw at_row(path, when + ": " + err);
  }
  try {
    Experiment e = parse_experiment(emit(n), impl_->name, impl_->base_dir, impl_->profiles.get(), t);
    e.text = impl_->text;
    return e;
  } catch (const InputError& ex) {
    throw at_row(ex.key_path(), when + " is invalid: " + ex.message());
  }
}

std::string Study::aerosol_free_key(std::size_t i) const {
  if (impl_->typed && !plan_.time_series) {
    // The values of the swept keys that are not the aerosol's identify the aerosol-free case.
    std::string key = "typed";
    for (const auto& [path, value] : plan_.assignment(i)) {
      if (path.rfind("aerosol.", 0) == 0) continue;
      key += "\n" + path + "=" + format_number(value);
    }
    return key;
  }
  YAML::Node n = YAML::Clone(impl_->root);
  for (const auto& [path, value] : plan_.assignment(i)) (void)set_path(n, path, value);
  if (n.IsMap()) n.remove("aerosol");
  return emit(n);
}

Experiment Study::aerosol_free(std::size_t i) const {
  if (impl_->typed && !plan_.time_series) {
    // As the loader reads a file without its aerosol section: the default (empty) aerosol.
    Experiment e = impl_->lite;
    std::vector<std::pair<std::string, double>> rest;
    for (const auto& pv : plan_.assignment(i))
      if (pv.first.rfind("aerosol.", 0) != 0) rest.push_back(pv);
    e.aerosol = optics::AerosolSpec{};
    e.aerosol.tau_ref = 0.0;
    e.aerosol_type.clear();
    if (apply_typed(e, rest)) return e;
  }
  Experiment e = parse_experiment(aerosol_free_key(i), impl_->name, impl_->base_dir, impl_->profiles.get());
  e.text = impl_->text;
  return e;
}

bool Study::typed_patches() const { return impl_->typed; }

void Study::use_typed_patches(bool on) {
  if (!on) impl_->typed = false;
}

bool Study::has_aerosol() const {
  if (base_.aerosol.tau_ref > 0.0) return true;
  for (const SweepParameter* p : plan_.parameters())
    if (p->path.rfind("aerosol.", 0) == 0) return true;
  return false;
}

void Study::validate_all() const {
  if (plan_.time_series) {
    // Only the per-step inputs can make a step invalid (a time is always a valid sun): each step
    // with inputs once; the daily-total nodes reuse the steps' inputs.
    if (base_.series.input_paths.empty()) {
      (void)scenario(0);
      return;
    }
    for (std::size_t i = 0; i < plan_.time.n_steps; ++i) (void)scenario(i);
    return;
  }
  for (std::size_t i = 0; i < size(); ++i) (void)scenario(i);
}

}  // namespace solstrata::experiment
