// The command line as users meet it: exit codes, messages that point at the file, line and key,
// and no output file left behind after a failure.
#include <catch2/catch.hpp>

#include "support/app_support.hpp"
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <sys/wait.h>
#include <unistd.h>

namespace fs = std::filesystem;

using solstrata::testing::slurp;

namespace {

fs::path workdir() {
  static const fs::path d = [] {
    const fs::path p = fs::temp_directory_path() / ("solstrata_cli_" + std::to_string(::getpid()));
    fs::create_directories(p);
    return p;
  }();
  return d;
}

struct Outcome {
  int code;
  std::string out, err;
};


Outcome run(const std::string& args) {
  const fs::path o = workdir() / "stdout.txt", e = workdir() / "stderr.txt";
  const std::string cmd = "cd '" + workdir().string() + "' && '" + SOLSTRATA_BINARY + "' " + args + " > '" +
                          o.string() + "' 2> '" + e.string() + "'";
  const int status = std::system(cmd.c_str());
  return {WIFEXITED(status) ? WEXITSTATUS(status) : -1, slurp(o), slurp(e)};
}

/// Files in the work directory other than inputs and captured streams.
std::vector<std::string> leftovers() {
  std::vector<std::string> names;
  for (const auto& f : fs::directory_iterator(workdir())) {
    const std::string n = f.path().filename().string();
    if (n.ends_with(".yaml") || n == "stdout.txt" || n == "stderr.txt" || n == "spectrum.csv") continue;
    names.push_back(n);
  }
  return names;
}

const char* kGood = R"(atmosphere:
  ozone_column_du: 300
aerosol:
  type: continental_background
  optical_depth: 0.1
sun:
  solar_zenith_deg: 30
surface:
  albedo: 0.2
)";

}  // namespace

TEST_CASE("every command has --help and the tool has --version", "[app]") {
  for (const char* c : {"--help", "run --help", "check --help", "accuracy --help", "demo --help"}) {
    const Outcome o = run(c);
    INFO(c << ": " << o.err);
    CHECK(o.code == 0);
    CHECK(o.out.find("usage") != std::string::npos);
  }
  const Outcome v = run("--version");
  CHECK(v.code == 0);
  CHECK(v.out.find("solstrata ") == 0);
  CHECK(run("frobnicate").code == 2);
  CHECK(run("run").code == 2);
  CHECK(run("run a.yaml --bogus").code == 2);
}

// The option names, arguments and exit codes checked below are the documented interface
// (README.md, "Using it"; DEVELOPERS.md, exit codes 0/1/2/130).
TEST_CASE("every subcommand's --help names its arguments, all of its options and its exit codes", "[app]") {
  struct Command {
    const char* name;
    std::vector<std::string> options;
  };
  const std::vector<Command> commands = {
      {"run", {"EXPERIMENT.yaml", "-o,--output FILE", "--csv FILE", "--spectral", "-j,--jobs N", "--resume",
               "-q,--quiet", "-h,--help"}},
      {"check", {"EXPERIMENT.yaml", "-h,--help"}},
      {"accuracy", {"EXPERIMENT.yaml", "--streams N", "--sample K", "-j,--jobs N", "-o,--output FILE", "-q,--quiet",
                    "-h,--help"}},
      {"demo", {"--sza DEG", "--albedo A", "--closure NAME", "-h,--help"}},
  };
  const Outcome top = run("--help");
  REQUIRE(top.code == 0);
  for (const Command& c : commands) {
    INFO(c.name);
    CHECK_THAT(top.out, Catch::Contains(std::string("\n  ") + c.name + " "));  // listed with its summary
    const Outcome h = run(std::string(c.name) + " --help");
    CHECK(h.code == 0);
    CHECK(h.err.empty());
    CHECK_THAT(h.out, Catch::StartsWith(std::string("usage: solstrata ") + c.name));
    CHECK_THAT(h.out, Catch::Contains("exit codes: 0 "));
    for (const std::string& o : c.options) CHECK_THAT(h.out, Catch::Contains("  " + o));
    // -h, and 'solstrata help COMMAND', print the same text.
    CHECK(run(std::string(c.name) + " -h").out == h.out);
    CHECK(run(std::string("help ") + c.name).out == h.out);
  }
  CHECK_THAT(run("run --help").out, Catch::Contains("130 interrupted"));
  // No arguments at all: the overview, on stderr, and exit code 2.
  const Outcome none = run("");
  CHECK(none.code == 2);
  CHECK(none.out.empty());
  CHECK(none.err == top.out);
}

