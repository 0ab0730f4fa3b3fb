// Faults around a run: output directories that cannot take the file, two runs on one output
// file, a disk that fills while the sweep checkpoint grows, and kill -9 at random moments of a
// sweep. The expected behaviour is the contract of DEVELOPERS.md ("Sweeps, checkpoints and
// resume") and RULES.md (bad input: exit 2, nothing left behind): a resumed sweep ends with the
// same file, bit for bit, as one clean run.
#include <catch2/catch.hpp>

#include <signal.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <random>
#include <sstream>
#include <string>
#include <thread>
#include <variant>

#include "io/hdf5_reader.hpp"
#include "support/app_support.hpp"
#include "io/output_lock.hpp"
#include "support/temp_dir.hpp"

namespace fs = std::filesystem;
using solstrata::testing::TempDir;

using solstrata::testing::same_content;
using solstrata::testing::slurp;

namespace {

struct Outcome {
  int code = -1;  // exit code; -1 when killed by a signal
  std::string err;
};


std::string command(const fs::path& dir, const std::string& args, const std::string& env) {
  return "cd '" + dir.string() + "' && " + env + " exec '" + SOLSTRATA_BINARY + "' " + args + " > /dev/null 2> '" +
         (dir.parent_path() / (dir.filename().string() + ".stderr")).string() + "'";
}

Outcome sh(const fs::path& dir, const std::string& args, const std::string& env = "") {
  const int status = std::system(command(dir, args, env).c_str());
  const fs::path err = dir.parent_path() / (dir.filename().string() + ".stderr");
  Outcome o{WIFEXITED(status) ? WEXITSTATUS(status) : -1, slurp(err)};
  fs::remove(err);
  return o;
}

/// Starts `solstrata ARGS` in `dir` without waiting (the shell execs into it: the pid is
/// solstrata's own).
pid_t start(const fs::path& dir, const std::string& args, const std::string& env = "") {
  const std::string cmd = command(dir, args, env);
  const pid_t pid = ::fork();
  if (pid == 0) {
    ::execl("/bin/sh", "sh", "-c", cmd.c_str(), static_cast<char*>(nullptr));
    ::_exit(127);
  }
  return pid;
}

/// Exit code of a started process, -1 when a signal ended it.
int finish(pid_t pid) {
  int status = 0;
  ::waitpid(pid, &status, 0);
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

/// A sweep of 240 small scenarios (a few tenths of a second in a Release build).
const std::string kSweep = solstrata::testing::kSmallColumn + R"(sweep:
  grid:
    - {parameter: aerosol.optical_depth, range: {from: 0.05, to: 1.5, count: 30}}
    - {parameter: sun.solar_zenith_deg, values: [0, 30, 50, 70]}
  zip:
    - {parameter: aerosol.single_scattering_albedo, values: [0.85, 0.95]}
    - {parameter: surface.albedo, values: [0.1, 0.4]}
)";


/// Names in `dir` other than the experiment.
std::vector<std::string> outputs(const fs::path& dir) {
  std::vector<std::string> v;
  for (const auto& e : fs::directory_iterator(dir))
    if (e.path().filename() != "sweep.yaml") v.push_back(e.path().filename().string());
  return v;
}

/// Doubles per record of a checkpoint, from its header (magic[16], hash, scenarios, values).
std::uint64_t record_values(const fs::path& partial) {
  std::ifstream in(partial, std::ios::binary);
  std::uint64_t h[4] = {0, 0, 0, 0};
  in.read(reinterpret_cast<char*>(h), sizeof h);
  std::uint64_t v = 0;
  in.read(reinterpret_cast<char*>(&v), sizeof v);
  return v;
}

}  // namespace

