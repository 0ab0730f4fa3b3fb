// Faults that the operating system itself makes, not a test hook: a file-size limit
// (RLIMIT_FSIZE, as a full disk or quota refuses writes: write(2) fails with EFBIG once SIGXFSZ is
// ignored) that stops every kind of output file in the middle, and permission bits that refuse an
// output directory, a checkpoint or an input file. The expected behaviour is the contract of
// RULES.md ("Errors": bad input exit 2 with the file named, no partial or corrupt output file)
// and DEVELOPERS.md ("Sweeps, checkpoints and resume": a failed run exits 1, keeps its
// checkpoint, and --resume then gives the clean run's file). The independent path is the clean
// run of the same experiment: a resumed run must give the same values, bit for bit.
//
// Permissions do not stop root. When the tests run as root (as in CI) the command runs as the
// unprivileged user 65534 (setpriv, util-linux), from a copy of the binary and of its data in a
// fresh 0755 directory, so that the build tree's own permissions do not matter.
#include <catch2/catch.hpp>

#include <sys/stat.h>
#include <unistd.h>

#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "support/app_support.hpp"
#include "support/temp_dir.hpp"

namespace fs = std::filesystem;
using solstrata::testing::have_program;
using solstrata::testing::same_content;
using solstrata::testing::slurp;
using solstrata::testing::TempDir;

namespace {

struct Outcome {
  int code = -1;  // exit code; -1 when a signal ended the process
  std::string err;
};

/// How a command is started: shell commands before it, environment assignments, and a program
/// that runs it (e.g. prlimit); the shell execs, so a signal that ends solstrata is seen as such.
struct Launch {
  std::string shell, env, wrapper;
};

/// Runs solstrata ARGS in `dir` (stdout discarded, stderr kept outside `dir`).
Outcome run_in(const fs::path& dir, const std::string& args, const Launch& how = {},
               const std::string& binary = SOLSTRATA_BINARY) {
  const fs::path err = dir.parent_path() / (dir.filename().string() + ".stderr");
  const std::string cmd = "cd '" + dir.string() + "' && " + how.shell + " " + how.env + " exec " + how.wrapper + " '" +
                          binary + "' " + args + " > /dev/null 2> '" + err.string() + "'";
  const int status = std::system(cmd.c_str());
  Outcome o{WIFEXITED(status) ? WEXITSTATUS(status) : -1, slurp(err)};
  fs::remove(err);
  return o;
}

/// Runs a command with files limited to `bytes` (RLIMIT_FSIZE): SIGXFSZ ignored (an ignored
/// disposition survives exec), so a write past the limit fails with EFBIG instead of killing.
Launch size_limit(std::uintmax_t bytes) { return {"trap '' XFSZ &&", "", "prlimit --fsize=" + std::to_string(bytes)}; }

/// Runs a command with the test hook that SIGKILLs it after `records` checkpoint appends.
Launch kill_after(std::uint64_t records) { return {"", "SOLSTRATA_TEST_KILL_AFTER=" + std::to_string(records), ""}; }

/// A sweep of 24 scenarios on a small grid (a few hundredths of a second each).
const std::string kSweep = solstrata::testing::kSmallColumn + R"(sweep:
  grid:
    - {parameter: aerosol.optical_depth, values: [0.05, 0.2, 0.5, 1.0, 1.5, 2.0]}
    - {parameter: sun.solar_zenith_deg, values: [0, 30, 50, 70]}
)";

/// One scenario on the same grid.
const std::string kSingle = solstrata::testing::kSmallColumn;

/// A day of hourly steps at an invented site, with daily totals.
const std::string kSeries = R"(site: {latitude_deg: 47.3, longitude_deg: 8.6}
times: {start: "2026-06-15T00:00:00+02:00", end: "2026-06-15T23:00:00+02:00", step_minutes: 60}
)" + solstrata::testing::kSeriesColumn;

/// Names in `dir` other than the experiment.
std::vector<std::string> outputs(const fs::path& dir) {
  std::vector<std::string> v;
  for (const auto& e : fs::directory_iterator(dir))
    if (e.path().filename() != "exp.yaml") v.push_back(e.path().filename().string());
  return v;
}

/// Scenario count and doubles per record, from a checkpoint's header (magic[16], hash,
/// scenarios, values: io/checkpoint.cpp).
std::pair<std::uint64_t, std::uint64_t> checkpoint_shape(const fs::path& partial) {
  std::ifstream in(partial, std::ios::binary);
  std::uint64_t h[5] = {0, 0, 0, 0, 0};
  in.read(reinterpret_cast<char*>(h), sizeof h);
  return {h[3], h[4]};
}