TEST_CASE("an option value may follow an equals sign or come as the next argument", "[app]") {
  // demo prints its settings in the table header: the two spellings must give the same table.
  const Outcome spaced = run("demo --sza 45 --albedo 0.5 --closure pifm");
  const Outcome joined = run("demo --sza=45 --albedo=0.5 --closure=pifm");
  REQUIRE(spaced.code == 0);
  REQUIRE(joined.code == 0);
  CHECK_THAT(joined.out, Catch::Contains("closure pifm, solar zenith 45.0 deg, surface albedo 0.50"));
  CHECK(joined.out == spaced.out);
  CHECK(run("demo").out != spaced.out);  // the options did change something

  std::ofstream(workdir() / "eq.yaml") << kGood;
  const Outcome o = run("run eq.yaml --output=eq.h5 --csv=eq.csv --jobs=1 --quiet");
  INFO(o.err);
  CHECK(o.code == 0);
  CHECK(o.out.empty());
  CHECK(fs::exists(workdir() / "eq.h5"));
  CHECK(fs::exists(workdir() / "eq.csv"));
  fs::remove(workdir() / "eq.h5");
  fs::remove(workdir() / "eq.csv");
  // Short options take their value attached too.
  CHECK(run("run eq.yaml -oeq.h5 -j1 -q").code == 0);
  CHECK(fs::exists(workdir() / "eq.h5"));
  fs::remove(workdir() / "eq.h5");
  const Outcome acc = run("accuracy eq.yaml --streams=4 --sample=1 --jobs=1");
  INFO(acc.err);
  CHECK(acc.code == 0);
  CHECK_THAT(acc.out, Catch::Contains("4-stream reference"));
}

TEST_CASE("bad option values are refused in one style, with exit code 2 and nothing written", "[app]") {
  std::ofstream(workdir() / "typed.yaml") << kGood;
  struct Bad {
    std::string command, args;
    std::vector<std::string> expect;  // fragments of the message
  };
  const std::vector<Bad> cases = {
      {"run", "typed.yaml -o t.h5 -j 0", {"--jobs", "1 to 1024", "got '0'"}},
      {"run", "typed.yaml -o t.h5 --jobs=abc", {"--jobs", "whole number", "got 'abc'"}},
      {"run", "typed.yaml -o t.h5 --jobs=2.5", {"--jobs", "got '2.5'"}},
      {"run", "typed.yaml -o t.h5 -j", {"--jobs needs a value"}},
      {"run", "typed.yaml --output", {"--output needs a value"}},
      {"run", "typed.yaml -o t.h5 --spectrl", {"unknown option '--spectrl'", "did you mean '--spectral'"}},
      {"run", "typed.yaml typed.yaml -o t.h5", {"unexpected argument 'typed.yaml'"}},
      {"run", "nowhere.yaml -o t.h5", {"no such file 'nowhere.yaml'"}},
      {"run", "-o t.h5", {"missing the experiment file"}},
      {"check", "adir_for_check", {"is a directory"}},
      {"accuracy", "typed.yaml --streams 7", {"--streams", "even", "4 to 64", "got '7'"}},
      {"accuracy", "typed.yaml --streams=66", {"--streams", "got '66'"}},
      {"accuracy", "typed.yaml --sample 0", {"--sample", "1 to 100000"}},
      {"accuracy", "typed.yaml -j 0", {"--jobs", "1 to 1024", "got '0'"}},
      {"demo", "--sza 95", {"--sza", "0 <= DEG < 90 (in degrees)", "got '95'"}},
      {"demo", "--sza=-5", {"--sza", "got '-5'"}},
      {"demo", "--sza nan", {"--sza", "got 'nan'"}},
      {"demo", "--albedo=x", {"--albedo", "0 <= A <= 1", "got 'x'"}},
      {"demo", "--closure delta-eddington", {"--closure", "expected one of delta_eddington,", "did you mean 'delta_eddington'"}},
  };
  fs::create_directories(workdir() / "adir_for_check");
  for (const Bad& b : cases) {
    const Outcome o = run(b.command + " " + b.args);
    INFO(b.command << " " << b.args << ":\n" << o.err);
    CHECK(o.code == 2);
    CHECK(o.out.empty());
    CHECK_THAT(o.err, Catch::StartsWith("solstrata " + b.command + ": "));
    CHECK_THAT(o.err, Catch::EndsWith("Run 'solstrata " + b.command + " --help' for usage.\n"));
    for (const std::string& e : b.expect) CHECK_THAT(o.err, Catch::Contains(e));
  }
  fs::remove_all(workdir() / "adir_for_check");
  CHECK(leftovers().empty());
  // The same style without a command.
  const Outcome unknown = run("rnu typed.yaml");
  CHECK(unknown.code == 2);
  CHECK(unknown.err == "solstrata: unknown command 'rnu' (did you mean 'run'?)\nRun 'solstrata --help' for usage.\n");
  CHECK(run("--bogus").code == 2);
}

