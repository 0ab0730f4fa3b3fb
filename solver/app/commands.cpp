#include "app/commands.hpp"

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <iostream>
#include <optional>
#include <stdexcept>

#include "app/summary_table.hpp"
#include "experiment/experiment.hpp"
#include "experiment/input_error.hpp"
#include "experiment/output_variables.hpp"
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
#if SOLSTRATA_MPI
#include "app/mpi_run.hpp"
#endif

#include <atomic>
#include <chrono>
#include <csignal>
#include <cstdlib>
#include <thread>
#include <unistd.h>

namespace solstrata::app {
namespace {

std::atomic<bool> g_stop{false};
extern "C" void on_signal(int) { g_stop.store(true); }


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

/// Progress on stderr, at most five times a second, only when stderr is a terminal (or when
/// SOLSTRATA_PROGRESS=1, for tests). The rate counts the scenarios finished since `start`, the time
/// the work on them began (not when the first result arrived, which would make the first rate
/// one over almost nothing); it is shown once a scenario has finished.
class Progress {
 public:
  Progress(std::size_t total, std::size_t already, bool enabled,
           std::chrono::steady_clock::time_point start = std::chrono::steady_clock::now())
      : total_(total), done_(already), start_done_(already), enabled_(enabled && shown()), t0_(start) {}
  void step() {
    ++done_;
    if (!enabled_) return;
    const auto now = std::chrono::steady_clock::now();
    if (done_ < total_ && now - last_ < std::chrono::milliseconds(200)) return;
    last_ = now;
    const double secs = std::chrono::duration<double>(now - t0_).count();
    const double rate = secs > 0 ? double(done_ - start_done_) / secs : 0.0;
    const double left = rate > 0 ? double(total_ - done_) / rate : 0.0;
    std::fprintf(stderr, "\r%zu/%zu scenarios (%.1f%%), %.3g/s, %.0f s left   ", done_, total_,
                 100.0 * double(done_) / double(total_), rate, left);
    if (done_ == total_) std::fprintf(stderr, "\n");
  }

