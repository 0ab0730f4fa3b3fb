// Test helpers: a scratch directory removed at the end of a test, and running a shell command.
#pragma once

#include <sys/wait.h>
#include <unistd.h>

#include <array>
#include <cstdio>
#include <filesystem>
#include <string>

namespace solstrata::testing {

/// A fresh directory under the system temporary directory, removed with its contents on exit.
class TempDir {
 public:
  explicit TempDir(const std::string& tag) {
    static int counter = 0;
    path_ =
        std::filesystem::temp_directory_path() /
        ("solstrata_" + tag + "_" + std::to_string(::getpid()) + "_" + std::to_string(counter++));
    std::filesystem::remove_all(path_);
    std::filesystem::create_directories(path_);
  }
  ~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;

  [[nodiscard]] const std::filesystem::path& path() const { return path_; }
  [[nodiscard]] std::filesystem::path operator/(const std::string& name) const {
    return path_ / name;
  }
  /// Names of the files in the directory.
  [[nodiscard]] std::vector<std::string> files() const {
    std::vector<std::string> out;
    for (const auto& e : std::filesystem::directory_iterator(path_)) {
      out.push_back(e.path().filename().string());
    }
    return out;
  }

 private:
  std::filesystem::path path_;
};

/// Output and exit status of a shell command (stderr joined to stdout).
struct CommandResult {
  int status = -1;
  std::string output;
};

inline CommandResult run_command(const std::string& command) {
  CommandResult result;
  FILE* pipe = ::popen((command + " 2>&1").c_str(), "r");
  if (pipe == nullptr) return result;
  std::array<char, 4096> buffer{};
  std::size_t n = 0;
  while ((n = std::fread(buffer.data(), 1, buffer.size(), pipe)) > 0)
    result.output.append(buffer.data(), n);
  const int raw = ::pclose(pipe);
  result.status = (raw != -1 && WIFEXITED(raw)) ? WEXITSTATUS(raw) : -1;
  return result;
}

/// Whether a program is on the PATH.
inline bool have_program(const std::string& name) {
  return run_command("command -v " + name + " >/dev/null").status == 0;
}

}  // namespace solstrata::testing
