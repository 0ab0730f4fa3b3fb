#include "app/commands.hpp"

#include <cstdio>
#include <filesystem>
#include <iostream>
#include <stdexcept>

#include "app/summary_table.hpp"
#include "experiment/experiment.hpp"
#include "experiment/input_error.hpp"
#include "experiment/run.hpp"
#include "io/atomic_file.hpp"
#include "io/result_file.hpp"

namespace solstrata::app {
namespace {

constexpr const char* kRunHelp = R"(usage: solstrata run EXPERIMENT.yaml [options]

Runs the experiment: builds the optics of the atmosphere on the spectral grid, solves the
two-stream equations at every spectral point, and writes a netCDF-4/HDF5 file with level fluxes,
heating rates, transmittances and surface products. Prints a summary table.

options:
  -o, --output FILE   HDF5 file to write (default: output.file of the experiment, else
                      EXPERIMENT.h5 in the working directory)
  --csv FILE          also write a flat CSV summary (one row per band and a broadband row)
  --spectral          also write per-bin level fluxes (wavelength dimension)
  -q, --quiet         print nothing but errors
  -h, --help          show this help

The output file is written under a temporary name and renamed when complete: a failed run
leaves no file behind.
exit codes: 0 success, 1 the run failed, 2 bad input or bad usage
)";

constexpr const char* kCheckHelp = R"(usage: solstrata check EXPERIMENT.yaml

Reads and validates the experiment without running it, and prints what a run would do.
Errors name the file, line, column and key, and what was expected.

options:
  -h, --help   show this help

exit codes: 0 valid, 2 invalid (message on stderr)
)";

struct RunOptions {
  std::string experiment;  ///< path of the experiment file
  std::string output;      ///< output HDF5 path ("" = from the experiment)
  std::string csv;         ///< CSV summary path ("" = from the experiment or none)
  bool spectral = false;   ///< write per-bin fluxes
  bool quiet = false;      ///< no terminal output
};

int usage(const std::string& cmd, const std::string& msg) {
  std::cerr << "solstrata " << cmd << ": " << msg << "\nRun 'solstrata " << cmd << " --help' for usage.\n";
  return kExitBadInput;
}

/// Parses run/check arguments; returns -1 to go on, or an exit code.
int parse(const std::string& cmd, const std::vector<std::string>& args, RunOptions& o, const char* help) {
  for (std::size_t i = 0; i < args.size(); ++i) {
    const std::string& a = args[i];
    const auto next = [&](std::string& into) {
      if (i + 1 >= args.size()) return false;
      into = args[++i];
      return true;
    };
    if (a == "-h" || a == "--help") {
      std::cout << help;
      return kExitOk;
    } else if (cmd == "run" && (a == "-o" || a == "--output")) {
      if (!next(o.output)) return usage(cmd, a + " needs a file name");
    } else if (cmd == "run" && a == "--csv") {
      if (!next(o.csv)) return usage(cmd, "--csv needs a file name");
    } else if (cmd == "run" && a == "--spectral") {
      o.spectral = true;
    } else if (cmd == "run" && (a == "-q" || a == "--quiet")) {
      o.quiet = true;
    } else if (!a.empty() && a[0] == '-') {
      return usage(cmd, "unknown option '" + a + "'");
    } else if (o.experiment.empty()) {
      o.experiment = a;
    } else {
      return usage(cmd, "only one experiment file, got '" + o.experiment + "' and '" + a + "'");
    }
  }
  if (o.experiment.empty()) return usage(cmd, "missing the experiment file (EXPERIMENT.yaml)");
  return -1;
}

}  // namespace

int check_command(const std::vector<std::string>& args) {
  RunOptions o;
  if (int rc = parse("check", args, o, kCheckHelp); rc >= 0) return rc;
  try {
    const experiment::Experiment e = experiment::load_experiment(o.experiment);
    print_check_summary(std::cout, e);
    return kExitOk;
  } catch (const experiment::InputError& ex) {
    std::cerr << ex.what() << "\n";
    return kExitBadInput;
  } catch (const std::exception& ex) {
    std::cerr << o.experiment << ": error: " << ex.what() << "\n";
    return kExitBadInput;
  }
}

int run_command(const std::vector<std::string>& args) {
  RunOptions o;
  if (int rc = parse("run", args, o, kRunHelp); rc >= 0) return rc;
  experiment::Experiment e;
  try {
    e = experiment::load_experiment(o.experiment);
  } catch (const experiment::InputError& ex) {
    std::cerr << ex.what() << "\n";
    return kExitBadInput;
  } catch (const std::exception& ex) {
    std::cerr << o.experiment << ": error: " << ex.what() << "\n";
    return kExitBadInput;
  }
  if (!o.output.empty()) e.output.file = o.output;
  if (!o.csv.empty()) e.output.csv = o.csv;
  if (o.spectral) e.output.spectral = true;
  {
    const std::filesystem::path dir = std::filesystem::absolute(e.output.file).parent_path();
    std::error_code ec;
    if (!std::filesystem::is_directory(dir, ec)) {
      std::cerr << "solstrata run: output directory '" << dir.string() << "' does not exist\n";
      return kExitBadInput;
    }
  }
  experiment::RunResult r;
  try {
    r = experiment::run_experiment(e);
  } catch (const std::exception& ex) {
    std::cerr << o.experiment << ": run failed: " << ex.what() << "\n";
    return kExitRunFailed;
  }
  try {
    io::write_result_file(e.output.file, e, r);
    if (!e.output.csv.empty()) io::write_summary_csv(e.output.csv, r);
  } catch (const std::exception& ex) {
    std::cerr << "solstrata run: writing output failed: " << ex.what() << "\n";
    return kExitRunFailed;
  }
  if (!o.quiet) {
    print_run_summary(std::cout, e, r);
    std::cout << "wrote " << e.output.file.string();
    if (!e.output.csv.empty()) std::cout << " and " << e.output.csv.string();
    std::cout << "\n";
  }
  return kExitOk;
}

}  // namespace solstrata::app