/// Where the file-size limit falls.
enum class Limit {
  kHalfOutput,      // half of the clean run's HDF5 file
  kHalfCheckpoint,  // half of the complete checkpoint
};

/// One file-size-limit case (see the test cases below).
struct LimitCase {
  const char* name;
  const std::string* experiment;
  std::string extra;        // options beyond "-q -o out.h5"
  bool resume_from_full;    // every case already in the checkpoint: only the final files are written
  Limit limit;
  std::string named;        // the file the message must name, followed by ": "
};

/// Runs the case: a clean run, then the run under the limit (exit 1, the file named, nothing
/// complete-looking left), then for a sweep or series --resume without the limit, whose file
/// must hold the clean run's values.
void check_size_limit(const LimitCase& c) {
  INFO(c.name);
  TempDir dir("faults_fsize");
  std::ofstream(dir / "exp.yaml") << *c.experiment;
  const bool csv = c.extra.find("--csv") != std::string::npos;
  const std::string clean_args = "run exp.yaml -q -o clean.h5" + std::string(csv ? " --csv clean.csv" : "");
  REQUIRE(run_in(dir.path(), clean_args).code == 0);
  const std::string args = "run exp.yaml -q -o out.h5 " + c.extra;
  const bool sweep = c.experiment != &kSingle;
  std::uintmax_t checkpoint_bytes = 0;
  if (sweep) {
    // The checkpoint's length from its header after one record (the test hook kills the run
    // then), and with resume_from_full every record in it: killed after the last append, before
    // the final files.
    REQUIRE(run_in(dir.path(), args, kill_after(1)).code == -1);
    const auto [n, values] = checkpoint_shape(dir / "out.h5.partial");
    REQUIRE(n > 2);
    checkpoint_bytes = 16 + 3 * 8 + n * (8 + 8 * values + 8);
    if (c.resume_from_full) {
      REQUIRE(run_in(dir.path(), args + " --resume", kill_after(n - 1)).code == -1);
      REQUIRE(fs::file_size(dir / "out.h5.partial") == checkpoint_bytes);
    } else {
      fs::remove(dir / "out.h5.partial");
    }
  }
  const std::uintmax_t h5 = fs::file_size(dir / "clean.h5");
  const std::uintmax_t limit = c.limit == Limit::kHalfOutput ? h5 / 2 : checkpoint_bytes / 2;
  const Outcome o = run_in(dir.path(), args + (c.resume_from_full ? " --resume" : ""), size_limit(limit));
  INFO("limit " << limit << " bytes\n" << o.err);
  CHECK(o.code == 1);
  CHECK(o.err.find(c.named) != std::string::npos);
  CHECK(o.err.find("File too large") != std::string::npos);  // strerror(EFBIG)
  CHECK(o.err.find("terminate") == std::string::npos);
  // Nothing that looks complete: no output, no CSV, no temporary, no lock; a sweep keeps its
  // checkpoint for --resume.
  for (const std::string& n : outputs(dir.path())) {
    INFO(n);
    CHECK((n == "clean.h5" || n == "clean.csv" || (sweep && n == "out.h5.partial")));
  }
  if (!sweep) return;
  REQUIRE(fs::exists(dir / "out.h5.partial"));
  const Outcome r = run_in(dir.path(), args + " --resume");
  INFO(r.err);
  REQUIRE(r.code == 0);
  CHECK_FALSE(fs::exists(dir / "out.h5.partial"));
  same_content(dir / "clean.h5", dir / "out.h5");
  if (csv) CHECK(slurp(dir / "clean.csv") == slurp(dir / "out.csv"));
}

}  // namespace

TEST_CASE("a file-size limit stops a single run's and a sweep's files in the middle: exit 1, nothing complete-looking, resume finishes",
          "[app][faults]") {
  REQUIRE(have_program("prlimit"));
  for (const LimitCase& c : std::vector<LimitCase>{
           {"single run, HDF5 file", &kSingle, "--csv out.csv", false, Limit::kHalfOutput, "out.h5: "},
           {"sweep, checkpoint", &kSweep, "-j 2", false, Limit::kHalfCheckpoint, "out.h5.partial: "},
           {"sweep, final HDF5 file", &kSweep, "-j 2", true, Limit::kHalfOutput, "out.h5: "},
           {"sweep with a CSV, final HDF5 file", &kSweep, "--csv out.csv", true, Limit::kHalfOutput, "out.h5: "},
       })
    check_size_limit(c);
}

