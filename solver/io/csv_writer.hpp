// Comma-separated tables (RFC 4180 quoting) for summaries that spreadsheets and pandas read.
#pragma once

#include <cstddef>
#include <filesystem>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace solstrata::io {

/// One field quoted as RFC 4180 (Shafranovich 2005) requires: a field containing a comma, a
/// double quote, CR or LF is enclosed in double quotes and its quotes are doubled; any other
/// field is written as is.
std::string csv_field(std::string_view text);

/// A number as the shortest text that reads back as the same double ("0.1", "1e-07").
/// Throws OutputError for NaN or infinity (outputs are finite).
std::string csv_number(double value);

/// A table with a header row; every row has as many cells as the header.
class CsvTable {
 public:
  /// Column names, e.g. {"scenario", "cos_zenith", "global_horizontal_W_m-2"}.
  explicit CsvTable(std::vector<std::string> header);

  /// Appends a row of text cells. Throws OutputError when the cell count differs from the header.
  void add_row(std::vector<std::string> cells);
  /// Appends a row of numbers (formatted with csv_number).
  void add_row(std::span<const double> values);

  [[nodiscard]] std::size_t rows() const { return rows_.size(); }
  /// The whole table: header and rows, fields joined by ',', each line ended by "\n" (RFC 4180
  /// asks for CRLF; LF is what Unix tools expect, and RFC 4180 readers accept both).
  [[nodiscard]] std::string to_string() const;
  /// Writes to_string() to `path` atomically (temporary file, then rename; see AtomicOutput).
  void write(const std::filesystem::path& path) const;

 private:
  std::vector<std::string> header_;
  std::vector<std::vector<std::string>> rows_;
};

}  // namespace solstrata::io