TEST_CASE("an output directory that is missing fails before any work", "[app][faults]") {
  TempDir dir("faults_dirs");
  std::ofstream(dir / "sweep.yaml") << kSweep;
  for (const char* out : {"missing/out.h5", "missing/deeper/out.h5"}) {
    const Outcome o = sh(dir.path(), std::string("run sweep.yaml -q -o ") + out);
    INFO(o.err);
    CHECK(o.code == 2);
    CHECK(o.err.find("does not exist") != std::string::npos);
    CHECK(o.err.find(out) != std::string::npos);
  }
  CHECK(outputs(dir.path()).empty());  // no checkpoint, no lock, no temporary file
  // A read-only directory (which does not stop root): tests/app/os_fault_test.cpp, run as an
  // unprivileged user.
}

TEST_CASE("a second run on the same output file refuses while the first is writing", "[app][faults]") {
  TempDir dir("faults_lock");
  std::ofstream(dir / "sweep.yaml") << kSweep;
  REQUIRE(sh(dir.path(), "run sweep.yaml -q -j 1 -o clean.h5").code == 0);
  CHECK_FALSE(fs::exists(dir / "clean.h5.lock"));  // a finished run removes its lock file
  {
    // This process holds the lock: a run refuses before any work and leaves nothing behind.
    const solstrata::io::OutputLock held(dir / "out.h5");
    const Outcome o = sh(dir.path(), "run sweep.yaml -q -o out.h5");
    INFO(o.err);
    CHECK(o.code == 2);
    CHECK(o.err.find("another solstrata run (process " + std::to_string(::getpid()) + ")") != std::string::npos);
    CHECK_FALSE(fs::exists(dir / "out.h5.partial"));
  }
  // A real first run, frozen (SIGSTOP) once its checkpoint exists, so that it is surely still
  // running while the second and third try.
  const pid_t first = start(dir.path(), "run sweep.yaml -q -j 1 -o out.h5");
  for (int i = 0; i < 20000 && !fs::exists(dir / "out.h5.partial"); ++i)
    std::this_thread::sleep_for(std::chrono::microseconds(500));
  ::kill(first, SIGSTOP);
  int status = 0;
  const bool still_running = ::waitpid(first, &status, WNOHANG) == 0;
  REQUIRE(still_running);
  const auto partial_before = fs::file_size(dir / "out.h5.partial");
  for (const char* args : {"run sweep.yaml -q -o out.h5", "run sweep.yaml -q -o out.h5 --resume"}) {
    const Outcome second = sh(dir.path(), args);
    INFO(args << "\n" << second.err);
    CHECK(second.code == 2);
    CHECK(second.err.find("another solstrata run") != std::string::npos);
    CHECK(second.err.find("out.h5") != std::string::npos);
  }
  CHECK(fs::file_size(dir / "out.h5.partial") == partial_before);  // the refused runs wrote nothing
  ::kill(first, SIGCONT);
  REQUIRE(finish(first) == 0);
  CHECK_FALSE(fs::exists(dir / "out.h5.lock"));
  same_content(dir / "clean.h5", dir / "out.h5");
}

