// The append-only checkpoint of a sweep: finished scenarios, each with a checksum, from which the
// final HDF5 file is built. A run killed at any instant leaves at worst a torn last record, which
// reading detects and drops; the HDF5 file itself only ever appears complete (atomic rename).
#pragma once

#include <cstdint>
#include <cstdio>
#include <filesystem>
#include <iosfwd>
#include <map>
#include <span>
#include <string>
#include <vector>

namespace solstrata::io {

/// 64-bit FNV-1a hash (Fowler, Noll & Vo), continuing from `h`.
std::uint64_t fnv1a(const void* data, std::size_t n, std::uint64_t h = 14695981039346656037ull);

/// What identifies a sweep's checkpoint: the experiment hash and the record layout.
struct CheckpointHeader {
  std::uint64_t experiment_hash = 0;  ///< hash of the experiment text and content options
  std::uint64_t n_scenarios = 0;      ///< scenarios in the study
  std::uint64_t record_values = 0;    ///< doubles per scenario record
};

/// Appends scenario records to a checkpoint file.
class CheckpointWriter {
 public:
  /// Creates `path` with `header` (replacing any file), or, with `append`, opens an existing
  /// checkpoint whose valid records end at `valid_bytes` (the torn tail beyond is cut off).
  CheckpointWriter(const std::filesystem::path& path, const CheckpointHeader& header, bool append,
                   std::uint64_t valid_bytes = 0);
  ~CheckpointWriter();
  CheckpointWriter(const CheckpointWriter&) = delete;
  CheckpointWriter& operator=(const CheckpointWriter&) = delete;

  /// Appends one record (scenario index, values, checksum) and pushes it to the OS; every
  /// `sync_every` records (and on destruction) it is also forced to disk (fsync).
  void append(std::uint64_t scenario, std::span<const double> values);
  [[nodiscard]] std::size_t records_written() const { return written_; }
  /// Forces everything appended so far to disk (fsync), e.g. before the file is read back.
  void flush();
  /// Test hook for a full disk: from now on, bytes that would take the file past `bytes` are not
  /// written and append fails as write(2) does on a full disk (ENOSPC), leaving a torn record.
  void set_byte_limit(std::uint64_t bytes) { byte_limit_ = bytes; }

 private:
  std::FILE* f_ = nullptr;
  std::filesystem::path path_;
  std::uint64_t record_values_ = 0;
  std::size_t written_ = 0;
  std::uint64_t file_bytes_ = 0;  ///< length of the file so far
  std::uint64_t byte_limit_ = ~std::uint64_t{0};
};

/// The valid contents of a checkpoint file.
struct CheckpointContents {
  CheckpointHeader header;
  std::map<std::uint64_t, std::uint64_t> offsets;  ///< scenario -> byte offset of its values
  std::uint64_t valid_bytes = 0;                   ///< length of the valid prefix of the file
};

/// Reads a checkpoint: header and every complete record whose checksum holds, stopping at the
/// first torn or corrupt one. Throws OutputError when the file is not a checkpoint.
CheckpointContents read_checkpoint(const std::filesystem::path& path);
/// As read_checkpoint, from a stream; `name` stands for the file in messages.
CheckpointContents read_checkpoint(std::istream& in, const std::string& name);

/// Reads the values of one scenario record (offset from read_checkpoint).
std::vector<double> read_checkpoint_record(const std::filesystem::path& path, std::uint64_t offset,
                                           std::uint64_t record_values);

}  // namespace solstrata::io
