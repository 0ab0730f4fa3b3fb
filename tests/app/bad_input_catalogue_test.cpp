// A catalogue of bad inputs as users meet them, across the keys of the example experiments
// (config/*.yaml), profile files (profiles/*.yaml), solar spectrum tables and scenario lists.
// Every row runs the real command line (`solstrata run`, which validates everything before any
// work) in a directory of its own and requires: exit code 2; a message naming the offending file,
// the line and the key; nothing left in the directory but the inputs (no *.h5, *.partial, *.tmp-*,
// *.lock, *.csv output). The rules come from RULES.md ("Bad input") and docs/experiment-keys.md
// (the ranges). A second table holds inputs that must load: a UTF-8 byte order mark and CRLF line
// endings in every kind of file.
#include <catch2/catch.hpp>

#include "support/app_support.hpp"

#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include "support/temp_dir.hpp"

namespace fs = std::filesystem;
using solstrata::testing::TempDir;

using solstrata::testing::slurp;

namespace {

struct Outcome {
  int code = -1;
  std::string err;
};


/// Runs `solstrata ARGS` in `dir`; stdout is discarded, stderr kept (outside `dir`).
Outcome invoke(const fs::path& dir, const std::string& args) {
  const fs::path err = dir.parent_path() / (dir.filename().string() + ".stderr");
  const std::string cmd = "cd '" + dir.string() + "' && '" + SOLSTRATA_BINARY + "' " + args + " > /dev/null 2> '" +
                          err.string() + "'";
  const int status = std::system(cmd.c_str());
  Outcome o{WIFEXITED(status) ? WEXITSTATUS(status) : -1, slurp(err)};
  fs::remove(err);
  return o;
}

/// A file of the case: name and bytes.
struct File {
  std::string name, text;
};

/// One bad input. `files` are written into a fresh directory (the experiment is exp.yaml unless
/// `args` says otherwise); `expect` are fragments the message must contain: the file and line
/// ("exp.yaml:4:", "sun.csv:3:", "list.csv line 3") and the key.
struct BadCase {
  const char* name;
  std::vector<File> files;
  std::vector<std::string> expect;
  std::string args = "run exp.yaml -q";
};

const std::string kSun = "sun:\n  solar_zenith_deg: 30\n";  // lines 1-2 of most cases

/// A valid solar spectrum table covering a small grid (290-700 nm).
const std::string kGoodCsv = "wavelength_nm,irradiance\n280,0.5\n400,1.5\n500,2.0\n710,1.4\n";
/// Lines 3-8 of an experiment on the grid 300-700 nm with the table sun.csv (file key on line 8).
const std::string kSpectrumWithFile =
    "spectrum:\n  bins: [{from_nm: 300, to_nm: 700, step_nm: 100}]\n"
    "  bands: [{name: vis, from_nm: 300, to_nm: 700}]\n"
    "  solar_spectrum:\n"
    "    column: irradiance\n"
    "    file: sun.csv\n";

/// Lines 3-... of an experiment sweeping over the scenario list list.csv (key on line 5).
const std::string kScenarioSweep =
    "aerosol: {type: urban_haze, optical_depth: 0.2}\n"
    "sweep:\n"
    "  scenario_file: list.csv\n";

/// A profile file (profiles/*.yaml format) with `levels` lines replaced by `levels`.
std::string profile(const std::string& levels) {
  return "name: test profile\nlatitude_deg: 45\nco2_ppmv: 400\nlevels:\n" + levels;
}
const std::string kGoodLevels =
    "  pressure_hpa: [1, 100, 500, 1013]\n"
    "  temperature_k: [250, 220, 260, 288]\n"
    "  altitude_km: [48, 16, 5.5, 0]\n"
    "  ozone_ppmv: [3, 2, 0.05, 0.03]\n";
const std::string kWithProfile = kSun + "atmosphere:\n  profile: prof.yaml\n";  // key on line 4

/// Billion laughs: ten levels of aliases, each nine times the one before (9^10 leaves).
std::string alias_bomb() {
  std::string s = "a0: &a0 [lol, lol, lol, lol, lol, lol, lol, lol, lol]\n";
  for (int i = 1; i < 10; ++i) {
    const std::string prev = std::to_string(i - 1), me = std::to_string(i);
    s.append("a").append(me).append(": &a").append(me).append(" [*a").append(prev);
    for (int k = 1; k < 9; ++k) s.append(", *a").append(prev);
    s.append("]\n");
  }
  return kSun + s;  // the first alias-free unknown key a0 is on line 3
}

std::string bytes_garbage() {
  std::string s;
  std::uint32_t x = 2463534242u;  // xorshift32 (Marsaglia 2003), fixed seed: the same bytes every run
  for (int i = 0; i < 4000; ++i) {
    x ^= x << 13;
    x ^= x >> 17;
    x ^= x << 5;
    s += static_cast<char>(x & 0xff);
  }
  return s;
}

std::vector<BadCase> catalogue() {
  const std::string deep_brackets = kSun + "surface: " + std::string(5000, '[') + std::string(5000, ']') + "\n";
  std::string deep_blocks = kSun + "surface:\n";
  for (int i = 1; i < 1200; ++i) deep_blocks += std::string(2 * static_cast<std::size_t>(i), ' ') + "k" + std::to_string(i) + ":\n";
  return {
      // ----- sun: out of range, wrong type, NaN, inf, empty, wrong nesting
      {"zenith above range", {{"exp.yaml", "sun:\n  solar_zenith_deg: 95\n"}}, {"exp.yaml:2:", "sun.solar_zenith_deg", "< 90"}},
      {"zenith negative", {{"exp.yaml", "sun:\n  solar_zenith_deg: -1\n"}}, {"exp.yaml:2:", "sun.solar_zenith_deg"}},
      {"zenith NaN", {{"exp.yaml", "sun:\n  solar_zenith_deg: .nan\n"}}, {"exp.yaml:2:", "sun.solar_zenith_deg"}},
      {"zenith inf", {{"exp.yaml", "sun:\n  solar_zenith_deg: .inf\n"}}, {"exp.yaml:2:", "sun.solar_zenith_deg"}},
      {"zenith quoted", {{"exp.yaml", "sun:\n  solar_zenith_deg: \"30\"\n"}}, {"exp.yaml:2:", "sun.solar_zenith_deg"}},
      {"zenith a list", {{"exp.yaml", "sun:\n  solar_zenith_deg: [30]\n"}}, {"exp.yaml:2:", "sun.solar_zenith_deg"}},
      {"zenith empty", {{"exp.yaml", "sun:\n  solar_zenith_deg:\n"}}, {"exp.yaml:2:", "sun.solar_zenith_deg"}},
      {"zenith with a unit", {{"exp.yaml", "sun:\n  solar_zenith_deg: 30 deg\n"}}, {"exp.yaml:2:", "sun.solar_zenith_deg"}},
      {"sun not a mapping", {{"exp.yaml", "sun: 30\n"}}, {"exp.yaml:1:", "sun"}},
      {"sun nested one level too deep", {{"exp.yaml", "sun:\n  geometry:\n    solar_zenith_deg: 30\n"}}, {"exp.yaml:1:", "sun.solar_zenith_deg", "missing"}},
      {"day of year 400", {{"exp.yaml", kSun + "  day_of_year: 400\n"}}, {"exp.yaml:3:", "sun.day_of_year"}},
      {"distance factor 2", {{"exp.yaml", kSun + "  distance_factor: 2\n"}}, {"exp.yaml:3:", "sun.distance_factor"}},
      {"beam geometry unknown", {{"exp.yaml", kSun + "  beam_geometry: flat\n"}}, {"exp.yaml:3:", "sun.beam_geometry"}},
      {"irradiance scale 0", {{"exp.yaml", kSun + "  irradiance_scale: 0\n"}}, {"exp.yaml:3:", "sun.irradiance_scale"}},
      // ----- surface, atmosphere, aerosol, spectrum, solver, output keys
      {"albedo 1.5", {{"exp.yaml", kSun + "surface:\n  albedo_diffuse: 1.5\n"}}, {"exp.yaml:4:", "surface.albedo_diffuse"}},
      {"albedo by unknown band", {{"exp.yaml", kSun + "surface:\n  albedo_by_band:\n    XUV: 0.3\n"}}, {"exp.yaml:5:", "XUV"}},
      {"ozone negative", {{"exp.yaml", kSun + "atmosphere:\n  ozone_column_du: -5\n"}}, {"exp.yaml:4:", "atmosphere.ozone_column_du"}},
      {"ozone 1e9", {{"exp.yaml", kSun + "atmosphere:\n  ozone_column_du: 1e9\n"}}, {"exp.yaml:4:", "atmosphere.ozone_column_du"}},
      {"co2 inf", {{"exp.yaml", kSun + "atmosphere:\n  co2_ppmv: .inf\n"}}, {"exp.yaml:4:", "atmosphere.co2_ppmv"}},
      {"water 20 cm", {{"exp.yaml", kSun + "atmosphere:\n  precipitable_water_cm: 20\n"}}, {"exp.yaml:4:", "atmosphere.precipitable_water_cm"}},
      {"surface pressure 0", {{"exp.yaml", kSun + "atmosphere:\n  surface_pressure_hpa: 0\n"}}, {"exp.yaml:4:", "atmosphere.surface_pressure_hpa"}},
      {"rayleigh yes", {{"exp.yaml", kSun + "atmosphere:\n  rayleigh: yes\n"}}, {"exp.yaml:4:", "atmosphere.rayleigh"}},
      {"absorber unknown", {{"exp.yaml", kSun + "atmosphere:\n  absorbers:\n    h2o: sometimes\n"}}, {"exp.yaml:5:", "atmosphere.absorbers.h2o"}},
      {"absorber table missing", {{"exp.yaml", kSun + "atmosphere:\n  absorbers:\n    o2: nowhere.ktab\n"}}, {"exp.yaml:5:", "atmosphere.absorbers.o2"}},
      {"inline levels not increasing",
       {{"exp.yaml", kSun + "atmosphere:\n  levels:\n    pressure_hpa: [1, 500, 300]\n    temperature_k: [220, 250, 280]\n    altitude_km: [40, 5, 9]\n"}},
       {"exp.yaml:5:", "pressure_hpa"}},
      {"aerosol depth 60", {{"exp.yaml", kSun + "aerosol:\n  optical_depth: 60\n"}}, {"exp.yaml:4:", "aerosol.optical_depth"}},
      {"aerosol type unknown", {{"exp.yaml", kSun + "aerosol:\n  type: smog\n  optical_depth: 0.1\n"}}, {"exp.yaml:4:", "aerosol.type"}},
      {"aerosol g = 1", {{"exp.yaml", kSun + "aerosol:\n  optical_depth: 0.1\n  asymmetry_parameter: 1\n"}}, {"exp.yaml:5:", "aerosol.asymmetry_parameter"}},
      {"aerosol scale height 0", {{"exp.yaml", kSun + "aerosol:\n  optical_depth: 0.1\n  vertical:\n    scale_height_km: 0\n"}}, {"exp.yaml:6:", "aerosol.vertical.scale_height_km"}},
      {"aerosol spectral table decreasing",
       {{"exp.yaml", kSun + "aerosol:\n  optical_depth: 0.1\n  spectral_table:\n    wavelength_nm: [500, 400]\n    single_scattering_albedo: [0.9, 0.8]\n"}},
       {"exp.yaml:6:", "aerosol.spectral_table.wavelength_nm"}},
      {"bins reversed", {{"exp.yaml", kSun + "spectrum:\n  bins:\n    - {from_nm: 700, to_nm: 300, step_nm: 10}\n"}}, {"exp.yaml:4:", "spectrum.bins", "must exceed"}},
      {"solar spectrum unknown name", {{"exp.yaml", kSun + "spectrum:\n  solar_spectrum: sunny\n"}}, {"exp.yaml:4:", "spectrum.solar_spectrum"}},
      {"closure unknown", {{"exp.yaml", kSun + "solver:\n  closure: magic\n"}}, {"exp.yaml:4:", "solver.closure"}},
      {"streams odd", {{"exp.yaml", kSun + "solver:\n  streams: 7\n"}}, {"exp.yaml:4:", "solver.streams"}},
      {"output spectral 1", {{"exp.yaml", kSun + "output:\n  spectral: 1\n"}}, {"exp.yaml:4:", "output.spectral"}},
      {"output file in a missing directory", {{"exp.yaml", kSun + "output:\n  file: nowhere/out.h5\n"}}, {"exp.yaml:4:", "output.file", "nowhere"}},
      {"given optics omega 2",
       {{"exp.yaml", kSun + "given_optics:\n  solar_irradiance_w_m2: 1000\n  layers:\n    - {optical_depth: 1, single_scattering_albedo: 2}\n"}},
       {"exp.yaml:6:", "single_scattering_albedo"}},
      // ----- unknown and duplicate keys at several levels
      {"unknown top-level key", {{"exp.yaml", kSun + "suun:\n  x: 1\n"}}, {"exp.yaml:3:", "suun"}},
      {"unknown key in sun", {{"exp.yaml", "sun:\n  solar_zenith_deg: 30\n  zenith: 30\n"}}, {"exp.yaml:3:", "zenith"}},
      {"unknown key three levels deep", {{"exp.yaml", kSun + "aerosol:\n  optical_depth: 0.1\n  vertical:\n    heigth_km: 2\n"}}, {"exp.yaml:6:", "heigth_km"}},
      {"duplicate top-level key", {{"exp.yaml", kSun + "surface: {albedo: 0.1}\nsun:\n  solar_zenith_deg: 40\n"}}, {"exp.yaml:4:", "sun"}},
      {"duplicate key in a section", {{"exp.yaml", "sun:\n  solar_zenith_deg: 30\n  solar_zenith_deg: 40\n"}}, {"exp.yaml:3:", "solar_zenith_deg"}},
      {"duplicate key in a flow mapping", {{"exp.yaml", kSun + "aerosol: {optical_depth: 0.1, optical_depth: 0.2}\n"}}, {"exp.yaml:3:", "optical_depth"}},
      // ----- YAML structure: syntax, aliases, depth, garbage
      {"unclosed flow mapping", {{"exp.yaml", "sun: {solar_zenith_deg: 30\nsurface: {albedo: 0.2}\n"}}, {"exp.yaml:", "YAML syntax error"}},
      {"tab indentation", {{"exp.yaml", "sun:\n\tsolar_zenith_deg: 30\n"}}, {"exp.yaml:2:", "tab"}},
      {"second document", {{"exp.yaml", kSun + "---\n" + kSun}}, {"exp.yaml:4:", "second YAML document"}},
      {"alias bomb", {{"exp.yaml", alias_bomb()}}, {"exp.yaml:3:", "a0"}},
      {"alias bomb as a value", {{"exp.yaml", alias_bomb() + "title: *a9\n"}}, {"exp.yaml:13:", "title", "a list"}},
      {"deep brackets", {{"exp.yaml", deep_brackets}}, {"exp.yaml:3:", "nesting"}},
      {"deep indentation", {{"exp.yaml", deep_blocks}}, {"exp.yaml:", "nesting"}},
      {"binary garbage", {{"exp.yaml", bytes_garbage()}}, {"exp.yaml:"}},
      {"a document starting with a comma", {{"exp.yaml", ", sun: 30\n"}}, {"exp.yaml:1:1:", "YAML syntax error"}},
      {"empty file", {{"exp.yaml", ""}}, {"exp.yaml", "no content"}},
      {"only a comment", {{"exp.yaml", "# nothing here\n"}}, {"exp.yaml", "no content"}},
      {"top level a list", {{"exp.yaml", "- sun\n- surface\n"}}, {"exp.yaml:1:", "mapping"}},
      // ----- profile files
      {"profile missing", {{"exp.yaml", kWithProfile}}, {"exp.yaml:4:", "atmosphere.profile", "prof.yaml"}},
      {"profile is a directory", {{"exp.yaml", kSun + "atmosphere:\n  profile: sub\n"}, {"sub/keep", ""}}, {"exp.yaml:4:", "atmosphere.profile", "sub", "is a directory"}},
      {"profile temperature 500 K",
       {{"exp.yaml", kWithProfile}, {"prof.yaml", profile("  pressure_hpa: [1, 100, 500, 1013]\n  temperature_k: [250, 500, 260, 288]\n  altitude_km: [48, 16, 5.5, 0]\n")}},
       {"prof.yaml:6:", "levels.temperature_k", "< 400"}},
      {"profile unknown key", {{"exp.yaml", kWithProfile}, {"prof.yaml", profile(kGoodLevels + "  ozone_ppbv: [1, 1, 1, 1]\n")}}, {"prof.yaml:9:", "ozone_ppbv"}},
      {"profile altitude not decreasing",
       {{"exp.yaml", kWithProfile}, {"prof.yaml", profile("  pressure_hpa: [1, 100, 500, 1013]\n  temperature_k: [250, 220, 260, 288]\n  altitude_km: [48, 16, 17, 0]\n")}},
       {"prof.yaml:7:", "altitude_km"}},
      {"profile lists of different length",
       {{"exp.yaml", kWithProfile}, {"prof.yaml", profile("  pressure_hpa: [1, 100, 500, 1013]\n  temperature_k: [250, 220, 260]\n  altitude_km: [48, 16, 5.5, 0]\n")}},
       {"prof.yaml:6:", "temperature_k"}},
      {"profile NaN ozone", {{"exp.yaml", kWithProfile}, {"prof.yaml", profile("  pressure_hpa: [1, 100, 500, 1013]\n  temperature_k: [250, 220, 260, 288]\n  altitude_km: [48, 16, 5.5, 0]\n  ozone_ppmv: [3, .nan, 0.05, 0.03]\n")}},
       {"prof.yaml:8:", "ozone_ppmv"}},
      {"profile without levels", {{"exp.yaml", kWithProfile}, {"prof.yaml", "name: empty\n"}}, {"prof.yaml", "levels"}},
      {"profile YAML syntax", {{"exp.yaml", kWithProfile}, {"prof.yaml", profile("  pressure_hpa: [1, 100\n")}}, {"prof.yaml:", "YAML syntax error"}},
      // ----- solar spectrum tables (the experiment names the table: key on line 8)
      {"spectrum file missing", {{"exp.yaml", kSun + kSpectrumWithFile}}, {"exp.yaml:8:", "spectrum.solar_spectrum.file", "sun.csv"}},
      {"spectrum file is a directory", {{"exp.yaml", kSun + kSpectrumWithFile}, {"sun.csv/keep", ""}}, {"exp.yaml:8:", "spectrum.solar_spectrum.file", "sun.csv"}},
      {"spectrum not increasing", {{"exp.yaml", kSun + kSpectrumWithFile}, {"sun.csv", "wavelength_nm,irradiance\n280,0.5\n500,1.5\n400,2.0\n710,1\n"}},
       {"exp.yaml:8:", "spectrum.solar_spectrum.file", "sun.csv:4:"}},
      {"spectrum negative", {{"exp.yaml", kSun + kSpectrumWithFile}, {"sun.csv", "wavelength_nm,irradiance\n280,0.5\n400,-1.5\n710,1\n"}},
       {"exp.yaml:8:", "spectrum.solar_spectrum.file", "sun.csv:3:"}},
      {"spectrum text in a number", {{"exp.yaml", kSun + kSpectrumWithFile}, {"sun.csv", "wavelength_nm,irradiance\n280,0.5\n400,1.5x\n710,1\n"}},
       {"exp.yaml:8:", "spectrum.solar_spectrum.file", "sun.csv:3:"}},
      {"spectrum NaN", {{"exp.yaml", kSun + kSpectrumWithFile}, {"sun.csv", "wavelength_nm,irradiance\n280,nan\n400,1.5\n710,1\n"}},
       {"exp.yaml:8:", "spectrum.solar_spectrum.file", "sun.csv:2:"}},
      {"spectrum missing cell", {{"exp.yaml", kSun + kSpectrumWithFile}, {"sun.csv", "wavelength_nm,irradiance\n280,0.5\n400\n710,1\n"}},
       {"exp.yaml:8:", "spectrum.solar_spectrum.file", "sun.csv:3:"}},
      {"spectrum header only", {{"exp.yaml", kSun + kSpectrumWithFile}, {"sun.csv", "wavelength_nm,irradiance\n"}}, {"exp.yaml:8:", "spectrum.solar_spectrum.file", "sun.csv"}},
      {"spectrum one row", {{"exp.yaml", kSun + kSpectrumWithFile}, {"sun.csv", "wavelength_nm,irradiance\n500,1\n"}}, {"exp.yaml:8:", "spectrum.solar_spectrum.file", "sun.csv"}},
      {"spectrum no overlap with the grid", {{"exp.yaml", kSun + kSpectrumWithFile}, {"sun.csv", "wavelength_nm,irradiance\n1000,0.5\n2000,1.5\n"}},
       {"exp.yaml:8:", "spectrum.solar_spectrum.file", "covers"}},
      {"spectrum empty file", {{"exp.yaml", kSun + kSpectrumWithFile}, {"sun.csv", ""}}, {"exp.yaml:8:", "spectrum.solar_spectrum.file", "sun.csv"}},
      {"spectrum unknown column", {{"exp.yaml", kSun + kSpectrumWithFile}, {"sun.csv", "wavelength_nm,flux\n280,0.5\n710,1\n"}},
       {"exp.yaml:7:", "spectrum.solar_spectrum.column", "irradiance"}},
      {"spectrum binary garbage", {{"exp.yaml", kSun + kSpectrumWithFile}, {"sun.csv", bytes_garbage()}}, {"exp.yaml:8:", "spectrum.solar_spectrum.file", "sun.csv"}},
      // ----- scenario lists (sweep.scenario_file on line 5)
      {"scenario file a device", {{"exp.yaml", kSun + "aerosol: {type: urban_haze, optical_depth: 0.2}\nsweep:\n  scenario_file: /dev/zero\n"}},
       {"exp.yaml:5:", "sweep.scenario_file", "not a regular file"}},
      {"profile a device", {{"exp.yaml", kSun + "atmosphere:\n  profile: /dev/zero\n"}}, {"exp.yaml:4:", "atmosphere.profile", "not a regular file"}},
      {"scenario file missing", {{"exp.yaml", kSun + kScenarioSweep}}, {"exp.yaml:5:", "sweep.scenario_file", "list.csv"}},
      {"scenario text in a number", {{"exp.yaml", kSun + kScenarioSweep}, {"list.csv", "aerosol.optical_depth\n0.1\n0.2x\n"}},
       {"exp.yaml:5:", "sweep.scenario_file", "list.csv line 3"}},
      {"scenario NaN", {{"exp.yaml", kSun + kScenarioSweep}, {"list.csv", "aerosol.optical_depth\nnan\n"}}, {"exp.yaml:5:", "sweep.scenario_file", "list.csv line 2"}},
      {"scenario missing cell", {{"exp.yaml", kSun + kScenarioSweep}, {"list.csv", "aerosol.optical_depth,surface.albedo\n0.1,0.2\n0.3\n"}},
       {"exp.yaml:5:", "sweep.scenario_file", "list.csv line 3"}},
      {"scenario empty last cell", {{"exp.yaml", kSun + kScenarioSweep}, {"list.csv", "aerosol.optical_depth,surface.albedo\n0.1,\n"}},
       {"exp.yaml:5:", "sweep.scenario_file", "list.csv line 2"}},
      {"scenario extra cell", {{"exp.yaml", kSun + kScenarioSweep}, {"list.csv", "aerosol.optical_depth\n0.1,0.2\n"}},
       {"exp.yaml:5:", "sweep.scenario_file", "list.csv line 2"}},
      {"scenario header only", {{"exp.yaml", kSun + kScenarioSweep}, {"list.csv", "aerosol.optical_depth\n"}}, {"exp.yaml:5:", "sweep.scenario_file", "list.csv"}},
      {"scenario value out of range", {{"exp.yaml", kSun + kScenarioSweep}, {"list.csv", "sun.solar_zenith_deg\n10\n95\n"}},
       {"exp.yaml:5:", "sweep", "sun.solar_zenith_deg", "scenario 1"}},
      // ----- sweeps
      {"sweep of 10^12 scenarios",
       {{"exp.yaml", kSun + "sweep:\n  grid:\n    - {parameter: sun.solar_zenith_deg, range: {from: 0, to: 80, count: 1000000}}\n"
                            "    - {parameter: surface.albedo, range: {from: 0, to: 1, count: 1000000}}\n"}},
       {"exp.yaml:6:", "count", "100000000"}},
      {"sweep of 2^69 scenarios by lists",
       {{"exp.yaml", [] {
           std::string s = kSun + "surface: {albedo: 0.2}\nsweep:\n  grid:\n";
           // 8^23 = 2^69 scenarios: wraps to 0 in 64 bits without a checked product.
           for (int i = 0; i < 23; ++i) s += "    - {parameter: surface.albedo_direct, values: [0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8]}\n";
           return s;
         }()}},
       {"exp.yaml:", "sweep", "100000000"}},
      {"sweep parameter not in the file", {{"exp.yaml", kSun + "sweep:\n  grid:\n    - {parameter: sun.zenith, values: [10, 20]}\n"}}, {"exp.yaml:5:", "sweep", "zenith"}},
      {"sweep of an output key", {{"exp.yaml", kSun + "sweep:\n  grid:\n    - {parameter: output.spectral, values: [0, 1]}\n"}}, {"exp.yaml:5:", "sweep", "output.spectral"}},
      {"zip of unequal lengths",
       {{"exp.yaml", kSun + "sweep:\n  zip:\n    - {parameter: sun.solar_zenith_deg, values: [10, 20]}\n    - {parameter: surface.albedo, values: [0.1]}\n"}},
       {"exp.yaml:6:", "sweep.zip", "same length"}},
      {"sweep range count 0", {{"exp.yaml", kSun + "sweep:\n  grid:\n    - {parameter: sun.solar_zenith_deg, range: {from: 0, to: 1, count: 0}}\n"}}, {"exp.yaml:5:", "count"}},
      // ----- paths given on the command line
      {"experiment file missing", {}, {"exp.yaml", "no such file"}},
      {"experiment path a directory", {{"exp.yaml/keep", ""}}, {"exp.yaml", "directory"}},
      {"-o names a directory", {{"exp.yaml", kSun}, {"outdir/keep", ""}}, {"outdir", "directory"}, "run exp.yaml -q -o outdir"},
      {"--csv into a missing directory", {{"exp.yaml", kSun}}, {"nowhere", "does not exist"}, "run exp.yaml -q --csv nowhere/s.csv"},
  };
}

/// Files in `dir` that the case did not write itself.
std::vector<std::string> leftovers(const fs::path& dir, const std::vector<File>& inputs) {
  std::set<std::string> mine;
  for (const File& f : inputs) mine.insert(fs::path(f.name).begin()->string());
  std::vector<std::string> extra;
  for (const auto& e : fs::directory_iterator(dir))
    if (!mine.count(e.path().filename().string())) extra.push_back(e.path().filename().string());
  return extra;
}

void write_files(const fs::path& dir, const std::vector<File>& files) {
  for (const File& f : files) {
    const fs::path p = dir / f.name;
    fs::create_directories(p.parent_path());
    if (p.filename() == "keep") continue;  // only the directory is wanted
    std::ofstream(p, std::ios::binary) << f.text;
  }
}

}  // namespace

