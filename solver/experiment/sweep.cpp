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
  std::size_t n = 1;
  for (const SweepAxis& a : axes) n *= a.size();
  return n;
}

std::vector<std::size_t> SweepPlan::shape() const {
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
  s.impl_->root = YAML::Load(text);
  if (s.impl_->root.IsMap()) s.impl_->root.remove("sweep");
  return s;
}

Experiment Study::scenario(std::size_t i) const {
  if (plan_.axes.empty()) return parse_experiment(impl_->text, impl_->name, impl_->base_dir);
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

std::string Study::aerosol_free_key(std::size_t i) const {
  YAML::Node n = YAML::Clone(impl_->root);
  for (const auto& [path, value] : plan_.assignment(i)) (void)set_path(n, path, value);
  if (n.IsMap()) n.remove("aerosol");
  return emit(n);
}

Experiment Study::aerosol_free(std::size_t i) const {
  Experiment e = parse_experiment(aerosol_free_key(i), impl_->name, impl_->base_dir, impl_->profiles.get());
  e.text = impl_->text;
  return e;
}

bool Study::has_aerosol() const {
  if (base_.aerosol.tau_ref > 0.0) return true;
  for (const SweepParameter* p : plan_.parameters())
    if (p->path.rfind("aerosol.", 0) == 0) return true;
  return false;
}

void Study::validate_all() const {
  for (std::size_t i = 0; i < size(); ++i) (void)scenario(i);
}

}  // namespace solstrata::experiment
