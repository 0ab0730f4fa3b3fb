#include "io/output_lock.hpp"

#include <fcntl.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <string>

#include "io/atomic_file.hpp"

namespace solstrata::io {

OutputLock::OutputLock(const std::filesystem::path& output) : path_(output.string() + ".lock") {
  // Open, lock, then check that the locked file is still the one at the path: a holder that
  // finished in between has removed it (and a third run may have made a new one), so retry.
  for (int attempt = 0; attempt < 100; ++attempt) {
    const int fd = ::open(path_.c_str(), O_RDWR | O_CREAT | O_CLOEXEC, 0644);
    if (fd < 0) {
      throw OutputError(output.string() + ": cannot create the lock file " + path_.string() + ": " +
                        std::strerror(errno));
    }
    if (::flock(fd, LOCK_EX | LOCK_NB) != 0) {
      const int err = errno;
      char pid[32] = {0};
      const ssize_t n = ::pread(fd, pid, sizeof pid - 1, 0);
      ::close(fd);
      if (err == EWOULDBLOCK) {
        std::string holder = n > 0 ? std::string(pid, static_cast<std::size_t>(n)) : std::string();
        while (!holder.empty() && (holder.back() == '\n' || holder.back() == ' ')) holder.pop_back();
        throw OutputError(output.string() + ": another solstrata run" +
                          (holder.empty() ? std::string() : " (process " + holder + ")") +
                          " is writing this file (it holds " + path_.string() +
                          "); wait for it to finish or choose another output file");
      }
      throw OutputError(output.string() + ": cannot lock " + path_.string() + ": " + std::strerror(err));
    }
    struct stat held {}, now {};
    if (::fstat(fd, &held) == 0 && ::stat(path_.c_str(), &now) == 0 && held.st_ino == now.st_ino &&
        held.st_dev == now.st_dev) {
      const std::string pid = std::to_string(::getpid()) + "\n";
      if (::ftruncate(fd, 0) != 0 || ::pwrite(fd, pid.data(), pid.size(), 0) != static_cast<ssize_t>(pid.size())) {
        // The lock holds without the process id; only the message of a second run is poorer.
      }
      fd_ = fd;
      return;
    }
    ::close(fd);
  }
  throw OutputError(output.string() + ": cannot lock " + path_.string() + " (it keeps being replaced)");
}

OutputLock::~OutputLock() {
  if (fd_ < 0) return;
  ::unlink(path_.c_str());  // while still locked: a waiting run then sees a different file and retries
  ::close(fd_);
}

}  // namespace solstrata::io
