// Errors in input files, pointing at the file, line and column of the offending text.
#pragma once

#include <stdexcept>
#include <string>

namespace solstrata::experiment {

/// A position in an input file: 1-based line and column; 0 means "not known" (for instance a
/// missing file, or an empty document).
struct SourceMark {
  int line = 0;    ///< 1-based line number (dimensionless count); 0 = unknown
  int column = 0;  ///< 1-based column in characters (bytes); 0 = unknown

  [[nodiscard]] bool known() const { return line > 0; }
  friend bool operator==(const SourceMark&, const SourceMark&) = default;
};

/// Bad input in a file: what was wrong, what was expected, and where.
///
/// what() renders, compiler style:
///
///     FILE:LINE:COL: error: KEY: MESSAGE
///       <the offending source line>
///       <spaces>^
///
/// The key part is left out when the key path is empty, the position when it is unknown, and the
/// source excerpt when the line is not available. The caret sits under column COL.
class InputError : public std::runtime_error {
 public:
  /// file: path as given by the user; key_path: dotted path such as "aerosol.layers[2].omega";
  /// message: what was wrong and what was expected; source_line: the text of line mark.line
  /// (without its newline), or empty.
  InputError(std::string file, SourceMark mark, std::string key_path, std::string message,
             std::string source_line = {});

  [[nodiscard]] const std::string& file() const { return file_; }
  [[nodiscard]] SourceMark mark() const { return mark_; }
  /// 1-based line, 0 when unknown.
  [[nodiscard]] int line() const { return mark_.line; }
  /// 1-based column, 0 when unknown.
  [[nodiscard]] int column() const { return mark_.column; }
  [[nodiscard]] const std::string& key_path() const { return key_path_; }
  /// The message alone, without position or excerpt.
  [[nodiscard]] const std::string& message() const { return message_; }
  /// The offending source line (empty when unknown).
  [[nodiscard]] const std::string& source_line() const { return source_line_; }

 private:
  std::string file_;
  SourceMark mark_;
  std::string key_path_;
  std::string message_;
  std::string source_line_;
};

/// Renders the what() text of an InputError (exposed for tests and for the CLI).
std::string render_input_error(const std::string& file, SourceMark mark,
                               const std::string& key_path, const std::string& message,
                               const std::string& source_line);

}  // namespace solstrata::experiment
