#include "optics/ktable.hpp"

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <sstream>

namespace solstrata::optics {
namespace {

std::string where(const std::string& file, std::size_t line) {
  return line ? file + ":" + std::to_string(line) : file;
}

/// The lines of a table file with comments stripped, keeping their 1-based numbers.
struct Line {
  std::size_t number;
  std::string keyword;
  std::string rest;  // text after the keyword, trimmed
};

std::string trim(std::string s) {
  const auto ws = [](char c) { return c == ' ' || c == '\t' || c == '\r'; };
  while (!s.empty() && ws(s.back())) s.pop_back();
  std::size_t i = 0;
  while (i < s.size() && ws(s[i])) ++i;
  return s.substr(i);
}

std::vector<Line> read_lines(const std::filesystem::path& path) {
  std::ifstream in(path);
  if (!in) throw KTableError(path.string(), 0, "cannot open the gas table (does it exist and is it readable?)");
  std::vector<Line> lines;
  std::string text;
  std::size_t n = 0;
  while (std::getline(in, text)) {
    ++n;
    if (const auto h = text.find('#'); h != std::string::npos) text.erase(h);
    text = trim(text);
    if (text.empty()) continue;
    const auto sp = text.find_first_of(" \t");
    Line l{n, text.substr(0, sp), sp == std::string::npos ? "" : trim(text.substr(sp))};
    lines.push_back(std::move(l));
  }
  return lines;
}

class Reader {
 public:
  Reader(std::string file, std::vector<Line> lines) : file_(std::move(file)), lines_(std::move(lines)) {}

  [[noreturn]] void fail(const std::string& msg) const {
    throw KTableError(file_, i_ < lines_.size() ? lines_[i_].number : (lines_.empty() ? 0 : lines_.back().number), msg);
  }
  bool at(const char* kw) const { return i_ < lines_.size() && lines_[i_].keyword == kw; }
  const Line& expect(const char* kw) {
    if (i_ >= lines_.size()) fail(std::string("the table ends early: expected '") + kw + "'");
    if (lines_[i_].keyword != kw) fail(std::string("expected '") + kw + "', found '" + lines_[i_].keyword + "'");
    return lines_[i_++];
  }
  std::vector<double> numbers(const Line& l, std::size_t want = 0) {
    std::vector<double> v;
    const char* s = l.rest.c_str();
    for (;;) {
      while (*s == ' ' || *s == '\t') ++s;
      if (!*s) break;
      char* end = nullptr;
      errno = 0;
      const double x = std::strtod(s, &end);
      if (end == s || (*end && *end != ' ' && *end != '\t') || !std::isfinite(x) || errno == ERANGE) {
        const char* e = s;
        while (*e && *e != ' ' && *e != '\t') ++e;
        --i_;
        std::string msg(1, '\'');
        msg.append(s, static_cast<std::size_t>(e - s));
        msg.append("' after '").append(l.keyword).append("' is not a finite number");
        fail(msg);
      }
      v.push_back(x);
      s = end;
    }
    if (want && v.size() != want) {
      --i_;
      fail("'" + l.keyword + "' needs " + std::to_string(want) + " values, got " + std::to_string(v.size()));
    }
    return v;
  }
  std::size_t pos() const { return i_; }