 private:
  static bool shown() {
    const char* force = std::getenv("SOLSTRATA_PROGRESS");
    return (force && std::string(force) == "1") || ::isatty(2);
  }
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
    opt.cases_per_call = experiment::cases_per_call_for(templ.result.n_points);
    const bool with_effect = study.computes_aerosol_effect();
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
    // Scenario 0 (templ) was solved from t0 on: its time counts in the first rate.
    Progress progress(n, n - todo.size(), !o.quiet, t0);
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
    // A snapshot of a large sweep takes a while itself: the next one waits at least ten times as
    // long as the last took, so that snapshots never cost more than a tenth of the run.
    double snapshot_gap = snapshot_every;
    const auto snapshot = [&] {
      const auto t_start = std::chrono::steady_clock::now();
      writer->flush();
      io::write_sweep_file(out, study, templ, ckpt, io::read_checkpoint(ckpt), true);
      last_snapshot = std::chrono::steady_clock::now();
      snapshot_gap = snapshot_every <= 0.0 ? 0.0 : std::max(snapshot_every, 10.0 * std::chrono::duration<double>(last_snapshot - t_start).count());
    };
    const std::size_t finished = experiment::run_scenarios(study, todo, opt, [&](experiment::ScenarioResult&& s) {
      record(s);
      progress.step();
      if (std::chrono::duration<double>(std::chrono::steady_clock::now() - last_snapshot).count() >= snapshot_gap)
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
    // The checkpoint goes only once every file is written: a failed CSV can still be resumed.
    if (!e.output.csv.empty()) io::write_sweep_summary_csv(out, e.output.csv, study);
    fs::remove(ckpt, ec);
    if (!o.quiet) {
      const double secs = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
      std::cout << "solstrata run: " << o.experiment << ": " << n << (study.is_time_series() ? " cases" : " scenarios");
      if (resuming) std::cout << " (" << have.offsets.size() << " from the checkpoint)";
      std::cout << " in " << secs << " s on " << opt.threads << " thread(s)\n";
      print_study_outputs(std::cout, out, study, e, with_effect);
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

int check_command(const RunOptions& o) {
  int rc = kExitOk;
  const std::optional<experiment::Study> loaded = load_study(o.experiment, rc);
  if (!loaded) return rc;
  const experiment::Study& study = *loaded;
  try {
    const experiment::RunResult probe = experiment::run_scenario(study, 0, study.base().output.spectral).result;
    std::size_t values = 0;
    for (const io::Field& f : io::result_fields(probe)) {
      if (!experiment::output_selected(study.base().output.variables, f.name)) continue;
      values += f.per_scenario ? f.values.size() * study.size() : f.values.size();
    }
    print_check_summary(std::cout, study.base());
    std::cout << "  scenarios:   " << study.size();
    if (study.is_time_series()) {
      std::cout << " (" << study.plan().time.n_steps << " steps + " << study.plan().time.n_nodes()
                << " daily-total quadrature points)";
    }
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

int run_command(const RunOptions& o) {
#if SOLSTRATA_MPI
  // Every rank reads and checks the same inputs; only rank 0 reports what they all find.
  const MpiSession mpi;
  std::streambuf* const cerr_buffer = std::cerr.rdbuf();
  if (mpi.rank() != 0) std::cerr.rdbuf(nullptr);
  struct RestoreCerr {
    std::streambuf* buffer;
    ~RestoreCerr() {
      std::cerr.rdbuf(buffer);
      std::cerr.clear();
    }
  } restore_cerr{cerr_buffer};
#endif
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
  if (e.output.spectral && e.given_optics_mode) {
    // Given optics are solved per band: there are no wavelength bins to write.
    std::cerr << "solstrata run: note: " << (o.spectral ? "--spectral" : "output.spectral")
              << " has no effect with given_optics (the bands are solved as given; there are no wavelength bins); "
                 "the file holds the band fluxes\n";
  }
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
  // A sweep appends to the checkpoint of an interrupted run (--resume): it must be writable too.
  if (!study->plan().axes.empty() || study->is_time_series()) {
    const std::filesystem::path ckpt = e.output.file.string() + ".partial";
    std::error_code ec;
    if (std::filesystem::exists(ckpt, ec) && ::access(ckpt.c_str(), R_OK | W_OK) != 0) {
      std::cerr << "solstrata run: checkpoint '" << ckpt.string() << "' is not writable (or not readable): "
                << std::strerror(errno) << "\n";
      return kExitBadInput;
    }
  }
#if SOLSTRATA_MPI
  std::cerr.rdbuf(cerr_buffer);
  std::cerr.clear();
  if (!study->plan().axes.empty() || study->is_time_series()) return run_sweep_mpi(*study, e, o, &g_stop);
  // One scenario: rank 0 runs it, the others have nothing to do.
  if (mpi.rank() != 0) return kExitOk;
#endif
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
  if (!study->plan().axes.empty() || study->is_time_series()) return run_sweep(*study, e, o);
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

int accuracy_command(const AccuracyOptions& o) {
  const std::string& file = o.experiment;
  const std::string& out = o.output;
  const int streams = o.streams;
  const std::size_t sample = o.sample;
  const unsigned jobs = o.jobs;
  const bool quiet = o.quiet;
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
  // The picked scenarios on the sweep's thread pool; each case lands in its own slot, so the
  // comparison is the same with any number of threads.
  std::vector<io::AccuracyCase> cases(picks.size());
  try {
    const auto t0 = std::chrono::steady_clock::now();
    Progress progress(picks.size(), 0, !quiet, t0);
    const unsigned threads = jobs ? jobs : std::max(1u, std::thread::hardware_concurrency());
    experiment::run_parallel(
        picks.size(), threads, nullptr,
        [&](std::size_t slot) {
          // The case with the experiment's closure and with the reference: one engine call
          // (each solver gets its own kernel call inside it).
          experiment::Experiment two = study->scenario(picks[slot]);
          two.reference_solver = false;
          experiment::Experiment ref = two;
          ref.reference_solver = true;
          ref.reference_streams = streams;
          const experiment::Experiment* both[] = {&two, &ref};
          std::vector<experiment::RunResult> r = experiment::run_experiments(both);
          io::AccuracyCase& c = cases[slot];
          c.scenario = picks[slot];
          c.two_stream = std::move(r[0]);
          c.reference = std::move(r[1]);
        },
        [&](std::size_t) { progress.step(); });
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
