// MPI builds only (SOLSTRATA_MPI): the per-scenario rows of a sweep file written by every rank
// at once, by collective hyperslab writes through HDF5's MPI-IO driver. MPI stays out of this
// header: the communicator is MPI_COMM_WORLD.
#pragma once

#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <vector>

#include "io/sweep_file.hpp"

namespace solstrata::io {

/// How the rows [0, n) of a sweep file are cut into one contiguous block per rank: blocks are
/// whole multiples of `granule` (a power of two, at most 8192, the chunk rows of the skeleton
/// divide it), so no chunk is shared by two ranks; the last ranks may get no rows.
struct RankBlocks {
  std::size_t rows = 0;     ///< n
  std::size_t granule = 1;  ///< rows per granule, a power of two
  std::size_t block = 0;    ///< rows per rank (the last non-empty block may be shorter)
  /// First row of `rank`'s block (clamped to n).
  [[nodiscard]] std::size_t begin(int rank) const { return std::min(rows, static_cast<std::size_t>(rank) * block); }
  /// One past the last row of `rank`'s block.
  [[nodiscard]] std::size_t end(int rank) const { return std::min(rows, (static_cast<std::size_t>(rank) + 1) * block); }
  /// The rank whose block holds `row`.
  [[nodiscard]] int owner(std::size_t row) const { return static_cast<int>(row / block); }
};

/// The blocks of n rows over `ranks` ranks: the granule is the largest power of two not above
/// n / ranks (and 8192), the block the fewest granules that cover n in `ranks` blocks.
RankBlocks rank_blocks(std::size_t n, int ranks);

/// Where a finished scenario's record is: which checkpoint file, and the byte offset of its values.
struct RecordLocation {
  std::uint64_t file = 0;    ///< index into the list of checkpoint files
  std::uint64_t offset = 0;  ///< from read_checkpoint
};

/// What the collective write did on this rank.
struct ParallelWriteStats {
  std::uint64_t bytes = 0;  ///< raw bytes of rows this rank wrote
  double seconds = 0.0;     ///< from opening the file to closing it
};

/// Collective: every rank calls it with the same `file`, `datasets` and `blocks`. Opens `file`
/// (a skeleton from write_sweep_skeleton) with the MPI-IO driver and writes, for every dataset,
/// the rows of this rank's block [blocks.begin(rank), blocks.end(rank)) by collective hyperslab
/// writes (H5FD_MPIO_COLLECTIVE), reading each row from `checkpoints[where[k].file]` at
/// `where[k].offset` (k = row - begin); a rank without rows writes an empty selection. Memory:
/// about 64 MB of records at a time, in the same number of rounds on every rank. A value that
/// is not finite fails on every rank (before that round is written). Throws OutputError; a
/// failure inside HDF5 may leave the other ranks waiting, so callers abort the job then.
ParallelWriteStats write_rows_collectively(const std::filesystem::path& file, const std::vector<RowDataset>& datasets,
                                           const RankBlocks& blocks, int rank,
                                           const std::vector<std::filesystem::path>& checkpoints,
                                           const std::vector<RecordLocation>& where, std::size_t record_values);

}  // namespace solstrata::io
