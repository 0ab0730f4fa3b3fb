#include "experiment/yaml_reader.hpp"

#include <yaml-cpp/depthguard.h>
#include <yaml-cpp/eventhandler.h>
#include <yaml-cpp/yaml.h>

#include <algorithm>
#include <cctype>
#include <cerrno>
#include <charconv>
#include <cmath>
#include <cstring>
#include <fstream>
#include <sstream>
#include <system_error>
#include <utility>

#include "experiment/closest_name.hpp"

namespace solstrata::experiment {

namespace detail {
/// The text of one input and its parsed tree, shared by the document and its sections.
struct Source {
  std::string name;
  std::string text;
  std::vector<std::string> lines;
  YAML::Node root;
};
}  // namespace detail

namespace {

SourceMark to_mark(const YAML::Mark& m) {
  if (m.is_null() || m.line < 0) return {};
  return {m.line + 1, m.column + 1};
}

std::vector<std::string> split_lines(const std::string& text) {
  std::vector<std::string> lines;
  std::size_t start = 0;
  while (start <= text.size()) {
    std::size_t end = text.find('\n', start);
    if (end == std::string::npos) end = text.size();
    std::string line = text.substr(start, end - start);
    if (!line.empty() && line.back() == '\r') line.pop_back();
    lines.push_back(std::move(line));
    start = end + 1;
  }
  return lines;
}

std::string line_of(const detail::Source& s, int line) {
  if (line < 1 || static_cast<std::size_t>(line) > s.lines.size()) return {};
  return s.lines[static_cast<std::size_t>(line - 1)];
}

bool is_quoted(const YAML::Node& n) { return n.IsScalar() && n.Tag() == "!"; }

/// How a node reads in "got ..." clauses.
std::string describe_value(const YAML::Node& n) {
  if (!n.IsDefined() || n.IsNull()) return "nothing";
  if (n.IsMap()) return "a mapping";
  if (n.IsSequence()) return "a list";
  std::string text = n.Scalar();
  if (text.size() > 40) text = text.substr(0, 37) + "...";
  if (is_quoted(n)) return "the quoted text \"" + text + "\"";
  return "'" + text + "'";
}

std::string with_unit(std::string_view what, std::string_view unit) {
  std::string out(what);
  if (!unit.empty()) out += " (in " + std::string(unit) + ")";
  return out;
}

/// The local name of a key path, used inside range rules: "aerosol.layers[2].omega" -> "omega".
std::string last_name(const std::string& path) {
  const auto dot = path.rfind('.');
  return dot == std::string::npos ? path : path.substr(dot + 1);
}

enum class NumberParse { ok, not_a_number, not_finite, has_unit, out_of_range };

NumberParse parse_double(const std::string& s, double& out) {
  std::string_view v = s;
  if (!v.empty() && v.front() == '+') v.remove_prefix(1);
  std::string low;
  for (char c : v) low += static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  if (low == ".inf" || low == "-.inf" || low == ".nan") return NumberParse::not_finite;
  if (v.empty()) return NumberParse::not_a_number;
  const char* first = v.data();
  const char* last = v.data() + v.size();
  const auto [ptr, ec] = std::from_chars(first, last, out, std::chars_format::general);
  if (ec == std::errc::result_out_of_range) return NumberParse::out_of_range;
  if (ec != std::errc()) return NumberParse::not_a_number;
  if (ptr != last) {
    // "1013.25 hPa", "550nm": a number followed by a unit name.
    std::string_view rest(ptr, static_cast<std::size_t>(last - ptr));
    while (!rest.empty() && rest.front() == ' ') rest.remove_prefix(1);
    if (!rest.empty() &&
        (std::isalpha(static_cast<unsigned char>(rest.front())) || rest.front() == '%')) {
      return NumberParse::has_unit;
    }
    return NumberParse::not_a_number;
  }
  if (!std::isfinite(out)) return NumberParse::not_finite;
  return NumberParse::ok;
}

}  // namespace

// ---------------------------------------------------------------------------------------------
// Range

bool Range::contains(double x) const {
  const bool above = low_inclusive ? x >= low : x > low;
  const bool below = high_inclusive ? x <= high : x < high;
  return above && below;
}

std::string Range::describe(std::string_view name) const {
  const bool has_low = std::isfinite(low);
  const bool has_high = std::isfinite(high);
  const std::string n(name);
  if (has_low && has_high) {
    return format_number(low) + (low_inclusive ? " <= " : " < ") + n +
           (high_inclusive ? " <= " : " < ") + format_number(high);
  }
  if (has_low) return n + (low_inclusive ? " >= " : " > ") + format_number(low);
  if (has_high) return n + (high_inclusive ? " <= " : " < ") + format_number(high);
  return {};
}

std::string format_number(double x) {
  char buf[64];
  const auto [ptr, ec] = std::to_chars(buf, buf + sizeof buf, x);
  if (ec != std::errc()) return "?";
  return std::string(buf, ptr);
}

// ---------------------------------------------------------------------------------------------
// Document

Document Document::load_file(const std::filesystem::path& path) {
  const std::string name = path.string();
  std::error_code ec;
  if (std::filesystem::is_directory(path, ec)) {
    throw InputError(name, {}, {}, "is a directory; expected a YAML file");
  }
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    throw InputError(name, {}, {}, std::string("cannot open the file: ") + std::strerror(errno));
  }
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) {
    throw InputError(name, {}, {}, std::string("cannot read the file: ") + std::strerror(errno));
  }
  return parse(text.str(), name);
}