TEST_CASE("a disk that fills during a sweep: exit 1, no complete-looking file, resume finishes", "[app][faults]") {
  TempDir dir("faults_full");
  std::ofstream(dir / "sweep.yaml") << kSweep;
  REQUIRE(sh(dir.path(), "run sweep.yaml -q -o clean.h5").code == 0);
  // Test hook: the checkpoint cannot grow past N bytes, as on a full disk (ENOSPC). First room
  // for the header only, to learn the record length from it.
  const std::uint64_t header = 16 + 3 * 8;
  Outcome o = sh(dir.path(), "run sweep.yaml -q -o out.h5", "SOLSTRATA_TEST_DISK_LIMIT_BYTES=" + std::to_string(header));
  INFO(o.err);
  CHECK(o.code == 1);
  const std::uint64_t record = 8 + 8 * record_values(dir / "out.h5.partial") + 8;
  REQUIRE(record > 16);
  fs::remove(dir / "out.h5.partial");
  // Then room for 5.5 records: the sixth is torn, as a full disk leaves it.
  const std::uint64_t limit = header + 5 * record + record / 2;
  o = sh(dir.path(), "run sweep.yaml -q -j 2 -o out.h5", "SOLSTRATA_TEST_DISK_LIMIT_BYTES=" + std::to_string(limit));
  CHECK(o.code == 1);
  CHECK(o.err.find("No space left on device") != std::string::npos);
  CHECK(o.err.find("--resume") != std::string::npos);
  CHECK(fs::file_size(dir / "out.h5.partial") == limit);
  // Nothing that looks complete: no output file, no temporary, no lock.
  CHECK_FALSE(fs::exists(dir / "out.h5"));
  for (const std::string& n : outputs(dir.path())) {
    INFO(n);
    CHECK((n == "clean.h5" || n == "out.h5.partial"));
  }
  // Space freed: --resume drops the torn record and finishes with the clean run's data.
  o = sh(dir.path(), "run sweep.yaml -q -j 2 -o out.h5 --resume");
  INFO(o.err);
  REQUIRE(o.code == 0);
  CHECK_FALSE(fs::exists(dir / "out.h5.partial"));
  same_content(dir / "clean.h5", dir / "out.h5");
}

TEST_CASE("kill -9 at random moments of a sweep, resumed after each, gives the clean run's file", "[app][faults]") {
  // SOLSTRATA_KILL_COUNT (default 3) kills at moments drawn uniformly over the length of a clean
  // run (seed SOLSTRATA_KILL_SEED, default 1, so a failure can be replayed).
  const char* count_env = std::getenv("SOLSTRATA_KILL_COUNT");
  const char* seed_env = std::getenv("SOLSTRATA_KILL_SEED");
  const int kills = count_env ? std::atoi(count_env) : 3;
  std::mt19937 rng(seed_env ? static_cast<unsigned>(std::atoi(seed_env)) : 1u);
  TempDir dir("faults_kill");
  std::ofstream(dir / "sweep.yaml") << kSweep;
  const auto t0 = std::chrono::steady_clock::now();
  REQUIRE(sh(dir.path(), "run sweep.yaml -q -j 2 -o clean.h5").code == 0);
  const double clean_ms = std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - t0).count();
  std::uniform_real_distribution<double> when(0.0, clean_ms);
  int landed = 0;  // kills that hit a running process (not one that had already finished)
  for (int k = 0; k < kills; ++k) {
    // Snapshots every 50 ms: kills also land while the HDF5 snapshot is being written.
    const bool resume = fs::exists(dir / "out.h5.partial");
    const pid_t pid = start(dir.path(), std::string("run sweep.yaml -q -j 2 -o out.h5") + (resume ? " --resume" : ""),
                            "SOLSTRATA_SNAPSHOT_SECONDS=0.05");
    std::this_thread::sleep_for(std::chrono::duration<double, std::milli>(when(rng)));
    ::kill(pid, SIGKILL);
    const int code = finish(pid);
    if (code == -1) ++landed;
    else CHECK(code == 0);  // finished before the kill
    if (code == 0) fs::remove(dir / "out.h5");  // start over: the next kill needs a run to hit
  }
  CHECK(landed >= 1);
  if (count_env) WARN(landed << " of " << kills << " kills hit a running sweep (clean run " << clean_ms << " ms)");
  const bool resume = fs::exists(dir / "out.h5.partial");
  const Outcome o = sh(dir.path(), std::string("run sweep.yaml -q -j 2 -o out.h5") + (resume ? " --resume" : ""));
  INFO(o.err);
  REQUIRE(o.code == 0);
  CHECK_FALSE(fs::exists(dir / "out.h5.partial"));
  CHECK_FALSE(fs::exists(dir / "out.h5.lock"));
  for (const std::string& n : outputs(dir.path())) {  // no temporary of a killed run is left
    INFO(n);
    CHECK((n == "clean.h5" || n == "out.h5"));
  }
  same_content(dir / "clean.h5", dir / "out.h5");
}