TEST_CASE("the Planck approximation, asked for, is flagged in the summary", "[app]") {
  std::ofstream(workdir() / "planck.yaml") << kGood << "spectrum:\n  solar_spectrum: planck\n";
  const Outcome o = run("run planck.yaml -o planck.h5");
  INFO(o.err);
  REQUIRE(o.code == 0);
  CHECK(o.out.find("approximate solar spectrum") != std::string::npos);
  fs::remove(workdir() / "planck.h5");
}

TEST_CASE("a good experiment runs, prints the table and writes its files", "[app]") {
  std::ofstream(workdir() / "good.yaml") << kGood;
  const Outcome chk = run("check good.yaml");
  CHECK(chk.code == 0);
  CHECK(chk.out.find("valid") != std::string::npos);
  const Outcome o = run("run good.yaml -o good.h5 --csv good.csv");
  INFO(o.err);
  REQUIRE(o.code == 0);
  CHECK(o.out.find("broadband") != std::string::npos);
  CHECK(o.out.find("UV index") != std::string::npos);
  CHECK(o.out.find("not medical advice") != std::string::npos);
  // The default solar spectrum is the built-in ASTM E490 table: no approximation note.
  CHECK(o.out.find("approximate solar spectrum") == std::string::npos);
  CHECK(fs::exists(workdir() / "good.h5"));
  const std::string csv = slurp(workdir() / "good.csv");
  CHECK(csv.find("broadband") != std::string::npos);
  fs::remove(workdir() / "good.h5");
  fs::remove(workdir() / "good.csv");
  CHECK(run("run good.yaml -o good.h5 --quiet").out.empty());
  fs::remove(workdir() / "good.h5");
}