 private:
  std::string file_;
  std::vector<Line> lines_;
  std::size_t i_ = 0;
};

bool increasing(const std::vector<double>& v) {
  for (std::size_t i = 1; i < v.size(); ++i)
    if (!(v[i] > v[i - 1])) return false;
  return true;
}

/// Lower bracketing index and the fraction towards the next node, clamped to the range.
std::pair<std::size_t, double> bracket(const std::vector<double>& nodes, double v, bool log_scale) {
  if (nodes.size() < 2 || v <= nodes.front()) return {0, 0.0};
  if (v >= nodes.back()) return {nodes.size() - 2, 1.0};
  const std::size_t i = std::upper_bound(nodes.begin(), nodes.end(), v) - nodes.begin() - 1;
  const double f = log_scale ? std::log(v / nodes[i]) / std::log(nodes[i + 1] / nodes[i])
                             : (v - nodes[i]) / (nodes[i + 1] - nodes[i]);
  return {i, std::clamp(f, 0.0, 1.0)};
}

}  // namespace

KTableError::KTableError(const std::string& file, std::size_t line, const std::string& message)
    : std::runtime_error(where(file, line) + ": " + message), line_(line) {}

std::string KTable::validate() const {
  if (gas.empty()) return "the table names no gas";
  if (pressure_hpa.empty() || !increasing(pressure_hpa) || pressure_hpa.front() <= 0.0)
    return "pressure_hpa must be one or more values > 0, strictly increasing";
  if (temperature_k.empty() || !increasing(temperature_k) || temperature_k.front() <= 0.0)
    return "temperature_k must be one or more values > 0, strictly increasing";
  if (!h2o_vmr.empty() && (!increasing(h2o_vmr) || h2o_vmr.front() < 0.0))
    return "h2o_vmr must be values >= 0, strictly increasing";
  for (std::size_t b = 0; b < bins.size(); ++b) {
    const KTableBin& bin = bins[b];
    const std::string name = "bin " + std::to_string(b) + " (" + std::to_string(bin.lower_nm) + "-" +
                             std::to_string(bin.upper_nm) + " nm)";
    if (!(bin.lower_nm > 0.0 && bin.upper_nm > bin.lower_nm)) return name + ": needs 0 < lower_nm < upper_nm";
    if (b > 0 && bin.lower_nm < bins[b - 1].upper_nm) return name + ": overlaps or precedes the bin before it";
    if (bin.weights.empty() || bin.weights.size() != bin.k.size()) return name + ": needs one k row per weight";
    double sum = 0.0;
    for (double w : bin.weights) {
      if (!(w > 0.0)) return name + ": weights must be > 0";
      sum += w;
    }
    if (std::abs(sum - 1.0) > 1e-9) return name + ": weights sum to " + std::to_string(sum) + ", not 1";
    for (const auto& row : bin.k) {
      if (row.size() != n_nodes()) return name + ": a k row has " + std::to_string(row.size()) + " values, expected " + std::to_string(n_nodes());
      for (double v : row)
        if (!(v >= 0.0) || !std::isfinite(v)) return name + ": k values must be finite and >= 0";
    }
  }
  return {};
}

KTable read_ktable(const std::filesystem::path& path) {
  Reader r(path.string(), read_lines(path));
  KTable t;
  t.origin = path.string();
  {
    const Line& m = r.expect("solstrata_ktable");
    if (m.rest != "1") {
      throw KTableError(path.string(), m.number, "unsupported table format version '" + m.rest + "' (this program reads version 1)");
    }
  }
  t.gas = r.expect("gas").rest;
  if (t.gas.empty() || t.gas.find(' ') != std::string::npos) throw KTableError(path.string(), 0, "'gas' needs one molecule formula, e.g. O2");
  if (r.at("title")) t.title = r.expect("title").rest;
  while (r.at("source")) t.source.push_back(r.expect("source").rest);
  while (r.at("generator")) t.generator.push_back(r.expect("generator").rest);
  if (r.at("weighting")) t.weighting = r.expect("weighting").rest;
  t.pressure_hpa = r.numbers(r.expect("pressure_hpa"));
  t.temperature_k = r.numbers(r.expect("temperature_k"));
  if (r.at("h2o_vmr")) t.h2o_vmr = r.numbers(r.expect("h2o_vmr"));
  const std::vector<double> nb = r.numbers(r.expect("bins"), 1);
  if (!(nb[0] >= 0 && nb[0] <= 1e6 && nb[0] == std::floor(nb[0]))) r.fail("'bins' needs a whole number");
  const std::size_t nodes = t.n_nodes();
  for (std::size_t b = 0; b < static_cast<std::size_t>(nb[0]); ++b) {
    const std::vector<double> head = r.numbers(r.expect("bin"), 3);
    if (!(head[2] >= 1 && head[2] <= 1000 && head[2] == std::floor(head[2]))) r.fail("a bin needs 1 to 1000 terms");
    KTableBin bin;
    bin.lower_nm = head[0];
    bin.upper_nm = head[1];
    const auto nt = static_cast<std::size_t>(head[2]);
    bin.weights = r.numbers(r.expect("weights"), nt);
    for (std::size_t i = 0; i < nt; ++i) bin.k.push_back(r.numbers(r.expect("k"), nodes));
    t.bins.push_back(std::move(bin));
  }
  r.expect("end");
  if (std::string m = t.validate(); !m.empty()) throw KTableError(path.string(), 0, m);
  return t;
}

NodeWeights node_weights(const KTable& t, double p_hpa, double t_k, double h2o_vmr) {
  NodeWeights w;
  const auto [p0, fpl] = bracket(t.pressure_hpa, p_hpa, true);
  w.p0 = p0;
  w.fp_log = fpl;
  w.fp_lin = bracket(t.pressure_hpa, p_hpa, false).second;
  std::tie(w.t0, w.ft) = bracket(t.temperature_k, t_k, false);
  if (!t.h2o_vmr.empty()) std::tie(w.x0, w.fx) = bracket(t.h2o_vmr, h2o_vmr, false);
  return w;
}

double interpolate_k(const KTable& t, const std::vector<double>& k, const NodeWeights& w) {
  const std::size_t np = t.pressure_hpa.size(), nt = t.temperature_k.size(), nx = t.n_x();
  const std::size_t p1 = std::min(w.p0 + 1, np - 1), t1 = std::min(w.t0 + 1, nt - 1), x1 = std::min(w.x0 + 1, nx - 1);
  const auto in_p = [&](std::size_t x, std::size_t ti) {
    const double a = k[x * np * nt + w.p0 * nt + ti], b = k[x * np * nt + p1 * nt + ti];
    if (a > 0.0 && b > 0.0) return a * std::pow(b / a, w.fp_log);  // log k linear in log p
    return a + w.fp_lin * (b - a);
  };
  const auto in_pt = [&](std::size_t x) {
    const double a = in_p(x, w.t0), b = in_p(x, t1);
    return a + w.ft * (b - a);
  };
  const double a = in_pt(w.x0);
  if (x1 == w.x0) return a;
  return a + w.fx * (in_pt(x1) - a);
}

}  // namespace solstrata::optics