TEST_CASE("the bad-input catalogue: exit 2, file, line and key named, nothing left behind", "[app][catalogue]") {
  const std::vector<BadCase> cases = catalogue();
  REQUIRE(cases.size() >= 45);
  std::set<std::string> names;
  for (const BadCase& c : cases) {
    REQUIRE(names.insert(c.name).second);  // every row is distinct
    TempDir dir("catalogue");
    write_files(dir.path(), c.files);
    const Outcome o = invoke(dir.path(), c.args);
    INFO(c.name << "\n" << o.err);
    CHECK(o.code == 2);
    for (const std::string& e : c.expect) CHECK(o.err.find(e) != std::string::npos);
    // One message (the first line) and no crash report or sanitizer text.
    CHECK(o.err.find("Sanitizer") == std::string::npos);
    CHECK(o.err.find("terminate") == std::string::npos);
    CHECK(leftovers(dir.path(), c.files).empty());
  }
}

// Unreadable experiment, profile, spectrum and scenario files (permission bits, which do not stop
// root): tests/app/os_fault_test.cpp, run as an unprivileged user.

TEST_CASE("a byte order mark and CRLF line endings load like plain files", "[app][catalogue]") {
  const std::string bom = "\xEF\xBB\xBF";
  const auto crlf = [](std::string s) {
    std::string out;
    for (char ch : s) out += ch == '\n' ? std::string("\r\n") : std::string(1, ch);
    return out;
  };
  struct GoodCase {
    const char* name;
    std::vector<File> files;
  };
  const std::vector<GoodCase> cases = {
      {"experiment with BOM", {{"exp.yaml", bom + kSun}}},
      {"experiment with CRLF", {{"exp.yaml", crlf(kSun + "aerosol:\n  type: urban_haze\n  optical_depth: 0.1\n")}}},
      {"experiment with BOM and CRLF", {{"exp.yaml", bom + crlf(kSun + "surface:\n  albedo: 0.3\n")}}},
      {"profile with BOM and CRLF", {{"exp.yaml", kWithProfile}, {"prof.yaml", bom + crlf(profile(kGoodLevels))}}},
      {"spectrum with BOM and CRLF", {{"exp.yaml", kSun + kSpectrumWithFile}, {"sun.csv", bom + crlf(kGoodCsv)}}},
      {"scenario list with BOM and CRLF",
       {{"exp.yaml", crlf(kSun + kScenarioSweep)}, {"list.csv", bom + crlf("# two scenarios\naerosol.optical_depth, surface.albedo\n0.1, 0.2\n0.3, 0.4\n")}}},
  };
  for (const GoodCase& c : cases) {
    TempDir dir("catalogue_good");
    write_files(dir.path(), c.files);
    const Outcome o = invoke(dir.path(), "check exp.yaml");
    INFO(c.name << "\n" << o.err);
    CHECK(o.code == 0);
  }
  // The same values with and without CRLF give the same scenarios (check prints their count).
  TempDir dir("catalogue_crlf_run");
  write_files(dir.path(), {{"exp.yaml", crlf(kSun + kScenarioSweep)}, {"list.csv", crlf("aerosol.optical_depth\n0.1\n0.3\n")}});
  const Outcome o = invoke(dir.path(), "run exp.yaml -q -o out.h5");
  INFO(o.err);
  CHECK(o.code == 0);
  CHECK(fs::exists(dir / "out.h5"));
}
