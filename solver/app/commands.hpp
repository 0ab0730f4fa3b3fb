// Subcommands of the `solstrata` command. Each takes its parsed options (the command line is read
// in app/main.cpp, the only place that knows CLI11) and returns an exit code.
#pragma once

#include <cstddef>
#include <string>

namespace solstrata::app {

/// Exit codes of every subcommand (documented in README.md and --help).
enum ExitCode : int {
  kExitOk = 0,         ///< success
  kExitRunFailed = 1,  ///< the run failed (solver or output error)
  kExitBadInput = 2,   ///< bad input file, bad value or bad usage
  kExitInterrupted = 130,  ///< a sweep stopped by SIGINT/SIGTERM; resumable with --resume
};

/// Options of `solstrata run` (and, for `experiment`, of `solstrata check`).
struct RunOptions {
  std::string experiment;  ///< path of the experiment file
  std::string output;      ///< output HDF5 path ("" = from the experiment)
  std::string csv;         ///< CSV summary path ("" = from the experiment or none)
  bool spectral = false;   ///< write per-bin fluxes
  bool quiet = false;      ///< no terminal output
  bool resume = false;     ///< continue an interrupted sweep
  unsigned jobs = 0;       ///< worker threads (0 = the machine's cores)
};

/// Options of `solstrata accuracy`.
struct AccuracyOptions {
  std::string experiment;   ///< path of the experiment file
  std::string output;       ///< HDF5 file of the full comparison ("" = none)
  int streams = 16;         ///< total number of reference streams (both hemispheres), even, 4 to 64
  std::size_t sample = 5;   ///< scenarios of a sweep to compare, >= 1
  unsigned jobs = 0;        ///< worker threads (0 = the machine's cores); results do not depend on it
  bool quiet = false;       ///< no table
};

/// `solstrata run EXP.yaml [-o OUT.h5] [--csv FILE] [--spectral] [-j N] [--resume] [--quiet]`
int run_command(const RunOptions& options);
/// `solstrata check EXP.yaml`
int check_command(const RunOptions& options);
/// `solstrata accuracy EXP.yaml [--streams N] [--sample K] [-j N] [-o OUT.h5] [--quiet]`
int accuracy_command(const AccuracyOptions& options);

}  // namespace solstrata::app
