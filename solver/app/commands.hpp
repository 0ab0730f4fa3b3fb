// Subcommands of the `solstrata` command: each parses its own options and returns an exit code.
#pragma once

#include <string>
#include <vector>

namespace solstrata::app {

/// Exit codes of every subcommand (documented in README.md and --help).
enum ExitCode : int {
  kExitOk = 0,         ///< success
  kExitRunFailed = 1,  ///< the run failed (solver or output error)
  kExitBadInput = 2,   ///< bad input file, bad value or bad usage
  kExitInterrupted = 130,  ///< a sweep stopped by SIGINT/SIGTERM; resumable with --resume
};

/// `solstrata run EXP.yaml [-o OUT.h5] [--csv FILE] [--spectral] [--quiet]`
int run_command(const std::vector<std::string>& args);
/// `solstrata check EXP.yaml`
int check_command(const std::vector<std::string>& args);
/// `solstrata accuracy EXP.yaml [--streams N] [--sample K] [-o OUT.h5] [--quiet]`
int accuracy_command(const std::vector<std::string>& args);

}  // namespace solstrata::app
