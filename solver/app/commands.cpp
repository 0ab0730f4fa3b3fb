#include "app/commands.hpp"

#include <cstdio>
#include <filesystem>
#include <iostream>
#include <optional>
#include <stdexcept>

#include "app/summary_table.hpp"
#include "experiment/experiment.hpp"
#include "experiment/input_error.hpp"
#include "experiment/run.hpp"
#include "experiment/sweep.hpp"
#include "experiment/sweep_run.hpp"
#include "io/accuracy_file.hpp"
#include "io/atomic_file.hpp"
#include "io/checkpoint.hpp"
#include "io/output_lock.hpp"
#include "io/result_fields.hpp"
#include "io/result_file.hpp"
#include "io/sweep_file.hpp"

#include <atomic>
#include <chrono>
#include <csignal>
#include <cstdlib>
#include <thread>
#include <unistd.h>

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
  -j, --jobs N        worker threads for sweeps (default: the machine's cores)
  --resume            continue an interrupted sweep from its checkpoint (OUT.h5.partial)
  -q, --quiet         print nothing but errors (no progress line)
  -h, --help          show this help

The output file is written under a temporary name and renamed when complete: a failed run
leaves no file behind. A sweep records each finished scenario in OUT.h5.partial (append-only,
checksummed) as it goes; after Ctrl-C, SIGTERM or a crash, 'solstrata run EXP.yaml --resume'
continues where it stopped and ends with the same file as an uninterrupted run.
exit codes: 0 success, 1 the run failed, 2 bad input or bad usage, 130 interrupted (resumable)
)";

constexpr const char* kCheckHelp = R"(usage: solstrata check EXPERIMENT.yaml

Reads and validates the experiment (every scenario of a sweep) without running it, and prints
what a run would do: scenario count and estimated output size.
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
  bool resume = false;     ///< continue an interrupted sweep
  unsigned jobs = 0;       ///< worker threads (0 = the machine's cores)
};

