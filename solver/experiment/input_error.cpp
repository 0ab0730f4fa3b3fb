#include "experiment/input_error.hpp"

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
    out += "\n  " + source_line + "\n  ";
    // Keep tabs as tabs so that the caret lines up however the terminal expands them.
    const auto width = static_cast<std::size_t>(mark.column - 1);
    for (std::size_t i = 0; i < width; ++i) {
      out += (i < source_line.size() && source_line[i] == '\t') ? '\t' : ' ';
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