namespace {

/// Counts the parser's events and gives up past a budget. A finite text yields at most a few
/// events per byte, but yaml-cpp 0.7 loops for ever, building nodes until memory runs out, on a
/// document whose first token is a ',' (found by tests/fuzz/fuzz_experiment: ", a"). A first
/// pass with this handler (no tree is built) turns that into an error before YAML::LoadAll runs.
class EventBudget : public YAML::EventHandler {
 public:
  struct Exhausted {
    YAML::Mark mark;
  };
  explicit EventBudget(std::size_t limit) : left_(limit) {}
  void OnDocumentStart(const YAML::Mark& m) override { tick(m); }
  void OnDocumentEnd() override {}
  void OnNull(const YAML::Mark& m, YAML::anchor_t) override { tick(m); }
  void OnAlias(const YAML::Mark& m, YAML::anchor_t) override { tick(m); }
  void OnScalar(const YAML::Mark& m, const std::string&, YAML::anchor_t, const std::string&) override { tick(m); }
  void OnSequenceStart(const YAML::Mark& m, const std::string&, YAML::anchor_t, YAML::EmitterStyle::value) override { tick(m); }
  void OnSequenceEnd() override {}
  void OnMapStart(const YAML::Mark& m, const std::string&, YAML::anchor_t, YAML::EmitterStyle::value) override { tick(m); }
  void OnMapEnd() override {}

 private:
  void tick(const YAML::Mark& m) {
    if (left_-- == 0) throw Exhausted{m};
  }
  std::size_t left_;
};

}  // namespace

