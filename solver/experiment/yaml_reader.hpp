// Typed, position-aware reading of YAML input files (yaml-cpp is used only in the .cpp).
//
// A Document owns the text of one file. Its root() is a Section: a YAML mapping read key by key
// through typed accessors that check the type and range of each value and return it with the
// position it was written at (Located<T>). Every accessor also records the key as known, so that
// check_no_unknown_keys(), called when a section has been read, can reject keys that nobody asked
// for and suggest the closest known one. Nothing here knows about physics.
#pragma once

#include <cstddef>
#include <filesystem>
#include <limits>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "experiment/input_error.hpp"

namespace YAML {
class Node;  // yaml-cpp stays out of this header: only yaml_reader.cpp includes it
}

namespace solstrata::experiment {

/// A value read from a file, with where it was written. For an optional key that was absent the
/// value is the default and mark.known() is false.
template <class T>
struct Located {
  T value{};        ///< the value, in the unit its key documents
  SourceMark mark;  ///< position of the value (of the key when the value is empty or not a scalar)
  std::string key;  ///< key path, e.g. "aerosol.layers[2].omega"

  [[nodiscard]] bool given() const { return mark.known(); }
};

/// A list of numbers with the position of the list and of each element.
struct LocatedNumbers {
  std::vector<double> values;     ///< the numbers, in the unit the key documents
  std::vector<SourceMark> marks;  ///< position of each element (same length as values)
  SourceMark mark;                ///< position of the key that holds the list
  std::string key;                ///< key path of the list; element i is key + "[i]"

  /// Element i as a Located value (for later checks such as "levels must increase").
  [[nodiscard]] Located<double> at(std::size_t i) const {
    return {values.at(i), marks.at(i), key + '[' + std::to_string(i) + ']'};
  }
};

/// An interval of allowed numbers (dimensionless bounds in the unit of the key), each end
/// inclusive or exclusive; unbounded by default.
struct Range {
  double low = -std::numeric_limits<double>::infinity();  ///< lower bound, in the key's unit
  double high = std::numeric_limits<double>::infinity();  ///< upper bound, in the key's unit
  bool low_inclusive = true;                              ///< whether low itself is allowed
  bool high_inclusive = true;                             ///< whether high itself is allowed

  /// low <= x <= high
  static Range closed(double low, double high) { return {low, high, true, true}; }
  /// low < x < high
  static Range open(double low, double high) { return {low, high, false, false}; }
  /// low < x <= high
  static Range open_closed(double low, double high) { return {low, high, false, true}; }
  /// low <= x < high
  static Range closed_open(double low, double high) { return {low, high, true, false}; }
  /// x >= low
  static Range at_least(double low) { return closed(low, std::numeric_limits<double>::infinity()); }
  /// x > low
  static Range greater_than(double low) {
    return open(low, std::numeric_limits<double>::infinity());
  }
  /// x <= high
  static Range at_most(double high) {
    return closed(-std::numeric_limits<double>::infinity(), high);
  }
  /// x < high
  static Range less_than(double high) {
    return open(-std::numeric_limits<double>::infinity(), high);
  }

  [[nodiscard]] bool contains(double x) const;
  /// The rule as text, e.g. "0 <= omega <= 1", "pressure > 0"; empty when unbounded.
  [[nodiscard]] std::string describe(std::string_view name) const;
};

/// Shortest text that reads back as the same double ("0.1", "1e+30", "1013.25").
std::string format_number(double x);

namespace detail {
struct Source;
}

class Section;

/// One parsed YAML file (or string) and its text, shared by the sections read from it.
class Document {
 public:
  /// Reads and parses a file. Throws InputError naming the file when it cannot be read, and
  /// InputError at the parser's position on a YAML syntax error.
  static Document load_file(const std::filesystem::path& path);
  /// Parses YAML text; `name` stands for the file name in messages. Same errors as load_file.
  static Document parse(std::string text, std::string name = "<input>");

  /// The top-level mapping. Throws InputError when the document is empty or not a mapping.
  [[nodiscard]] Section root() const;

  /// The name used in messages (the path as given).
  [[nodiscard]] const std::string& name() const;
  /// The complete text (for provenance records).
  [[nodiscard]] const std::string& text() const;
  /// Line `line` (1-based) without its newline; empty when out of range.
  [[nodiscard]] std::string line_text(int line) const;

  /// An error at a position, for checks made after reading (throw the result).
  [[nodiscard]] InputError error(SourceMark mark, std::string key_path, std::string message) const;
  /// An error at a value that was read, for checks made after reading.
  template <class T>
  [[nodiscard]] InputError error(const Located<T>& at, std::string message) const {
    return error(at.mark, at.key, std::move(message));
  }

