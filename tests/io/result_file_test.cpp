// What a run's file says about its inputs: the aerosol as resolved and the gas tables.
#include "io/result_file.hpp"

#include <catch2/catch.hpp>
#include <algorithm>
#include <fstream>
#include <string>
#include <utility>
#include <variant>
#include <vector>

#include "experiment/output_variables.hpp"
#include "experiment/run.hpp"
#include "io/result_fields.hpp"
#include "io/hdf5_reader.hpp"
#include "optics/aerosol.hpp"
#include "support/temp_dir.hpp"

using namespace solstrata;

TEST_CASE("the output file shows what the aerosol preset resolved to, its source, and the gas tables", "[io]") {
  const experiment::Experiment e = experiment::parse_experiment(
      "aerosol: {type: urban_haze, optical_depth: 0.3}\nsun: {solar_zenith_deg: 30}\n", "a.yaml", ".");
  const experiment::RunResult r = experiment::run_experiment(e);
  testing::TempDir d("result_file");
  io::write_result_file(d / "a.h5", e, r);
  const auto attrs = io::read_global_attributes(d / "a.h5");
  const optics::AerosolPreset p = optics::preset(optics::AerosolType::urban_haze);
  CHECK(io::text_attribute(attrs, "aerosol_type") == "urban_haze");
  // OPAC urban at RH 80 %: omega 0.82, g 0.69 (checkvalues section 10, from memory).
  CHECK(std::get<std::vector<double>>(attrs.at("aerosol_single_scattering_albedo")).at(0) == 0.82);
  CHECK(std::get<std::vector<double>>(attrs.at("aerosol_asymmetry_parameter")).at(0) == 0.69);
  CHECK(std::get<std::vector<double>>(attrs.at("aerosol_angstrom_exponent")).at(0) == p.angstrom);
  CHECK_THAT(io::text_attribute(attrs, "aerosol_preset_source"), Catch::Contains("Hess"));
  CHECK_THAT(io::text_attribute(attrs, "gas_tables"), Catch::Contains("H2O: ") && Catch::Contains("O2: ") &&
                                                          Catch::Contains("HITRAN2012"));
  CHECK_THAT(io::text_attribute(attrs, "gases_not_modelled"), Catch::Contains("CO2"));
  CHECK_THAT(io::text_attribute(attrs, "water_vapour_note"), Catch::Contains("approximate"));
}

namespace {
std::vector<std::string> csv_cells(const std::string& line) {
  // The summary's cells: plain numbers and names, and one quoted caution text (RFC 4180).
  std::vector<std::string> cells;
  std::string cell;
  bool quoted = false;
  for (char c : line) {
    if (c == '"') quoted = !quoted;
    else if (c == ',' && !quoted) cells.push_back(std::exchange(cell, {}));
    else cell += c;
  }
  cells.push_back(cell);
  return cells;
}
}  // namespace

TEST_CASE("the CSV summary carries DNI, PAR, UV index, a quality flag and the cautions", "[io]") {
  const experiment::Experiment e = experiment::parse_experiment("sun: {solar_zenith_deg: 50}\n", "c.yaml", ".");
  const experiment::RunResult r = experiment::run_experiment(e);
  testing::TempDir d("summary_csv");
  io::write_summary_csv(d / "s.csv", r);
  std::ifstream in(d / "s.csv");
  std::string line;
  std::getline(in, line);
  const std::vector<std::string> header = csv_cells(line);
  const auto col = [&](const std::string& name) {
    const auto it = std::find(header.begin(), header.end(), name);
    REQUIRE(it != header.end());
    return static_cast<std::size_t>(it - header.begin());
  };
  std::vector<std::vector<std::string>> rows;
  while (std::getline(in, line)) rows.push_back(csv_cells(line));
  REQUIRE(rows.size() == r.n_bands + 1);
  const auto& bb = rows.back();
  CHECK(bb[0] == "broadband");
  // The numbers are the result's, written as shortest round-trip text (csv_number).
  CHECK(std::stod(bb[col("direct_normal_W_m-2")]) == r.direct_normal);
  CHECK(std::stod(bb[col("par_W_m-2")]) == r.par_w_m2);
  CHECK(std::stod(bb[col("par_umol_m-2_s-1")]) == r.par_umol_m2_s);
  CHECK(std::stod(bb[col("uv_index")]) == r.uv_index);
  // DNI of a band: its direct flux on a horizontal surface over cos(zenith).
  const double band_dni = std::stod(rows[0][col("direct_normal_W_m-2")]);
  CHECK(band_dni == Approx(std::stod(rows[0][col("surface_direct_W_m-2")]) / r.mu0).epsilon(1e-15));
  CHECK(rows[0][col("uv_index")].empty());  // a broadband product
  for (const auto& row : rows) {
    REQUIRE(row.size() == header.size());
    CHECK(row[col("quality")] == "h2o_broadband");  // the built-in water-vapour table
    CHECK_THAT(row[col("caution")], Catch::Contains("not medical advice") && Catch::Contains("measured resource data"));
  }
}

TEST_CASE("output.variables writes the chosen variables and groups, and always the coordinates", "[io]") {
  const experiment::Experiment e = experiment::parse_experiment(
      "sun: {solar_zenith_deg: 30}\noutput:\n  variables: [bands, uv_index, spectral_flux_up]\n", "v.yaml", ".");
  CHECK(e.output.spectral);  // a spectral variable turns the per-bin output on
  const experiment::RunResult r = experiment::run_experiment(e);
  testing::TempDir d("selection");
  io::write_result_file(d / "v.h5", e, r);
  const std::vector<std::string> names = io::list_datasets(d / "v.h5");
  const auto has = [&](const std::string& n) { return std::find(names.begin(), names.end(), n) != names.end(); };
  for (const char* n : {"band_flux_up", "band_optical_depth_aerosol", "uv_index", "spectral_flux_up", "level", "layer",
                        "band", "wavelength", "wavelength_bounds", "bin_width", "band_lower", "level_pressure"}) {
    INFO(n);
    CHECK(has(n));
  }
  for (const char* n : {"flux_up", "heating_rate", "par_photon", "spectral_flux_direct_down", "solar_zenith_angle"}) {
    INFO(n);
    CHECK_FALSE(has(n));
  }
  // Every variable a file can hold belongs to a group, or is always written.
  std::size_t selectable = 0;
  for (const io::Field& f : io::result_fields(r)) selectable += experiment::output_group(f.name).empty() ? 0 : 1;
  // + the 3 sweep-only aerosol effects and the 8 variables of runs with a site, a time and a plane
  CHECK(selectable + 3 + 8 == std::size(experiment::kOutputVariables));
}