Document Document::parse(std::string text, std::string name) {
  auto source = std::make_shared<detail::Source>();
  source->name = std::move(name);
  source->text = std::move(text);
  source->lines = split_lines(source->text);
  try {
    {
      std::istringstream in(source->text);
      YAML::Parser parser(in);
      EventBudget budget(4 * source->text.size() + 64);
      try {
        while (parser.HandleNextDocument(budget)) {
        }
      } catch (const EventBudget::Exhausted& e) {
        const SourceMark m = to_mark(e.mark);
        throw InputError(source->name, m, {},
                         "YAML syntax error: the document cannot be parsed (it starts with ',' or is otherwise "
                         "malformed); expected a mapping of keys to values",
                         line_of(*source, m.line));
      }
    }
    std::vector<YAML::Node> docs = YAML::LoadAll(source->text);
    if (docs.size() > 1) {
      const SourceMark m = to_mark(docs[1].Mark());
      throw InputError(source->name, m, {},
                       "a second YAML document ('---') was found; expected one document per file",
                       line_of(*source, m.line));
    }
    if (!docs.empty()) source->root = docs.front();
  } catch (const YAML::DeepRecursion& e) {
    const SourceMark m = to_mark(e.mark);
    throw InputError(source->name, m, {},
                     "YAML nesting deeper than " + std::to_string(e.depth()) +
                         " levels (brackets or indentation); no key of these files nests more than a few levels",
                     line_of(*source, m.line));
  } catch (const YAML::Exception& e) {
    const SourceMark m = to_mark(e.mark);
    const std::string line = line_of(*source, m.line);
    std::string message = "YAML syntax error: " + e.msg;
    // yaml-cpp's message for a tab in the indentation does not mention the tab.
    const std::size_t indent_end = line.find_first_not_of(" \t");
    if (line.substr(0, indent_end).find('\t') != std::string::npos) {
      message += " (this line is indented with a tab; YAML allows only spaces)";
    }
    throw InputError(source->name, m, {}, message, line);
  }
  return Document(std::move(source));
}

Section Document::root() const {
  const YAML::Node& root = source_->root;
  if (!root.IsDefined() || root.IsNull()) {
    throw InputError(source_->name, {}, {},
                     "the file has no content; expected a mapping of keys to values");
  }
  if (!root.IsMap()) {
    const SourceMark m = to_mark(root.Mark());
    throw error(
        m, {},
        "expected a mapping of keys to values at the top level, got " + describe_value(root));
  }
  return Section(source_, root, {}, SourceMark{1, 1});
}

const std::string& Document::name() const { return source_->name; }
const std::string& Document::text() const { return source_->text; }
std::string Document::line_text(int line) const { return line_of(*source_, line); }

InputError Document::error(SourceMark mark, std::string key_path, std::string message) const {
  return InputError(source_->name, mark, std::move(key_path), std::move(message),
                    line_of(*source_, mark.line));
}

// ---------------------------------------------------------------------------------------------
// Section

struct Section::Entry {
  std::string key;
  SourceMark key_mark;
  YAML::Node value;
};

Section::Section(std::shared_ptr<const detail::Source> source, const YAML::Node& node,
                 std::string path, SourceMark mark)
    : source_(std::move(source)), path_(std::move(path)), mark_(mark) {
  for (const auto& pair : node) {
    const YAML::Node& k = pair.first;
    const SourceMark km = to_mark(k.Mark());
    if (!k.IsScalar()) {
      throw error_at(km, path_, "a key must be a plain name, got " + describe_value(k));
    }
    const std::string name = k.Scalar();
    for (const Entry& e : entries_) {
      // yaml-cpp keeps both entries of a repeated key, so repetitions can be reported here.
      if (e.key == name) {
        throw error_at(km, key_path(name),
                       "key written twice (first on line " + std::to_string(e.key_mark.line) +
                           "); each key may appear once");
      }
    }
    entries_.push_back({name, km, pair.second});
  }
}

Section::Section(Section&&) noexcept = default;
Section& Section::operator=(Section&&) noexcept = default;
Section::~Section() = default;

std::string Section::key_path(std::string_view key) const {
  return path_.empty() ? std::string(key) : path_ + "." + std::string(key);
}

InputError Section::error_at(SourceMark mark, std::string key, std::string message) const {
  return InputError(source_->name, mark, std::move(key), std::move(message),
                    line_of(*source_, mark.line));
}

SourceMark Section::value_mark(const Entry& e) const {
  if (e.value.IsScalar()) {
    const SourceMark m = to_mark(e.value.Mark());
    if (m.known()) return m;
  }
  return e.key_mark;
}