TEST_CASE("bad experiment files are refused with a pointed message, exit code 2 and no output", "[app]") {
  struct Bad {
    const char* name;
    std::string yaml;
    const char* expect;  // a fragment the message must contain
    int line;            // the line the message must point at (0: no line check)
  };
  const std::string sun = "sun:\n  solar_zenith_deg: 30\n";
  const std::vector<Bad> cases = {
      {"syntax", "sun: {solar_zenith_deg: 30\n", "error", 0},
      {"unknown_top", "atmosphre:\n  co2_ppmv: 400\n" + sun, "did you mean 'atmosphere'", 1},
      {"unknown_sun_key", "sun:\n  solar_zenith: 30\n", "did you mean 'solar_zenith_deg'", 2},
      {"missing_sun", "surface:\n  albedo: 0.2\n", "sun", 0},
      {"missing_zenith", "sun:\n  day_of_year: 10\n", "solar_zenith_deg", 0},
      {"zenith_90", "sun:\n  solar_zenith_deg: 90\n", "< 90", 2},
      {"zenith_text", "sun:\n  solar_zenith_deg: thirty\n", "number", 2},
      {"ssa_high", sun + "aerosol:\n  optical_depth: 0.1\n  single_scattering_albedo: 1.2\n", "0 <= ", 5},
      {"g_one", sun + "aerosol:\n  optical_depth: 0.1\n  asymmetry_parameter: 1.0\n", "< 1", 5},
      {"tau_negative", sun + "aerosol:\n  optical_depth: -0.1\n", "0 <= ", 4},
      {"tau_missing", sun + "aerosol:\n  angstrom_exponent: 1.0\n", "optical_depth", 0},
      {"aerosol_type", sun + "aerosol:\n  type: continental_mod\n  optical_depth: 0.1\n", "did you mean 'continental_moderate'", 4},
      {"albedo_high", sun + "surface:\n  albedo: 1.5\n", "<= 1", 4},
      {"closure", sun + "solver:\n  closure: delta-eddington\n", "did you mean 'delta_eddington'", 4},
      {"profile_missing", sun + "atmosphere:\n  profile: nowhere.yaml\n", "does not exist", 4},
      {"levels_order", sun + "atmosphere:\n  levels:\n    pressure_hpa: [1, 500, 300]\n    temperature_k: [220, 250, 280]\n    altitude_km: [40, 5, 9]\n", "increase", 5},
      {"levels_negative", sun + "atmosphere:\n  levels:\n    pressure_hpa: [-1, 500, 1000]\n    temperature_k: [220, 250, 280]\n    altitude_km: [40, 5, 0]\n", "> 0", 5},
      {"levels_length", sun + "atmosphere:\n  levels:\n    pressure_hpa: [1, 500, 1000]\n    temperature_k: [220, 280]\n    altitude_km: [40, 5, 0]\n", "one value per level", 6},
      {"levels_temperature", sun + "atmosphere:\n  levels:\n    pressure_hpa: [1, 500, 1000]\n    temperature_k: [220, 500, 280]\n    altitude_km: [40, 5, 0]\n", "< 400", 6},
      {"profile_and_levels", sun + "atmosphere:\n  profile: us_standard_1976\n  levels:\n    pressure_hpa: [1, 1000]\n    temperature_k: [220, 280]\n    altitude_km: [40, 0]\n", "not both", 0},
      {"band_outside", sun + "spectrum:\n  bands:\n    - {name: far_uv, from_nm: 100, to_nm: 200}\n", "far_uv", 0},
      {"bins_gap", sun + "spectrum:\n  bins:\n    - {from_nm: 300, to_nm: 400, step_nm: 5}\n    - {from_nm: 410, to_nm: 500, step_nm: 10}\n", "bins", 0},
      {"solar_file_missing", sun + "spectrum:\n  solar_spectrum:\n    file: nowhere.csv\n", "does not exist", 5},
      {"given_with_atmosphere", sun + "atmosphere:\n  co2_ppmv: 400\ngiven_optics:\n  solar_irradiance_w_m2: 1000\n  layers:\n    - {optical_depth: 1, single_scattering_albedo: 0.9}\n", "cannot be combined", 0},
      {"given_omega", sun + "given_optics:\n  solar_irradiance_w_m2: 1000\n  layers:\n    - {optical_depth: 1, single_scattering_albedo: 1.5}\n", "<= 1", 6},
      {"given_pressures", sun + "given_optics:\n  solar_irradiance_w_m2: 1000\n  pressure_hpa: [1, 500, 1000]\n  layers:\n    - {optical_depth: 1, single_scattering_albedo: 0.5}\n", "one pressure per level", 5},
      {"day_of_year", "sun:\n  solar_zenith_deg: 30\n  day_of_year: 400\n", "367", 3},
      {"ambiguous_bool", sun + "output:\n  spectral: yes\n", "true", 4},
      {"albedo_band", sun + "surface:\n  albedo_by_band:\n    VIS: 0.1\n", "not a reporting band", 5},
      {"angstrom_twice", sun + "aerosol:\n  optical_depth: 0.2\n  angstrom_exponent: 1.2\n  second_wavelength_nm: 870\n  second_optical_depth: 0.1\n", "not both", 0},
      {"ozone_zero", sun + "atmosphere:\n  ozone_column_du: 0\n", "0 <", 4},
      {"empty_file", "", "", 0},
      {"top_is_list", "- sun\n- surface\n", "mapping", 0},
      {"shape", sun + "aerosol:\n  optical_depth: 0.1\n  vertical:\n    shape: gaussian\n", "exponential", 6},
      {"layer_weights", sun + "aerosol:\n  optical_depth: 0.1\n  vertical:\n    shape: per_layer\n    layer_weights: [1, 2]\n", "one weight per layer", 7},
      {"output_variable", sun + "output:\n  variables: [broadband, flux_upp]\n", "did you mean 'flux_up'", 4},
      {"output_variable_list", sun + "output:\n  variables: [nonsense]\n", "allowed groups: broadband, bands, layers, spectral, products, sun", 4},
      {"output_variables_empty", sun + "output:\n  variables: []\n", "at least one", 4},
      {"output_spectral_off", sun + "output:\n  spectral: false\n  variables: [spectral_flux_up]\n", "output.spectral is false", 5},
  };
  REQUIRE(cases.size() >= 25);
  for (const Bad& b : cases) {
    const std::string file = std::string("bad_") + b.name + ".yaml";
    std::ofstream(workdir() / file) << b.yaml;
    const Outcome o = run("run " + file + " -o out.h5");
    INFO(b.name << ":\n" << o.err);
    CHECK(o.code == 2);
    CHECK(o.err.find(file) != std::string::npos);
    CHECK(o.err.find(b.expect) != std::string::npos);
    if (b.line > 0) CHECK(o.err.find(file + ":" + std::to_string(b.line) + ":") != std::string::npos);
    CHECK(leftovers().empty());
    CHECK(run("check " + file).code == 2);
  }
  // A missing experiment file.
  const Outcome o = run("run missing.yaml -o out.h5");
  CHECK(o.code == 2);
  CHECK(o.err.find("missing.yaml") != std::string::npos);
  CHECK(leftovers().empty());
}

