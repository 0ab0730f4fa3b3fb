#include "io/parallel_rows.hpp"

#include <mpi.h>
#include <hdf5.h>

#include <fcntl.h>
#include <unistd.h>

#include <chrono>
#include <cerrno>
#include <cmath>
#include <cstring>
#include <string>
#include <utility>

#include "io/atomic_file.hpp"

namespace solstrata::io {
namespace {

/// Rows per chunk of the serial writer at most (Hdf5Writer::define_rows): 8192 doubles per row.
constexpr std::size_t kMaxGranule = 8192;
/// Doubles of records held in memory per round of writes (64 MB).
constexpr std::size_t kRoundValues = std::size_t{8} << 20;

/// An HDF5 identifier closed by its own close function when it goes out of scope.
class Handle {
 public:
  Handle(hid_t id, herr_t (*close)(hid_t)) : id_(id), close_(close) {}
  ~Handle() {
    if (id_ >= 0) close_(id_);
  }
  Handle(const Handle&) = delete;
  Handle& operator=(const Handle&) = delete;
  Handle(Handle&& o) noexcept : id_(o.id_), close_(o.close_) { o.id_ = -1; }
  [[nodiscard]] hid_t get() const { return id_; }
  [[nodiscard]] bool ok() const { return id_ >= 0; }
  /// Gives the identifier up (the caller closes it).
  hid_t release() { return std::exchange(id_, -1); }

 private:
  hid_t id_;
  herr_t (*close_)(hid_t);
};

/// The checkpoint files, opened once each when first read from.
class RecordFiles {
 public:
  RecordFiles(const std::vector<std::filesystem::path>& paths, std::size_t record_values)
      : paths_(paths), fds_(paths.size(), -1), bytes_(record_values * sizeof(double)) {}
  ~RecordFiles() {
    for (int fd : fds_)
      if (fd >= 0) ::close(fd);
  }
  RecordFiles(const RecordFiles&) = delete;
  RecordFiles& operator=(const RecordFiles&) = delete;

  void read(const RecordLocation& at, double* into) {
    if (at.file >= paths_.size()) throw OutputError("checkpoint file " + std::to_string(at.file) + " is not listed");
    int& fd = fds_[at.file];
    if (fd < 0) fd = ::open(paths_[at.file].c_str(), O_RDONLY | O_CLOEXEC);
    if (fd < 0) throw OutputError(paths_[at.file].string() + ": cannot open the checkpoint: " + std::strerror(errno));
    auto* p = reinterpret_cast<char*>(into);
    std::size_t done = 0;
    while (done < bytes_) {
      const ssize_t got = ::pread(fd, p + done, bytes_ - done, static_cast<off_t>(at.offset + done));
      if (got <= 0) throw OutputError(paths_[at.file].string() + ": cannot read a checkpoint record");
      done += static_cast<std::size_t>(got);
    }
  }

 private:
  const std::vector<std::filesystem::path>& paths_;
  std::vector<int> fds_;
  std::size_t bytes_;
};

}  // namespace

RankBlocks rank_blocks(std::size_t n, int ranks) {
  RankBlocks b;
  b.rows = n;
  const std::size_t share = std::max<std::size_t>(1, n / std::max(1, ranks));
  while (2 * b.granule <= std::min(share, kMaxGranule)) b.granule *= 2;
  const std::size_t granules = (n + b.granule - 1) / b.granule;
  const std::size_t per_rank = (granules + static_cast<std::size_t>(ranks) - 1) / static_cast<std::size_t>(ranks);
  b.block = std::max<std::size_t>(1, per_rank) * b.granule;
  return b;
}

ParallelWriteStats write_rows_collectively(const std::filesystem::path& file, const std::vector<RowDataset>& datasets,
                                           const RankBlocks& blocks, int rank,
                                           const std::vector<std::filesystem::path>& checkpoints,
                                           const std::vector<RecordLocation>& where, std::size_t record_values) {
  const auto t0 = std::chrono::steady_clock::now();
  const std::string name = file.string();
  const auto fail = [&](const std::string& what) -> void { throw OutputError(name + ": " + what); };
  const std::size_t lo = blocks.begin(rank), hi = blocks.end(rank);
  if (where.size() != hi - lo) fail("the record list does not match this rank's rows");
  H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr);  // errors arrive as OutputError

