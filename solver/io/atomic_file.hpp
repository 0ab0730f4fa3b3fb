// Output files that appear complete or not at all: write to a temporary name, rename on success.
#pragma once

#include <filesystem>
#include <stdexcept>

namespace solstrata::io {

/// A file could not be written; the message names the file (and variable) and the cause.
class OutputError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

/// RAII guard for one output file. Writers write to temp_path() (in the same directory as the
/// final path, so the rename cannot cross file systems) and call commit() when the file is
/// complete; commit() flushes it to disk and renames it over the final path, which POSIX makes
/// atomic. If the guard is destroyed before commit() (an exception, an early return) the
/// temporary is removed, so no partial file is ever left under either name.
class AtomicOutput {
 public:
  /// Chooses "<final>.tmp-<pid>-<n>". Throws OutputError when the directory does not exist.
  explicit AtomicOutput(std::filesystem::path final_path);
  ~AtomicOutput();
  AtomicOutput(const AtomicOutput&) = delete;
  AtomicOutput& operator=(const AtomicOutput&) = delete;
  AtomicOutput(AtomicOutput&&) noexcept;
  AtomicOutput& operator=(AtomicOutput&&) = delete;

  [[nodiscard]] const std::filesystem::path& final_path() const { return final_; }
  [[nodiscard]] const std::filesystem::path& temp_path() const { return temp_; }
  [[nodiscard]] bool committed() const { return committed_; }

  /// Flushes the (closed) temporary to disk and renames it to the final path, replacing any
  /// file there. Throws OutputError when the temporary is missing or the rename fails (the
  /// temporary is then still removed by the destructor).
  void commit();
  /// Removes the temporary now (idempotent; never throws).
  void discard() noexcept;

 private:
  std::filesystem::path final_;
  std::filesystem::path temp_;
  bool committed_ = false;
  bool active_ = true;
};

/// Removes the temporaries "<final>.tmp-*" that a killed process left beside `final_path`
/// (a process that dies by SIGKILL cannot remove its own). Call it only while holding the
/// OutputLock of `final_path`: then no live process is writing one. Returns how many it removed.
std::size_t remove_stale_temporaries(const std::filesystem::path& final_path);

}  // namespace solstrata::io