TEST_CASE("a file-size limit stops a time series' files in the middle: exit 1, nothing complete-looking, resume finishes",
          "[app][faults]") {
  REQUIRE(have_program("prlimit"));
  for (const LimitCase& c : std::vector<LimitCase>{
           {"time series, checkpoint", &kSeries, "", false, Limit::kHalfCheckpoint, "out.h5.partial: "},
           {"time series with a CSV, final HDF5 file", &kSeries, "--csv out.csv", true, Limit::kHalfOutput, "out.h5: "},
       })
    check_size_limit(c);
}

namespace {

/// Where the command runs so that permission bits bite: as root, a fresh 0755 directory with a
/// copy of the binary and of its data, a work directory owned by user 65534, and the command run
/// as that user; otherwise the build's binary in a scratch directory.
class UserSandbox {
 public:
  UserSandbox() : root_(::geteuid() == 0) {
    char templ[] = "/tmp/solstrata_user_XXXXXX";
    REQUIRE(::mkdtemp(templ) != nullptr);
    top_ = templ;
    ::chmod(top_.c_str(), 0755);
    work_ = top_ / "work";
    fs::create_directory(work_);
    if (!root_) return;
    binary_ = top_ / "solstrata";
    fs::copy_file(SOLSTRATA_BINARY, binary_);
    ::chmod(binary_.c_str(), 0755);
    const solstrata::testing::CommandResult v = solstrata::testing::run_command("'" SOLSTRATA_BINARY "' --version");
    REQUIRE(v.status == 0);
    fs::copy(data_dir(v.output), top_ / "data", fs::copy_options::recursive);
    for (const auto& e : fs::recursive_directory_iterator(top_ / "data"))
      ::chmod(e.path().c_str(), e.is_directory() ? 0755 : 0644);
    ::chmod((top_ / "data").c_str(), 0755);
    REQUIRE(::chown(work_.c_str(), kUser, kUser) == 0);
    as_user_ = {"", "SOLSTRATA_DATA_DIR='" + (top_ / "data").string() + "'",
                "setpriv --reuid=" + std::to_string(kUser) + " --regid=" + std::to_string(kUser) + " --clear-groups --"};
  }
  ~UserSandbox() {
    std::error_code ec;
    fs::remove_all(top_, ec);
  }
  UserSandbox(const UserSandbox&) = delete;
  UserSandbox& operator=(const UserSandbox&) = delete;

  [[nodiscard]] const fs::path& work() const { return work_; }
  [[nodiscard]] bool as_other_user() const { return root_; }
  /// Runs `solstrata ARGS` in the work directory, as the unprivileged user when we are root.
  [[nodiscard]] Outcome run(const std::string& args, const std::string& env = "") const {
    return run_in(work_, args, {"", as_user_.env + " " + env, as_user_.wrapper}, binary_.string());
  }
  /// Gives a file or directory made by this process to the user the command runs as.
  void hand_over(const fs::path& p) const {
    if (root_) REQUIRE(::chown(p.c_str(), kUser, kUser) == 0);
  }

 private:
  static constexpr uid_t kUser = 65534;  // "nobody" on Debian
  /// The data directory the built binary reports (`solstrata --version`: "built-in data: DIR").
  static fs::path data_dir(const std::string& text) {
    const std::string key = "built-in data: ";
    const auto at = text.find(key);
    REQUIRE(at != std::string::npos);
    const auto end = text.find('\n', at);
    return text.substr(at + key.size(), end - at - key.size());
  }
  bool root_;
  fs::path top_, work_, binary_ = SOLSTRATA_BINARY;
  Launch as_user_;
};

}  // namespace