  // Every call below that opens, closes or writes is made by every rank in the same order with
  // the same arguments (parallel HDF5 requires it of all metadata-changing calls).
  Handle fapl(H5Pcreate(H5P_FILE_ACCESS), H5Pclose);
  if (!fapl.ok() || H5Pset_fapl_mpio(fapl.get(), MPI_COMM_WORLD, MPI_INFO_NULL) < 0) fail("cannot set up MPI-IO");
  // Metadata read once and broadcast, written by one rank, rather than by all at once.
  H5Pset_all_coll_metadata_ops(fapl.get(), 1);
  H5Pset_coll_metadata_write(fapl.get(), 1);
  Handle f(H5Fopen(name.c_str(), H5F_ACC_RDWR, fapl.get()), H5Fclose);
  if (!f.ok()) fail("parallel HDF5 cannot open the file");
  std::vector<Handle> sets;
  std::vector<std::vector<hsize_t>> shapes;
  for (const RowDataset& d : datasets) {
    // Opening allocates the chunks (collectively: the MPI-IO driver allocates early); the
    // skeleton declared no fill, so they are not written twice.
    sets.emplace_back(H5Dopen2(f.get(), d.name.c_str(), H5P_DEFAULT), H5Dclose);
    if (!sets.back().ok()) fail("variable '" + d.name + "': cannot open it");
    Handle space(H5Dget_space(sets.back().get()), H5Sclose);
    const int rank_of = H5Sget_simple_extent_ndims(space.get());
    std::vector<hsize_t> shape(static_cast<std::size_t>(std::max(0, rank_of)));
    H5Sget_simple_extent_dims(space.get(), shape.data(), nullptr);
    std::size_t per_row = 1;
    for (std::size_t i = 1; i < shape.size(); ++i) per_row *= shape[i];
    if (shape.empty() || shape[0] != blocks.rows || per_row != d.size) {
      fail("variable '" + d.name + "' does not have the layout of the records");
    }
    shapes.push_back(std::move(shape));
  }
  Handle dxpl(H5Pcreate(H5P_DATASET_XFER), H5Pclose);
  if (!dxpl.ok() || H5Pset_dxpl_mpio(dxpl.get(), H5FD_MPIO_COLLECTIVE) < 0) fail("cannot set up collective writes");

  // Rounds of at most kRoundValues doubles of records, a whole number of granules when larger
  // than one; every rank makes the same number of rounds (of the nominal block).
  std::size_t per_round = std::max<std::size_t>(1, kRoundValues / std::max<std::size_t>(1, record_values));
  if (per_round > blocks.granule) per_round = per_round / blocks.granule * blocks.granule;
  const std::size_t rounds = (blocks.block + per_round - 1) / per_round;
  std::vector<double> records, packed;
  RecordFiles files(checkpoints, record_values);
  ParallelWriteStats stats;
  for (std::size_t round = 0; round < rounds; ++round) {
    const std::size_t a = std::min(hi, lo + round * per_round), b = std::min(hi, a + per_round), count = b - a;
    records.resize(count * record_values);
    int finite = 1;
    for (std::size_t r = 0; r < count; ++r) {
      double* rec = records.data() + r * record_values;
      files.read(where[a - lo + r], rec);
      for (std::size_t v = 0; v < record_values && finite; ++v) finite = std::isfinite(rec[v]) ? 1 : 0;
    }
    int all_finite = 0;
    MPI_Allreduce(&finite, &all_finite, 1, MPI_INT, MPI_MIN, MPI_COMM_WORLD);
    if (!all_finite) fail("a checkpoint record holds a value that is not finite; no file was made");
    for (std::size_t k = 0; k < datasets.size(); ++k) {
      const RowDataset& d = datasets[k];
      packed.resize(std::max<std::size_t>(1, count * d.size));
      for (std::size_t r = 0; r < count; ++r) {
        std::memcpy(packed.data() + r * d.size, records.data() + r * record_values + d.offset, d.size * sizeof(double));
      }
      Handle fspace(H5Dget_space(sets[k].get()), H5Sclose);
      const hsize_t mem_n = std::max<hsize_t>(1, count * d.size);
      Handle mspace(H5Screate_simple(1, &mem_n, nullptr), H5Sclose);
      if (count > 0) {
        std::vector<hsize_t> start(shapes[k].size(), 0), extent = shapes[k];
        start[0] = a;
        extent[0] = count;
        if (H5Sselect_hyperslab(fspace.get(), H5S_SELECT_SET, start.data(), nullptr, extent.data(), nullptr) < 0)
          fail("variable '" + d.name + "': cannot select rows");
      } else {
        // No rows here: still join the collective write, with nothing selected.
        H5Sselect_none(fspace.get());
        H5Sselect_none(mspace.get());
      }
      if (H5Dwrite(sets[k].get(), H5T_NATIVE_DOUBLE, mspace.get(), fspace.get(), dxpl.get(), packed.data()) < 0)
        fail("variable '" + d.name + "': the collective write failed");
      stats.bytes += count * d.size * sizeof(double);
    }
  }
  sets.clear();
  if (H5Fclose(f.release()) < 0) fail("parallel HDF5 cannot close the file");
  stats.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  return stats;
}

}  // namespace solstrata::io