 private:
  friend class Section;
  explicit Document(std::shared_ptr<const detail::Source> source) : source_(std::move(source)) {}
  std::shared_ptr<const detail::Source> source_;
};

/// A YAML mapping read key by key. Move-only: it keeps track of which keys have been read.
/// Every accessor throws InputError (with the value's position) when the value has the wrong type
/// or is out of range, and required_* when the key is missing.
class Section {
 public:
  Section(Section&&) noexcept;
  Section& operator=(Section&&) noexcept;
  Section(const Section&) = delete;
  Section& operator=(const Section&) = delete;
  ~Section();

  /// Key path of this section ("" for the root, "aerosol.layers[2]", ...).
  [[nodiscard]] const std::string& path() const { return path_; }
  /// Position of the section (of the key that holds it; 1:1 for the root).
  [[nodiscard]] SourceMark mark() const { return mark_; }
  /// The keys written in this section, in file order.
  [[nodiscard]] std::vector<std::string> keys() const;
  /// Whether `key` is written (an empty value counts: reading it then fails). Records the key as
  /// known.
  [[nodiscard]] bool has(std::string_view key);
  /// Whether `key` is written and its value is a mapping (then read it with subsection). Records
  /// the key as known.
  [[nodiscard]] bool is_mapping(std::string_view key);

  /// A finite number within `range`. `unit` (e.g. "hPa") is only used in messages.
  Located<double> required_number(std::string_view key, Range range = {},
                                  std::string_view unit = {});
  /// As required_number, or `fallback` (not range-checked) when the key is absent.
  Located<double> optional_number(std::string_view key, double fallback, Range range = {},
                                  std::string_view unit = {});
  /// A whole number within `range` (bounds in the same count unit).
  Located<long long> required_integer(std::string_view key, Range range = {});
  Located<long long> optional_integer(std::string_view key, long long fallback, Range range = {});
  /// `true` or `false` (YAML 1.2 core schema; yes/no/on/off are rejected as ambiguous).
  Located<bool> optional_bool(std::string_view key, bool fallback);
  /// Any scalar, as written (a number is taken as its text).
  Located<std::string> required_string(std::string_view key);
  Located<std::string> optional_string(std::string_view key, std::string fallback);
  /// One of `allowed` (exact match); a near miss gets a "did you mean" suggestion.
  Located<std::string> choice(std::string_view key, const std::vector<std::string>& allowed);
  Located<std::string> optional_choice(std::string_view key, std::string fallback,
                                       const std::vector<std::string>& allowed);
  /// A list (flow [..] or block) of at least `min_size` numbers, each within `element_range`.
  LocatedNumbers number_list(std::string_view key, Range element_range = {},
                             std::size_t min_size = 1, std::string_view unit = {});
  /// A list of scalars, as text.
  std::vector<Located<std::string>> string_list(std::string_view key);
  /// A nested mapping.
  Section subsection(std::string_view key);
  std::optional<Section> optional_subsection(std::string_view key);
  /// A list of mappings ("- key: value" items); element i has path key[i].
  std::vector<Section> sequence(std::string_view key, std::size_t min_size = 1);

  /// Throws InputError at the first key that no accessor asked for, suggesting the closest known
  /// key ("unknown key 'ozon' (did you mean 'ozone'?)"). Call after reading a section.
  void check_no_unknown_keys() const;

  /// Position of the value of `key` (of the key itself for an empty or non-scalar value);
  /// unknown when absent.
  [[nodiscard]] SourceMark mark_of(std::string_view key) const;
  /// An error at the value of `key` (or at this section when the key is absent).
  [[nodiscard]] InputError error(std::string_view key, std::string message) const;
  /// The document this section belongs to.
  [[nodiscard]] Document document() const;

 private:
  friend class Document;
  struct Entry;  // one key of the mapping, with its position and YAML value

  Section(std::shared_ptr<const detail::Source> source, const YAML::Node& node, std::string path,
          SourceMark mark);
  const Entry* find(std::string_view key);
  const Entry* find_required(std::string_view key);
  [[nodiscard]] std::string key_path(std::string_view key) const;
  [[nodiscard]] SourceMark value_mark(const Entry& e) const;
  [[nodiscard]] InputError error_at(SourceMark mark, std::string key, std::string message) const;
  Located<double> read_number(const Entry& e, std::string_view key, Range range,
                              std::string_view unit);

  std::shared_ptr<const detail::Source> source_;
  std::string path_;
  SourceMark mark_;
  std::vector<Entry> entries_;
  std::vector<std::string> known_;  // every key an accessor asked for
};

}  // namespace solstrata::experiment