TEST_CASE("unwritable outputs and unreadable inputs fail before any work, as an unprivileged user", "[app][faults]") {
  if (::geteuid() == 0) REQUIRE(have_program("setpriv"));
  const std::string profile =
      "name: test profile\nlatitude_deg: 45\nco2_ppmv: 400\nlevels:\n"
      "  pressure_hpa: [1, 100, 500, 1013]\n  temperature_k: [250, 220, 260, 288]\n"
      "  altitude_km: [48, 16, 5.5, 0]\n  ozone_ppmv: [3, 2, 0.05, 0.03]\n";
  const std::string table_sun =
      "sun: {solar_zenith_deg: 30}\n"
      "spectrum:\n  bins: [{from_nm: 300, to_nm: 700, step_nm: 100}]\n"
      "  bands: [{name: vis, from_nm: 300, to_nm: 700}]\n"
      "  solar_spectrum: {column: irradiance, file: sun.csv}\n";
  const std::string listed = kSingle + "sweep: {scenario_file: list.csv}\n";
  const std::string with_profile =
      "atmosphere: {profile: prof.yaml, ozone_column_du: 300}\n" + kSingle.substr(kSingle.find('\n') + 1);
  struct File {
    std::string name, text;
    unsigned mode = 0644;
  };
  struct Case {
    const char* name;
    std::vector<File> files;
    std::string args;                 // run in the work directory
    std::vector<std::string> expect;  // in the message
    std::vector<std::string> dirs = {};  // made 0555 (read-only) after the files are written
  };
  const std::vector<Case> cases = {
      {"output directory read-only", {{"exp.yaml", kSweep}}, "run exp.yaml -o ro/out.h5",
       {"ro/out.h5", "not writable"}, {"ro"}},
      {"CSV directory read-only", {{"exp.yaml", kSweep}}, "run exp.yaml -o out.h5 --csv ro/out.csv",
       {"ro/out.csv", "not writable"}, {"ro"}},
      {"working directory read-only (output and lock beside the experiment)", {{"exp.yaml", kSingle}},
       "run exp.yaml -o out.h5", {"out.h5", "not writable"}, {"."}},
      {"experiment unreadable", {{"exp.yaml", kSingle, 0}}, "run exp.yaml -o out.h5", {"exp.yaml", "readable"}},
      {"profile unreadable",
       {{"exp.yaml", with_profile}, {"prof.yaml", profile, 0}},
       "run exp.yaml -o out.h5", {"prof.yaml"}},
      {"solar spectrum unreadable",
       {{"exp.yaml", table_sun}, {"sun.csv", "wavelength_nm,irradiance\n280,0.5\n400,1.5\n500,2.0\n710,1.4\n", 0}},
       "run exp.yaml -o out.h5", {"sun.csv"}},
      {"scenario list unreadable",
       {{"exp.yaml", listed}, {"list.csv", "aerosol.optical_depth\n0.1\n0.3\n", 0}},
       "run exp.yaml -o out.h5", {"list.csv"}},
      {"checkpoint not writable", {{"exp.yaml", kSweep}, {"out.h5.partial", "", 0444}}, "run exp.yaml -o out.h5 --resume",
       {"out.h5.partial", "not writable"}},
  };
  for (const Case& c : cases) {
    INFO(c.name);
    UserSandbox box;
    for (const File& f : c.files) {
      if (f.name == "out.h5.partial") {
        // A real checkpoint from an interrupted run of the same experiment (the test hook kills it).
        REQUIRE(box.run("run exp.yaml -q -o out.h5", "SOLSTRATA_TEST_KILL_AFTER=3").code == -1);
      } else {
        std::ofstream(box.work() / f.name) << f.text;
      }
      box.hand_over(box.work() / f.name);
      ::chmod((box.work() / f.name).c_str(), f.mode);
    }
    for (const std::string& d : c.dirs) {
      if (d != ".") {
        fs::create_directory(box.work() / d);
        box.hand_over(box.work() / d);
      }
      ::chmod((box.work() / d).c_str(), 0555);
    }
    const auto before = outputs(box.work());
    // SOLSTRATA_PROGRESS=1 prints a line per finished scenario of a sweep: none may appear.
    const Outcome o = box.run(c.args, "SOLSTRATA_PROGRESS=1");
    INFO(o.err);
    CHECK(o.code == 2);
    for (const std::string& e : c.expect) CHECK(o.err.find(e) != std::string::npos);
    CHECK(o.err.find("scenarios (") == std::string::npos);
    CHECK(o.err.find("terminate") == std::string::npos);
    // Nothing written: no output, lock, checkpoint or temporary appeared.
    CHECK(outputs(box.work()) == before);
    for (const std::string& d : c.dirs) {
      if (d != ".") CHECK(fs::is_empty(box.work() / d));
    }
    if (c.name == std::string("checkpoint not writable")) {
      CHECK(fs::file_size(box.work() / "out.h5.partial") > 0);  // not trimmed or touched
    }
    ::chmod(box.work().c_str(), 0755);
    for (const std::string& d : c.dirs) ::chmod((box.work() / d).c_str(), 0755);
    if (!box.as_other_user()) {
      for (const File& f : c.files) ::chmod((box.work() / f.name).c_str(), 0644);
    }
  }
}