std::atomic<bool> g_stop{false};
extern "C" void on_signal(int) { g_stop.store(true); }

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
    } else if (cmd == "run" && a == "--resume") {
      o.resume = true;
    } else if (cmd == "run" && (a == "-j" || a == "--jobs")) {
      std::string v;
      if (!next(v)) return usage(cmd, a + " needs a number of threads");
      try {
        std::size_t used = 0;
        const long n = std::stol(v, &used);
        if (used != v.size() || n < 1 || n > 1024) throw std::out_of_range(v);
        o.jobs = static_cast<unsigned>(n);
      } catch (...) {
        return usage(cmd, a + " " + v + ": expected a whole number of threads, 1 to 1024");
      }
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

/// Why `path` cannot be written as an output file ("" when it can): its directory must exist and
/// be writable, and the path must not name a directory.
std::string output_path_problem(const std::filesystem::path& path) {
  namespace fs = std::filesystem;
  std::error_code ec;
  const fs::path abs = fs::absolute(path, ec);
  if (fs::is_directory(abs, ec)) return "is a directory; give a file name";
  const fs::path dir = abs.parent_path();
  if (!fs::is_directory(dir, ec)) return "its directory '" + dir.string() + "' does not exist";
  if (::access(dir.c_str(), W_OK) != 0) return "its directory '" + dir.string() + "' is not writable";
  return {};
}

/// Loads and validates a study (every scenario); on bad input prints the message and sets `rc`.
std::optional<experiment::Study> load_study(const std::string& file, int& rc) {
  try {
    experiment::Study study = experiment::Study::load(file);
    study.validate_all();
    return study;
  } catch (const experiment::InputError& ex) {
    std::cerr << ex.what() << "\n";
  } catch (const std::exception& ex) {
    std::cerr << file << ": error: " << ex.what() << "\n";
  }
  rc = kExitBadInput;
  return std::nullopt;
}

/// Progress on stderr, at most five times a second, only when stderr is a terminal.
class Progress {
 public:
  Progress(std::size_t total, std::size_t already, bool enabled)
      : total_(total), done_(already), start_done_(already), enabled_(enabled && ::isatty(2)),
        t0_(std::chrono::steady_clock::now()) {}
  void step() {
    ++done_;
    if (!enabled_) return;
    const auto now = std::chrono::steady_clock::now();
    if (done_ < total_ && now - last_ < std::chrono::milliseconds(200)) return;
    last_ = now;
    const double secs = std::chrono::duration<double>(now - t0_).count();
    const double rate = secs > 0 ? double(done_ - start_done_) / secs : 0.0;
    const double left = rate > 0 ? double(total_ - done_) / rate : 0.0;
    std::fprintf(stderr, "\r%zu/%zu scenarios (%.1f%%), %.1f/s, %.0f s left   ", done_, total_,
                 100.0 * double(done_) / double(total_), rate, left);
    if (done_ == total_) std::fprintf(stderr, "\n");
  }

 private:
  std::size_t total_, done_, start_done_;
  bool enabled_;
  std::chrono::steady_clock::time_point t0_, last_{};
};

int run_sweep(const experiment::Study& study, const experiment::Experiment& e, const RunOptions& o) {
  namespace fs = std::filesystem;
  const fs::path out = e.output.file;
  const fs::path ckpt = out.string() + ".partial";
  const bool spectral = e.output.spectral;
  const std::uint64_t hash = io::experiment_hash(study.base().text, spectral);
  const std::size_t n = study.size();
  // Crash injection for tests: SIGKILL ourselves after this many appended records.
  const char* kill_env = std::getenv("SOLSTRATA_TEST_KILL_AFTER");
  const long kill_after = kill_env ? std::atol(kill_env) : -1;

  io::CheckpointContents have;
  bool resuming = false;
  std::error_code ec;
  if (fs::exists(ckpt, ec)) {
    if (!o.resume) {
      std::cerr << "solstrata run: an interrupted run left " << ckpt.string()
                << "; continue it with --resume, or delete it to start afresh\n";
      return kExitBadInput;
    }
    try {
      have = io::read_checkpoint(ckpt);
    } catch (const std::exception& ex) {
      std::cerr << "solstrata run: " << ex.what() << "\n";
      return kExitBadInput;
    }
    if (have.header.experiment_hash != hash || have.header.n_scenarios != n) {
      std::cerr << "solstrata run: cannot resume: " << ckpt.string() << " was made by a different experiment "
                << "(the experiment file or its output options changed since); delete it to start afresh\n";
      return kExitBadInput;
    }
    resuming = true;
  }
  experiment::SweepOptions opt;
  opt.threads = o.jobs ? o.jobs : std::max(1u, std::thread::hardware_concurrency());
  opt.spectral = spectral;
  opt.stop = &g_stop;
  const auto t0 = std::chrono::steady_clock::now();
  try {
    // Scenario 0 fixes the record layout; a fresh run records it first.
    const experiment::ScenarioResult templ = experiment::run_scenario(study, 0, spectral);
    const bool with_effect = study.has_aerosol();
    const std::size_t record_values = io::scenario_record(templ, with_effect).size();
    std::optional<io::CheckpointWriter> writer;
    if (resuming) {
      if (have.header.record_values != record_values) {
        std::cerr << "solstrata run: cannot resume: " << ckpt.string() << " has a different record layout\n";
        return kExitBadInput;
      }
      writer.emplace(ckpt, have.header, true, have.valid_bytes);
    } else {
      writer.emplace(ckpt, io::CheckpointHeader{hash, n, record_values}, false);
    }
    // Test hook for a full disk: the checkpoint cannot grow past this many bytes (ENOSPC).
    if (const char* limit = std::getenv("SOLSTRATA_TEST_DISK_LIMIT_BYTES")) writer->set_byte_limit(std::strtoull(limit, nullptr, 10));
    long appended = 0;
    const auto record = [&](const experiment::ScenarioResult& s) {
      writer->append(s.index, io::scenario_record(s, with_effect));
      if (kill_after >= 0 && ++appended >= kill_after) std::raise(SIGKILL);
    };
    std::vector<std::size_t> todo;
    for (std::size_t i = 0; i < n; ++i)
      if (!have.offsets.count(i)) todo.push_back(i);
    Progress progress(n, n - todo.size(), !o.quiet);
    if (!todo.empty() && todo.front() == 0) {
      record(templ);
      progress.step();
      todo.erase(todo.begin());
    }
    // Snapshots: every so often (and when interrupted) the output file is rebuilt from the
    // checkpoint, with fill values and scenario_complete = 0 for what is still to run, so finished
    // results can be looked at during a long sweep. Each snapshot replaces the file atomically.
    const char* snap_env = std::getenv("SOLSTRATA_SNAPSHOT_SECONDS");
    const double snapshot_every = snap_env ? std::atof(snap_env) : 30.0;
    auto last_snapshot = std::chrono::steady_clock::now();
    const auto snapshot = [&] {
      writer->flush();
      io::write_sweep_file(out, study, templ, ckpt, io::read_checkpoint(ckpt), true);
      last_snapshot = std::chrono::steady_clock::now();
    };
    const std::size_t finished = experiment::run_scenarios(study, todo, opt, [&](experiment::ScenarioResult&& s) {
      record(s);
      progress.step();
      if (std::chrono::duration<double>(std::chrono::steady_clock::now() - last_snapshot).count() >= snapshot_every)
        snapshot();
    });
    if (finished < todo.size()) snapshot();
    writer.reset();
    if (finished < todo.size()) {
      std::cerr << "\nsolstrata run: interrupted; " << ckpt.string() << " keeps the finished scenarios ("
                << out.string() << " shows them, with scenario_complete = 0 for the rest). "
                << "Continue with: solstrata run " << o.experiment << (o.output.empty() ? "" : " -o " + o.output)
                << (spectral && !study.base().output.spectral ? " --spectral" : "") << " --resume\n";
      return kExitInterrupted;
    }
    const io::CheckpointContents all = io::read_checkpoint(ckpt);
    io::write_sweep_file(out, study, templ, ckpt, all);
    fs::remove(ckpt, ec);
    if (!e.output.csv.empty()) io::write_sweep_summary_csv(out, e.output.csv, study);
    if (!o.quiet) {
      const double secs = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
      std::cout << "solstrata run: " << o.experiment << ": " << n << " scenarios";
      if (resuming) std::cout << " (" << have.offsets.size() << " from the checkpoint)";
      std::cout << " in " << secs << " s on " << opt.threads << " thread(s)\n";
      if (with_effect) std::cout << "aerosol radiative effects: aerosol_effect_toa/surface/atmosphere (W m-2, negative = cooling)\n";
      std::cout << "caution: " << experiment::kSolarCaution << "\n";
      std::cout << "wrote " << out.string();
      if (!e.output.csv.empty()) std::cout << " and " << e.output.csv.string();
      std::cout << "\n";
    }
    return kExitOk;
  } catch (const experiment::InputError& ex) {
    std::cerr << ex.what() << "\n";
    return kExitBadInput;
  } catch (const std::exception& ex) {
    std::cerr << o.experiment << ": sweep failed: " << ex.what() << " (finished scenarios stay in " << ckpt.string()
              << "; fix the cause and use --resume)\n";
    return kExitRunFailed;
  }
}

}  // namespace

