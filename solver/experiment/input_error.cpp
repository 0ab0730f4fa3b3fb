#include "experiment/input_error.hpp"

#include <algorithm>
#include <utility>

namespace solstrata::experiment {

std::string render_input_error(const std::string& file, SourceMark mark,
                               const std::string& key_path, const std::string& message,
                               const std::string& source_line) {
  std::string out = file;
  if (mark.known()) {
    out += ':' + std::to_string(mark.line);
    if (mark.column > 0) out += ':' + std::to_string(mark.column);
  }
  out += ": error: ";
  if (!key_path.empty()) out += key_path + ": ";
  out += message;
  if (mark.known() && mark.column > 0 && !source_line.empty()) {
    // A long line (minified or generated files) is shown as a window of kWidth characters around
    // the column; control bytes (binary garbage) are shown as '?' so the terminal stays sane.
    constexpr std::size_t kWidth = 100;
    auto col = static_cast<std::size_t>(mark.column - 1);
    std::size_t from = 0;
    if (source_line.size() > kWidth && col > kWidth / 2) from = std::min(col - kWidth / 2, source_line.size() - kWidth / 2);
    std::string shown = source_line.substr(from, kWidth);
    for (char& c : shown)
      if (static_cast<unsigned char>(c) < 0x20 && c != '\t') c = '?';
    const std::string before = from > 0 ? "..." : "";
    const std::string after = from + kWidth < source_line.size() ? "..." : "";
    out += "\n  " + before + shown + after + "\n  " + std::string(before.size(), ' ');
    // Keep tabs as tabs so that the caret lines up however the terminal expands them.
    const std::size_t width = col - from;
    for (std::size_t i = 0; i < width; ++i) {
      out += (i < shown.size() && shown[i] == '\t') ? '\t' : ' ';
    }
    out += '^';
  }
  return out;
}

InputError::InputError(std::string file, SourceMark mark, std::string key_path, std::string message,
                       std::string source_line)
    : std::runtime_error(render_input_error(file, mark, key_path, message, source_line)),
      file_(std::move(file)),
      mark_(mark),
      key_path_(std::move(key_path)),
      message_(std::move(message)),
      source_line_(std::move(source_line)) {}

}  // namespace solstrata::experiment
