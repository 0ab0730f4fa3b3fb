// What a run's file says about its inputs: the aerosol as resolved and the gas tables.
#include "io/result_file.hpp"

#include <catch2/catch.hpp>
#include <variant>

#include "experiment/run.hpp"
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