int check_command(const std::vector<std::string>& args) {
  RunOptions o;
  if (int rc = parse("check", args, o, kCheckHelp); rc >= 0) return rc;
  int rc = kExitOk;
  const std::optional<experiment::Study> loaded = load_study(o.experiment, rc);
  if (!loaded) return rc;
  const experiment::Study& study = *loaded;
  try {
    const experiment::RunResult probe = experiment::run_scenario(study, 0, study.base().output.spectral).result;
    std::size_t values = 0;
    for (const io::Field& f : io::result_fields(probe)) values += f.per_scenario ? f.values.size() * study.size() : f.values.size();
    print_check_summary(std::cout, study.base());
    std::cout << "  scenarios:   " << study.size();
    if (!study.plan().axes.empty()) {
      std::cout << " (" << (study.plan().from_list ? "list" : "grid");
      for (std::size_t a = 0; a < study.plan().axes.size(); ++a) std::cout << (a ? " x " : " ") << study.plan().axes[a].size();
      std::cout << ")";
    }
    std::cout << "\n  est. output: " << (values * 8 + 65536) / 1024 << " KiB\n";
    return kExitOk;
  } catch (const std::exception& ex) {
    std::cerr << o.experiment << ": error: " << ex.what() << "\n";
    return kExitBadInput;
  }
}

