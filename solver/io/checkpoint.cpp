#include "io/checkpoint.hpp"

#include <cerrno>
#include <cstring>
#include <fstream>
#include <unistd.h>

#include "io/atomic_file.hpp"

namespace solstrata::io {
namespace {

constexpr char kMagic[16] = {'S', 'O', 'L', 'S', 'T', 'R', 'A', 'T', 'A', '-', 'C', 'K', 'P', 'T', '1', '\n'};
constexpr std::size_t kHeaderBytes = sizeof kMagic + 3 * sizeof(std::uint64_t);
constexpr std::size_t kSyncEvery = 64;
/// Limits a header must respect (far above any real sweep: the scenario ceiling of a study is
/// 10^8, and a record of 2^27 values would be 1 GiB per scenario).
constexpr std::uint64_t kMaxRecordValues = std::uint64_t{1} << 27;
constexpr std::uint64_t kMaxCheckpointScenarios = std::uint64_t{1} << 40;

std::uint64_t record_checksum(std::uint64_t scenario, const double* v, std::size_t n) {
  return fnv1a(v, n * sizeof(double), fnv1a(&scenario, sizeof scenario));
}

}  // namespace

std::uint64_t fnv1a(const void* data, std::size_t n, std::uint64_t h) {
  const auto* p = static_cast<const unsigned char*>(data);
  for (std::size_t i = 0; i < n; ++i) {
    h ^= p[i];
    h *= 1099511628211ull;
  }
  return h;
}

CheckpointWriter::CheckpointWriter(const std::filesystem::path& path, const CheckpointHeader& header, bool append,
                                   std::uint64_t valid_bytes)
    : path_(path), record_values_(header.record_values) {
  if (append) {
    std::error_code ec;
    std::filesystem::resize_file(path, valid_bytes, ec);  // drop a torn last record
    if (ec) throw OutputError(path.string() + ": cannot trim the checkpoint: " + ec.message());
    f_ = std::fopen(path.c_str(), "ab");
    file_bytes_ = valid_bytes;
  } else {
    // The checkpoint appears with its whole header or not at all (a kill between creating the
    // file and writing the header would otherwise leave a file --resume cannot use): the header
    // goes to a temporary (AtomicOutput), which is renamed into place, then opened for appending.
    AtomicOutput tmp(path);
    std::FILE* h = std::fopen(tmp.temp_path().c_str(), "wb");
    if (!h) throw OutputError(path.string() + ": cannot create the checkpoint: " + std::strerror(errno));
    const std::uint64_t v[3] = {header.experiment_hash, header.n_scenarios, header.record_values};
    const bool ok = std::fwrite(kMagic, 1, sizeof kMagic, h) == sizeof kMagic && std::fwrite(v, sizeof v, 1, h) == 1;
    if (std::fclose(h) != 0 || !ok) throw OutputError(path.string() + ": cannot write the checkpoint header: " + std::strerror(errno));
    tmp.commit();
    f_ = std::fopen(path.c_str(), "ab");
    file_bytes_ = kHeaderBytes;
  }
  if (!f_) throw OutputError(path.string() + ": cannot open the checkpoint for writing: " + std::strerror(errno));
}

CheckpointWriter::~CheckpointWriter() {
  if (f_) {
    std::fflush(f_);
    ::fsync(fileno(f_));
    std::fclose(f_);
  }
}

void CheckpointWriter::append(std::uint64_t scenario, std::span<const double> values) {
  if (values.size() != record_values_) {
    throw OutputError(path_.string() + ": record of scenario " + std::to_string(scenario) + " has " +
                      std::to_string(values.size()) + " values, expected " + std::to_string(record_values_));
  }
  const std::uint64_t sum = record_checksum(scenario, values.data(), values.size());
  const std::uint64_t record_bytes = sizeof scenario + values.size() * sizeof(double) + sizeof sum;
  if (file_bytes_ + record_bytes > byte_limit_) {
    // As a full disk would: what fits is written (a torn record), then the write fails.
    std::vector<unsigned char> rec(record_bytes);
    std::memcpy(rec.data(), &scenario, sizeof scenario);
    std::memcpy(rec.data() + sizeof scenario, values.data(), values.size() * sizeof(double));
    std::memcpy(rec.data() + record_bytes - sizeof sum, &sum, sizeof sum);
    const std::uint64_t fits = byte_limit_ > file_bytes_ ? byte_limit_ - file_bytes_ : 0;
    if (std::fwrite(rec.data(), 1, fits, f_) != fits || std::fflush(f_) != 0) {
      // the partial write failed as well: nothing more to lose
    }
    file_bytes_ += fits;
    throw OutputError(path_.string() + ": cannot append to the checkpoint: " + std::strerror(ENOSPC));
  }
  if (std::fwrite(&scenario, sizeof scenario, 1, f_) != 1 ||
      std::fwrite(values.data(), sizeof(double), values.size(), f_) != values.size() ||
      std::fwrite(&sum, sizeof sum, 1, f_) != 1 || std::fflush(f_) != 0) {
    throw OutputError(path_.string() + ": cannot append to the checkpoint: " + std::strerror(errno));
  }
  file_bytes_ += record_bytes;
  if (++written_ % kSyncEvery == 0) ::fsync(fileno(f_));
}

void CheckpointWriter::flush() {
  if (std::fflush(f_) != 0 || ::fsync(fileno(f_)) != 0) {
    throw OutputError(path_.string() + ": cannot flush the checkpoint: " + std::strerror(errno));
  }
}

CheckpointContents read_checkpoint(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw OutputError(path.string() + ": cannot read the checkpoint");
  return read_checkpoint(in, path.string());
}

CheckpointContents read_checkpoint(std::istream& in, const std::string& name) {
  const std::filesystem::path path = name;
  char magic[sizeof kMagic];
  std::uint64_t h[3];
  if (!in.read(magic, sizeof magic) || std::memcmp(magic, kMagic, sizeof kMagic) != 0 ||
      !in.read(reinterpret_cast<char*>(h), sizeof h)) {
    throw OutputError(path.string() + ": not a solstrata sweep checkpoint (or its header is damaged)");
  }
  CheckpointContents c;
  c.header = {h[0], h[1], h[2]};
  c.valid_bytes = kHeaderBytes;
  // A damaged header must not make us allocate: a record longer than the file cannot be whole
  // (found by tests/fuzz/fuzz_checkpoint: record_values = 2^29 asked for 4 GiB).
  const std::streampos here = in.tellg();
  in.seekg(0, std::ios::end);
  const std::streamoff size = in.tellg();
  in.seekg(here);
  if (!in || size < 0) throw OutputError(path.string() + ": cannot read the checkpoint");
  if (c.header.record_values > kMaxRecordValues || c.header.n_scenarios > kMaxCheckpointScenarios) {
    throw OutputError(path.string() + ": not a solstrata sweep checkpoint (its header is damaged: " +
                      std::to_string(c.header.n_scenarios) + " scenarios of " + std::to_string(c.header.record_values) +
                      " values)");
  }
  if (c.header.record_values * sizeof(double) > static_cast<std::uint64_t>(size)) return c;
  std::vector<double> v(c.header.record_values);
  for (;;) {
    std::uint64_t scenario = 0, sum = 0;
    const std::uint64_t at = c.valid_bytes;
    if (!in.read(reinterpret_cast<char*>(&scenario), sizeof scenario)) break;
    if (!in.read(reinterpret_cast<char*>(v.data()), static_cast<std::streamsize>(v.size() * sizeof(double)))) break;
    if (!in.read(reinterpret_cast<char*>(&sum), sizeof sum)) break;
    if (sum != record_checksum(scenario, v.data(), v.size()) || scenario >= c.header.n_scenarios) break;
    c.offsets[scenario] = at + sizeof scenario;
    c.valid_bytes = at + sizeof scenario + v.size() * sizeof(double) + sizeof sum;
  }
  return c;
}

std::vector<double> read_checkpoint_record(const std::filesystem::path& path, std::uint64_t offset,
                                           std::uint64_t record_values) {
  std::ifstream in(path, std::ios::binary);
  std::vector<double> v(record_values);
  in.seekg(static_cast<std::streamoff>(offset));
  if (!in.read(reinterpret_cast<char*>(v.data()), static_cast<std::streamsize>(v.size() * sizeof(double)))) {
    throw OutputError(path.string() + ": cannot read a checkpoint record");
  }
  return v;
}

}  // namespace solstrata::io