TEST_CASE("a solar spectrum file with several columns and none chosen is an input error at the column key", "[app]") {
  // Two irradiance columns and no `column`: which one is meant cannot be guessed.
  std::ofstream(workdir() / "spectrum.csv") << "wavelength_nm,first,second\n100,1,2\n10000,1,2\n";
  const std::string yaml = "sun:\n  solar_zenith_deg: 30\nspectrum:\n  solar_spectrum:\n    file: spectrum.csv\n";
  std::ofstream(workdir() / "two_columns.yaml") << yaml;
  const Outcome o = run("run two_columns.yaml -o out.h5");
  INFO(o.err);
  CHECK(o.code == 2);
  CHECK(o.err.find("two_columns.yaml:4:") != std::string::npos);
  CHECK(o.err.find("spectrum.solar_spectrum.column") != std::string::npos);
  CHECK(o.err.find("spectrum.csv") != std::string::npos);
  CHECK(o.err.find("first, second") != std::string::npos);
  CHECK(leftovers().empty());
  CHECK(run("check two_columns.yaml").code == 2);
  // Naming the column runs.
  std::ofstream(workdir() / "one_column.yaml") << yaml << "    column: second\n";
  const Outcome ok = run("run one_column.yaml -o picked.h5 --quiet");
  INFO(ok.err);
  CHECK(ok.code == 0);
  fs::remove(workdir() / "picked.h5");
}

TEST_CASE("the option --spectral with given optics says on stderr that it has no effect", "[app]") {
  std::ofstream(workdir() / "given.yaml") << "sun:\n  solar_zenith_deg: 30\ngiven_optics:\n  solar_irradiance_w_m2: 1000\n"
                                             "  layers:\n    - {optical_depth: 0.5, single_scattering_albedo: 0.9}\n";
  const Outcome with = run("run given.yaml -o given.h5 --spectral --quiet");
  CHECK(with.code == 0);
  CHECK(with.err.find("--spectral has no effect with given_optics") != std::string::npos);
  const Outcome without = run("run given.yaml -o given.h5 --quiet");
  CHECK(without.code == 0);
  CHECK(without.err.find("no effect") == std::string::npos);
  fs::remove(workdir() / "given.h5");
}