int run_command(const std::vector<std::string>& args) {
  RunOptions o;
  if (int rc = parse("run", args, o, kRunHelp); rc >= 0) return rc;
  // Ctrl-C / SIGTERM from here on stop a sweep cleanly (finished scenarios are kept).
  g_stop.store(false);
  std::signal(SIGINT, on_signal);
  std::signal(SIGTERM, on_signal);
  int rc = kExitOk;
  const std::optional<experiment::Study> study = load_study(o.experiment, rc);
  if (!study) return rc;
  experiment::Experiment e = study->base();
  if (!o.output.empty()) e.output.file = o.output;
  if (!o.csv.empty()) e.output.csv = o.csv;
  if (o.spectral) e.output.spectral = true;
  // Every output path is checked before the first solve: a bad one fails at once, not after the work.
  struct OutputPath {
    const std::filesystem::path& path;
    const char* what;
    bool from_file;  // written in the experiment file (not on the command line)
    experiment::SourceMark mark;
    const char* key;
  };
  for (const OutputPath& p : {OutputPath{e.output.file, "output file", o.output.empty(), e.output.file_mark, "output.file"},
                              OutputPath{e.output.csv, "CSV file", o.csv.empty(), e.output.csv_mark, "output.csv"}}) {
    if (p.path.empty()) continue;
    if (const std::string m = output_path_problem(p.path); !m.empty()) {
      if (p.from_file && p.mark.known()) {
        // Named where the experiment file gives it: file, line and key.
        std::cerr << experiment::InputError(o.experiment, p.mark, p.key, p.what + std::string(" '") + p.path.string() + "': " + m).what()
                  << "\n";
      } else {
        std::cerr << "solstrata run: " << p.what << " '" << p.path.string() << "': " << m << "\n";
      }
      return kExitBadInput;
    }
  }
  // One run per output file at a time: a second run on the same file refuses before any work.
  std::optional<io::OutputLock> lock;
  try {
    lock.emplace(e.output.file);
    // Left by a killed run (of the output file and of a sweep's checkpoint); nobody else writes them now.
    io::remove_stale_temporaries(e.output.file);
    io::remove_stale_temporaries(e.output.file.string() + ".partial");
  } catch (const std::exception& ex) {
    std::cerr << "solstrata run: " << ex.what() << "\n";
    return kExitBadInput;
  }
  if (!study->plan().axes.empty()) return run_sweep(*study, e, o);
  // A single run is short and leaves nothing to resume: signals act as usual again.
  std::signal(SIGINT, SIG_DFL);
  std::signal(SIGTERM, SIG_DFL);
  if (g_stop.load()) return kExitInterrupted;
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

namespace {

constexpr const char* kAccuracyHelp = R"(usage: solstrata accuracy EXPERIMENT.yaml [options]

Runs the experiment twice - with its two-stream closure and with the exact multi-stream reference
(discrete ordinates, Henyey-Greenstein phase function, delta-M) - and reports how far the fast
answer is from the exact one for your atmosphere: per band and broadband, the difference of the
direct, diffuse, upward and net flux at the top and at the surface (W m-2 and percent), the
largest difference over all levels, and the heating-rate difference. For a sweep, a deterministic
sample of scenarios (evenly spaced over the scenario index) is compared.

options:
  --streams N       total number of reference streams (both hemispheres: N/2 directions each),
                    even, 4 to 64 (default 16; 32 for tighter checks)
  --sample K        scenarios of a sweep to compare (default 5)
  -o, --output FILE also write the full comparison (per band and level) as HDF5
  -q, --quiet       no table
  -h, --help        show this help

exit codes: 0 success, 1 the run failed, 2 bad input or bad usage
)";

}  // namespace

