#include "io/csv_writer.hpp"

#include <charconv>
#include <cmath>
#include <fstream>
#include <utility>

#include "io/atomic_file.hpp"

namespace solstrata::io {

std::string csv_field(std::string_view text) {
  if (text.find_first_of(",\"\r\n") == std::string_view::npos) return std::string(text);
  std::string out = "\"";
  for (char c : text) {
    if (c == '"') out += '"';
    out += c;
  }
  out += '"';
  return out;
}

std::string csv_number(double value) {
  if (!std::isfinite(value)) throw OutputError("CSV: a value is not finite (NaN or infinity)");
  char buf[32];
  const auto [ptr, ec] = std::to_chars(buf, buf + sizeof buf, value);
  return std::string(buf, ptr);
}

CsvTable::CsvTable(std::vector<std::string> header) : header_(std::move(header)) {
  if (header_.empty()) throw OutputError("CSV: a table needs at least one column");
}

void CsvTable::add_row(std::vector<std::string> cells) {
  if (cells.size() != header_.size()) {
    throw OutputError("CSV: row " + std::to_string(rows_.size() + 1) + " has " +
                      std::to_string(cells.size()) + " cells, the header has " +
                      std::to_string(header_.size()));
  }
  rows_.push_back(std::move(cells));
}

void CsvTable::add_row(std::span<const double> values) {
  std::vector<std::string> cells;
  for (double v : values) cells.push_back(csv_number(v));
  add_row(std::move(cells));
}

std::string CsvTable::to_string() const {
  std::string out;
  const auto line = [&out](const std::vector<std::string>& cells) {
    for (std::size_t i = 0; i < cells.size(); ++i) {
      if (i > 0) out += ',';
      out += csv_field(cells[i]);
    }
    out += '\n';
  };
  line(header_);
  for (const auto& row : rows_) line(row);
  return out;
}

void CsvTable::write(const std::filesystem::path& path) const {
  AtomicOutput output(path);
  {
    std::ofstream out(output.temp_path(), std::ios::binary | std::ios::trunc);
    const std::string text = to_string();
    out.write(text.data(), static_cast<std::streamsize>(text.size()));
    out.close();
    if (!out) throw OutputError(path.string() + ": cannot write the CSV file");
  }
  output.commit();
}

}  // namespace solstrata::io