const Section::Entry* Section::find(std::string_view key) {
  if (std::find(known_.begin(), known_.end(), key) == known_.end()) known_.emplace_back(key);
  for (const Entry& e : entries_) {
    if (e.key == key) return &e;
  }
  return nullptr;
}

const Section::Entry* Section::find_required(std::string_view key) {
  const Entry* e = find(key);
  if (e != nullptr) return e;
  // A misspelt key is the usual cause: point at the written key that is closest to the missing
  // one and is not a key this section knows, with a suggestion.
  for (const Entry& written : entries_) {
    if (std::find(known_.begin(), known_.end(), written.key) != known_.end()) continue;
    const std::string want(key);
    if (closest_name(written.key, std::span<const std::string>(&want, 1)) == want) {
      throw error_at(written.key_mark, key_path(written.key),
                     "unknown key '" + written.key + "' (did you mean '" + want + "'?); required key '" + want +
                         "' is missing" + (path_.empty() ? std::string() : " in '" + path_ + "'"));
    }
  }
  throw error_at(mark_, path_.empty() ? std::string(key) : key_path(key),
                 "required key '" + std::string(key) + "' is missing" +
                     (path_.empty() ? std::string() : " in '" + path_ + "'"));
}

std::vector<std::string> Section::keys() const {
  std::vector<std::string> out;
  for (const Entry& e : entries_) out.push_back(e.key);
  return out;
}

bool Section::has(std::string_view key) { return find(key) != nullptr; }

bool Section::is_mapping(std::string_view key) {
  const Entry* e = find(key);
  return e != nullptr && e->value.IsMap();
}

SourceMark Section::mark_of(std::string_view key) const {
  for (const Entry& e : entries_) {
    if (e.key == key) return value_mark(e);
  }
  return {};
}

InputError Section::error(std::string_view key, std::string message) const {
  const SourceMark m = mark_of(key);
  return error_at(m.known() ? m : mark_, key_path(key), std::move(message));
}

Document Section::document() const { return Document(source_); }

Located<double> Section::read_number(const Entry& e, std::string_view key, Range range,
                                     std::string_view unit) {
  const std::string path = key_path(key);
  const SourceMark m = value_mark(e);
  const std::string expected = with_unit("a number", unit);
  if (!e.value.IsScalar()) {
    throw error_at(m, path, "expected " + expected + ", got " + describe_value(e.value));
  }
  if (is_quoted(e.value)) {
    throw error_at(m, path,
                   "expected " + expected + ", got " + describe_value(e.value) +
                       " (numbers are written without quotes)");
  }
  double x = 0;
  switch (parse_double(e.value.Scalar(), x)) {
    case NumberParse::ok:
      break;
    case NumberParse::has_unit:
      throw error_at(m, path,
                     "expected " + expected + ", got " + describe_value(e.value) +
                         "; write the bare number: the unit is fixed by the key" +
                         (unit.empty() ? std::string() : " (" + std::string(unit) + ")"));
    case NumberParse::not_finite:
      throw error_at(m, path, "expected a finite number, got " + describe_value(e.value));
    case NumberParse::out_of_range:
      throw error_at(m, path,
                     "expected " + expected + " within the range of double precision, got " +
                         describe_value(e.value));
    case NumberParse::not_a_number:
      throw error_at(m, path, "expected " + expected + ", got " + describe_value(e.value));
  }
  if (!range.contains(x)) {
    throw error_at(m, path,
                   "expected " + with_unit(range.describe(last_name(path)), unit) + ", got " +
                       format_number(x));
  }
  return {x, m, path};
}

Located<double> Section::required_number(std::string_view key, Range range, std::string_view unit) {
  return read_number(*find_required(key), key, range, unit);
}