TEST_CASE("accuracy compares the closure with the reference and writes the comparison", "[app]") {
  std::ofstream(workdir() / "acc.yaml") << kGood;
  const Outcome o = run("accuracy acc.yaml --streams 8 -o acc.h5");
  INFO(o.err);
  REQUIRE(o.code == 0);
  CHECK(o.out.find("8-stream reference") != std::string::npos);
  CHECK(o.out.find("broadband") != std::string::npos);
  CHECK(fs::exists(workdir() / "acc.h5"));
  fs::remove(workdir() / "acc.h5");
  CHECK(run("accuracy acc.yaml --streams 7").code == 2);
  CHECK(run("accuracy").code == 2);
}

TEST_CASE("bad output paths fail before any work and leave nothing behind", "[app]") {
  std::ofstream(workdir() / "paths.yaml") << kGood;
  fs::create_directories(workdir() / "adir");
  const Outcome dir = run("run paths.yaml -o adir");
  CHECK(dir.code == 2);
  CHECK_THAT(dir.err, Catch::Contains("is a directory"));
  const Outcome csv = run("run paths.yaml -o ok.h5 --csv missing_dir/summary.csv");
  CHECK(csv.code == 2);
  CHECK_THAT(csv.err, Catch::Contains("missing_dir") && Catch::Contains("does not exist"));
  fs::remove_all(workdir() / "adir");
  CHECK(leftovers().empty());  // in particular no ok.h5: the HDF5 is not written before the CSV fails
}

TEST_CASE("a sweep of 10^12 scenarios is refused at once when the file is read", "[app]") {
  std::ofstream(workdir() / "huge.yaml")
      << kGood << "sweep:\n  grid:\n"
      << "    - {parameter: aerosol.optical_depth, range: {from: 0.01, to: 1, count: 1000000}}\n"
      << "    - {parameter: sun.solar_zenith_deg, range: {from: 0, to: 80, count: 1000000}}\n";
  const Outcome o = run("check huge.yaml");
  CHECK(o.code == 2);
  CHECK_THAT(o.err, Catch::Contains("huge.yaml:") && Catch::Contains("1000000 x 1000000") &&
                        Catch::Contains("100000000"));
  CHECK(leftovers().empty());
}

TEST_CASE("cmake --install gives a command that finds its installed data and runs the demo", "[app]") {
  const fs::path prefix = workdir() / "prefix";
  const std::string install = "cmake --install '" + std::string(SOLSTRATA_BUILD_DIR) + "' --prefix '" + prefix.string() +
                              "' > '" + (workdir() / "install.log").string() + "' 2>&1";
  REQUIRE(std::system(install.c_str()) == 0);
  const fs::path exe = prefix / "bin" / "solstrata";
  REQUIRE(fs::exists(exe));
  CHECK(fs::exists(prefix / "share" / "solstrata" / "data" / "gases" / "o2_hitran2012.ktab"));
  CHECK(fs::exists(prefix / "share" / "doc" / "solstrata" / "experiment-keys.md"));
  const std::string out = (workdir() / "installed.txt").string();
  const std::string cmd = "cd '" + workdir().string() + "' && env -u SOLSTRATA_DATA_DIR '" + exe.string() +
                          "' --version > '" + out + "' && env -u SOLSTRATA_DATA_DIR '" + exe.string() + "' run '" +
                          (prefix / "share" / "solstrata" / "config" / "demo.yaml").string() + "' -q -o installed.h5";
  CHECK(std::system(cmd.c_str()) == 0);
  CHECK_THAT(slurp(out), Catch::Contains((prefix / "share" / "solstrata" / "data").string()));
  CHECK(fs::exists(workdir() / "installed.h5"));
  fs::remove_all(prefix);
  fs::remove(workdir() / "installed.h5");
  fs::remove(workdir() / "install.log");
  fs::remove(workdir() / "installed.txt");
}
