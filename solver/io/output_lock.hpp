// An advisory lock on an output file, so that two runs never write the same file at once.
#pragma once

#include <filesystem>

namespace solstrata::io {

/// Holds an exclusive flock(2) on `OUT.lock` beside the output file `OUT` for its lifetime; the
/// lock file records the holder's process id and is removed on destruction. A process that dies
/// (even by SIGKILL) drops the lock with it: a left-over lock file is taken over by the next run.
/// Advisory: it keeps solstrata runs apart, not other programs.
class OutputLock {
 public:
  /// Takes the lock or throws OutputError naming the output file and the holding process.
  explicit OutputLock(const std::filesystem::path& output);
  ~OutputLock();
  OutputLock(const OutputLock&) = delete;
  OutputLock& operator=(const OutputLock&) = delete;

  [[nodiscard]] const std::filesystem::path& path() const { return path_; }

 private:
  std::filesystem::path path_;
  int fd_ = -1;
};

}  // namespace solstrata::io
