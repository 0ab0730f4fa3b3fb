// MPI builds only (SOLSTRATA_MPI): `solstrata run` of a sweep on every rank of mpirun. MPI stays
// out of this header.
#pragma once

#include <atomic>

#include "app/commands.hpp"
#include "experiment/experiment.hpp"
#include "experiment/sweep.hpp"

namespace solstrata::app {

/// MPI for the life of a `solstrata run`: MPI_Init_thread (the main thread alone calls MPI,
/// MPI_THREAD_FUNNELED) on construction, MPI_Finalize on destruction. Without mpirun the process
/// is a world of one rank (MPI's singleton start).
class MpiSession {
 public:
  MpiSession();
  ~MpiSession();
  MpiSession(const MpiSession&) = delete;
  MpiSession& operator=(const MpiSession&) = delete;
  [[nodiscard]] int rank() const { return rank_; }
  [[nodiscard]] int size() const { return size_; }

 private:
  int rank_ = 0, size_ = 1;
};

/// Runs a sweep or a time series on every rank of MPI_COMM_WORLD; every rank calls it with the
/// same study. (A time series: its cases are the steps and the daily-total nodes; the rows of the
/// file are the steps, and rank 0 reduces the nodes into the daily totals.)
/// The scenarios still to run are cut into one contiguous block per rank; each rank runs its
/// block on its threads (-j, default: the CPUs mpirun lets it use) and appends each finished
/// scenario to its own checkpoint OUT.h5.partial.rank<R>. `--resume` (with any number of ranks)
/// reads every checkpoint of the output (OUT.h5.partial and OUT.h5.partial.rank*) to learn what
/// is done, and runs only the rest. At the end rank 0 writes the file's skeleton and every rank
/// writes its block of rows into it by collective writes (io/parallel_rows.hpp); rank 0 renames
/// it into place and removes the checkpoints. Rank 0 holds the output lock. Returns the exit
/// code, the same on every rank.
int run_sweep_mpi(const experiment::Study& study, const experiment::Experiment& e, const RunOptions& o,
                  const std::atomic<bool>* stop);

}  // namespace solstrata::app