Located<double> Section::optional_number(std::string_view key, double fallback, Range range,
                                         std::string_view unit) {
  const Entry* e = find(key);
  if (e == nullptr) return {fallback, {}, key_path(key)};
  return read_number(*e, key, range, unit);
}

Located<long long> Section::required_integer(std::string_view key, Range range) {
  const Entry& e = *find_required(key);
  const std::string path = key_path(key);
  const Located<double> x = read_number(e, key, Range{}, {});
  // Whole numbers are exact in a double up to 2^53; "1e3" is accepted as 1000.
  constexpr double kExactLimit = 9007199254740992.0;
  if (x.value != std::trunc(x.value) || std::fabs(x.value) > kExactLimit) {
    throw error_at(x.mark, path, "expected a whole number, got " + format_number(x.value));
  }
  const auto n = static_cast<long long>(x.value);
  if (!range.contains(x.value)) {
    throw error_at(x.mark, path,
                   "expected " + range.describe(last_name(path)) + ", got " + std::to_string(n));
  }
  return {n, x.mark, path};
}

Located<long long> Section::optional_integer(std::string_view key, long long fallback,
                                             Range range) {
  if (!has(key)) return {fallback, {}, key_path(key)};
  return required_integer(key, range);
}

Located<bool> Section::optional_bool(std::string_view key, bool fallback) {
  const Entry* e = find(key);
  const std::string path = key_path(key);
  if (e == nullptr) return {fallback, {}, path};
  const SourceMark m = value_mark(*e);
  if (e->value.IsScalar() && !is_quoted(e->value)) {
    const std::string& s = e->value.Scalar();
    if (s == "true" || s == "True" || s == "TRUE") return {true, m, path};
    if (s == "false" || s == "False" || s == "FALSE") return {false, m, path};
  }
  throw error_at(m, path, "expected true or false, got " + describe_value(e->value));
}

Located<std::string> Section::required_string(std::string_view key) {
  const Entry& e = *find_required(key);
  const std::string path = key_path(key);
  const SourceMark m = value_mark(e);
  if (!e.value.IsScalar()) {
    throw error_at(m, path, "expected a text value, got " + describe_value(e.value));
  }
  return {e.value.Scalar(), m, path};
}

Located<std::string> Section::optional_string(std::string_view key, std::string fallback) {
  if (!has(key)) return {std::move(fallback), {}, key_path(key)};
  return required_string(key);
}

namespace {
std::string list_choices(const std::vector<std::string>& allowed) {
  std::string out;
  for (std::size_t i = 0; i < allowed.size(); ++i) {
    if (i > 0) out += (i + 1 == allowed.size()) ? " or " : ", ";
    out += "'" + allowed[i] + "'";
  }
  return out;
}
}  // namespace

Located<std::string> Section::choice(std::string_view key,
                                     const std::vector<std::string>& allowed) {
  Located<std::string> v = required_string(key);
  if (std::find(allowed.begin(), allowed.end(), v.value) != allowed.end()) return v;
  std::string message = "expected one of " + list_choices(allowed) + ", got '" + v.value + "'";
  const std::string near = closest_name(v.value, allowed);
  if (!near.empty()) message += " (did you mean '" + near + "'?)";
  throw error_at(v.mark, v.key, message);
}

Located<std::string> Section::optional_choice(std::string_view key, std::string fallback,
                                              const std::vector<std::string>& allowed) {
  if (!has(key)) return {std::move(fallback), {}, key_path(key)};
  return choice(key, allowed);
}