int accuracy_command(const std::vector<std::string>& args) {
  std::string file, out;
  int streams = 16;
  std::size_t sample = 5;
  bool quiet = false;
  for (std::size_t i = 0; i < args.size(); ++i) {
    const std::string& a = args[i];
    const auto number = [&](long lo, long hi, long& v) {
      if (i + 1 >= args.size()) return false;
      try {
        std::size_t used = 0;
        v = std::stol(args[i + 1], &used);
        ++i;
        return used == args[i].size() && v >= lo && v <= hi;
      } catch (...) {
        return false;
      }
    };
    long v = 0;
    if (a == "-h" || a == "--help") {
      std::cout << kAccuracyHelp;
      return kExitOk;
    } else if (a == "--streams") {
      if (!number(4, 64, v) || v % 2) return usage("accuracy", "--streams needs an even number from 4 to 64");
      streams = static_cast<int>(v);
    } else if (a == "--sample") {
      if (!number(1, 100000, v)) return usage("accuracy", "--sample needs a whole number from 1 to 100000");
      sample = static_cast<std::size_t>(v);
    } else if (a == "-o" || a == "--output") {
      if (i + 1 >= args.size()) return usage("accuracy", a + " needs a file name");
      out = args[++i];
    } else if (a == "-q" || a == "--quiet") {
      quiet = true;
    } else if (!a.empty() && a[0] == '-') {
      return usage("accuracy", "unknown option '" + a + "'");
    } else if (file.empty()) {
      file = a;
    } else {
      return usage("accuracy", "only one experiment file");
    }
  }
  if (file.empty()) return usage("accuracy", "missing the experiment file (EXPERIMENT.yaml)");
  int rc = kExitOk;
  const std::optional<experiment::Study> study = load_study(file, rc);
  if (!study) return rc;
  const std::size_t n = study->size();
  const std::size_t k = std::min(sample, n);
  std::vector<std::size_t> picks;
  for (std::size_t j = 0; j < k; ++j) {
    const std::size_t idx = k == 1 ? 0 : (j * (n - 1) + (k - 1) / 2) / (k - 1);
    if (picks.empty() || picks.back() != idx) picks.push_back(idx);
  }
  std::vector<io::AccuracyCase> cases;
  try {
    for (std::size_t idx : picks) {
      experiment::Experiment e = study->scenario(idx);
      e.reference_solver = false;
      io::AccuracyCase c;
      c.scenario = idx;
      c.two_stream = experiment::run_experiment(e);
      e.reference_solver = true;
      e.reference_streams = streams;
      c.reference = experiment::run_experiment(e);
      cases.push_back(std::move(c));
    }
    if (!out.empty()) io::write_accuracy_file(out, study->base(), cases, streams);
  } catch (const std::exception& ex) {
    std::cerr << file << ": accuracy run failed: " << ex.what() << "\n";
    return kExitRunFailed;
  }
  if (!quiet) {
    std::cout << "solstrata accuracy: " << file << ": " << cases.front().two_stream.closure << " against the "
              << streams << "-stream reference, " << cases.size() << " scenario(s)\n";
    for (const io::AccuracyCase& c : cases) {
      const experiment::RunResult& a = c.two_stream;
      const std::size_t nlev = a.n_levels, s = nlev - 1;
      std::cout << "\nscenario " << c.scenario;
      if (!study->plan().axes.empty()) {
        std::cout << " (";
        bool first = true;
        for (const auto& [path, value] : study->plan().assignment(c.scenario)) {
          std::cout << (first ? "" : ", ") << path << " = " << value;
          first = false;
        }
        std::cout << ")";
      }
      std::cout << "\n";
      char line[200];
      std::snprintf(line, sizeof line, "%-12s %-13s %10s %10s %9s %8s %11s\n", "band", "flux", "reference",
                    "surface", "surface", "TOA", "max |diff|");
      std::cout << line;
      std::snprintf(line, sizeof line, "%-12s %-13s %10s %10s %9s %8s %11s\n", "", "", "sfc W m-2", "diff W m-2",
                    "diff %", "diff", "all levels");
      std::cout << line;
      std::vector<std::string> names = a.band_names;
      names.push_back("broadband");
      for (const char* q : {"direct_down", "diffuse_down", "up", "net_down"}) {
        const std::vector<double> ta = experiment::band_and_broadband(a, q), tr = experiment::band_and_broadband(c.reference, q);
        for (std::size_t b = 0; b < names.size(); ++b) {
          if (b + 1 < names.size() && std::string(q) != "diffuse_down") continue;  // per band: diffuse only
          double worst = 0;
          for (std::size_t l = 0; l < nlev; ++l) worst = std::max(worst, std::abs(ta[b * nlev + l] - tr[b * nlev + l]));
          const double ref = tr[b * nlev + s], d = ta[b * nlev + s] - ref;
          std::snprintf(line, sizeof line, "%-12s %-13s %10.2f %+10.2f %+8.2f%% %+8.2f %11.2f\n",
                        names[b].substr(0, 12).c_str(), q, ref, d, std::abs(ref) > 1e-9 ? 100 * d / ref : 0.0,
                        ta[b * nlev] - tr[b * nlev], worst);
          std::cout << line;
        }
      }
      if (!a.heating_rate.empty()) {
        double worst = 0;
        std::size_t at = 0;
        for (std::size_t l = 0; l < a.n_layers; ++l) {
          const double d = std::abs(a.heating_rate[l] - c.reference.heating_rate[l]);
          if (d > worst) worst = d, at = l;
        }
        std::cout << "heating rate: largest difference " << worst << " K/day (layer " << at << ")\n";
      }
    }
    std::cout << "\ndirect flux differences are 0 by construction: both solvers use the same unscaled beam.\n";
    if (!out.empty()) std::cout << "wrote " << out << "\n";
  }
  return kExitOk;
}

}  // namespace solstrata::app
