#include "io/atomic_file.hpp"

#include <fcntl.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <cstring>
#include <string>
#include <system_error>
#include <utility>

namespace solstrata::io {

namespace {
std::atomic<unsigned> temp_counter{0};

/// Flushes a file's data to disk (fsync), so that the rename never exposes an empty file after
/// a crash of the machine.
void sync_file(const std::filesystem::path& p) {
  const int fd = ::open(p.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) {
    throw OutputError(p.string() +
                      ": cannot open the finished file to flush it: " + std::strerror(errno));
  }
  const int rc = ::fsync(fd);
  const int err = errno;
  ::close(fd);
  if (rc != 0) throw OutputError(p.string() + ": cannot flush to disk: " + std::strerror(err));
}
}  // namespace

AtomicOutput::AtomicOutput(std::filesystem::path final_path) : final_(std::move(final_path)) {
  if (final_.filename().empty()) {
    throw OutputError("'" + final_.string() + "' names a directory, not an output file");
  }
  const std::filesystem::path dir =
      final_.has_parent_path() ? final_.parent_path() : std::filesystem::path(".");
  std::error_code ec;
  if (!std::filesystem::is_directory(dir, ec)) {
    throw OutputError(final_.string() + ": the directory '" + dir.string() + "' does not exist");
  }
  temp_ = final_;
  temp_ += ".tmp-" + std::to_string(::getpid()) + "-" + std::to_string(temp_counter++);
}

AtomicOutput::AtomicOutput(AtomicOutput&& other) noexcept
    : final_(std::move(other.final_)),
      temp_(std::move(other.temp_)),
      committed_(other.committed_),
      active_(std::exchange(other.active_, false)) {}

AtomicOutput::~AtomicOutput() {
  if (!committed_) discard();
}

void AtomicOutput::discard() noexcept {
  if (!active_) return;
  std::error_code ec;
  std::filesystem::remove(temp_, ec);  // nothing to do if it was never created
}

void AtomicOutput::commit() {
  if (committed_) return;
  std::error_code ec;
  if (!std::filesystem::is_regular_file(temp_, ec)) {
    throw OutputError(final_.string() + ": nothing was written (no temporary file " +
                      temp_.string() + ")");
  }
  sync_file(temp_);
  std::filesystem::rename(temp_, final_, ec);
  if (ec) {
    throw OutputError(final_.string() +
                      ": cannot move the finished file into place: " + ec.message());
  }
  committed_ = true;
}

std::size_t remove_stale_temporaries(const std::filesystem::path& final_path) {
  namespace fs = std::filesystem;
  const fs::path dir = final_path.has_parent_path() ? final_path.parent_path() : fs::path(".");
  const std::string prefix = final_path.filename().string() + ".tmp-";
  std::size_t removed = 0;
  std::error_code ec;
  for (fs::directory_iterator it(dir, ec), end; !ec && it != end; it.increment(ec)) {
    const std::string name = it->path().filename().string();
    if (name.rfind(prefix, 0) == 0 && it->is_regular_file(ec) && fs::remove(it->path(), ec)) ++removed;
  }
  return removed;
}

}  // namespace solstrata::io