LocatedNumbers Section::number_list(std::string_view key, Range element_range, std::size_t min_size,
                                    std::string_view unit) {
  const Entry& e = *find_required(key);
  LocatedNumbers out;
  out.key = key_path(key);
  out.mark = e.key_mark;
  if (!e.value.IsSequence()) {
    throw error_at(value_mark(e), out.key,
                   "expected a list of numbers" +
                       (unit.empty() ? "" : " (in " + std::string(unit) + ")") +
                       " such as [1, 2, 3], got " + describe_value(e.value));
  }
  if (e.value.size() < min_size) {
    throw error_at(e.key_mark, out.key,
                   "expected at least " + std::to_string(min_size) + " number" +
                       (min_size == 1 ? "" : "s") + ", got " + std::to_string(e.value.size()));
  }
  std::size_t i = 0;
  for (const YAML::Node& item : e.value) {
    const std::string name = std::string(key) + "[" + std::to_string(i) + "]";
    const Entry element{name, to_mark(item.Mark()).known() ? to_mark(item.Mark()) : e.key_mark,
                        item};
    const Located<double> x = read_number(element, name, element_range, unit);
    out.values.push_back(x.value);
    out.marks.push_back(x.mark);
    ++i;
  }
  return out;
}

std::vector<Located<std::string>> Section::string_list(std::string_view key) {
  const Entry& e = *find_required(key);
  const std::string path = key_path(key);
  if (!e.value.IsSequence()) {
    throw error_at(value_mark(e), path,
                   "expected a list such as [a, b], got " + describe_value(e.value));
  }
  std::vector<Located<std::string>> out;
  std::size_t i = 0;
  for (const YAML::Node& item : e.value) {
    const std::string item_path = path + "[" + std::to_string(i++) + "]";
    const SourceMark m = to_mark(item.Mark());
    if (!item.IsScalar()) {
      throw error_at(m.known() ? m : e.key_mark, item_path,
                     "expected a text value, got " + describe_value(item));
    }
    out.push_back({item.Scalar(), m, item_path});
  }
  return out;
}

Section Section::subsection(std::string_view key) {
  const Entry& e = *find_required(key);
  if (!e.value.IsMap()) {
    throw error_at(
        value_mark(e), key_path(key),
        "expected a mapping (indented 'key: value' lines), got " + describe_value(e.value));
  }
  return Section(source_, e.value, key_path(key), e.key_mark);
}

std::optional<Section> Section::optional_subsection(std::string_view key) {
  if (!has(key)) return std::nullopt;
  return subsection(key);
}

std::vector<Section> Section::sequence(std::string_view key, std::size_t min_size) {
  const Entry& e = *find_required(key);
  const std::string path = key_path(key);
  if (!e.value.IsSequence()) {
    throw error_at(
        value_mark(e), path,
        "expected a list of mappings ('- key: value' items), got " + describe_value(e.value));
  }
  if (e.value.size() < min_size) {
    throw error_at(e.key_mark, path,
                   "expected at least " + std::to_string(min_size) + " item" +
                       (min_size == 1 ? "" : "s") + ", got " + std::to_string(e.value.size()));
  }
  std::vector<Section> out;
  std::size_t i = 0;
  for (const YAML::Node& item : e.value) {
    const std::string item_path = path + "[" + std::to_string(i++) + "]";
    const SourceMark m = to_mark(item.Mark()).known() ? to_mark(item.Mark()) : e.key_mark;
    if (!item.IsMap()) {
      throw error_at(m, item_path,
                     "expected a mapping ('key: value'), got " + describe_value(item));
    }
    out.push_back(Section(source_, item, item_path, m));
  }
  return out;
}

void Section::check_no_unknown_keys() const {
  for (const Entry& e : entries_) {
    if (std::find(known_.begin(), known_.end(), e.key) != known_.end()) continue;
    std::string message = "unknown key '" + e.key + "'";
    const std::string near = closest_name(e.key, known_);
    if (!near.empty()) {
      message += " (did you mean '" + near + "'?)";
    } else if (!known_.empty()) {
      std::vector<std::string> sorted = known_;
      std::sort(sorted.begin(), sorted.end());
      message += "; known keys here: " + list_choices(sorted);
    }
    throw error_at(e.key_mark, key_path(e.key), message);
  }
}

}  // namespace solstrata::experiment
