#include "io/hdf5_writer.hpp"

#include <H5Cpp.h>
#include <hdf5_hl.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <vector>

#include "io/hdf5_reader.hpp"
#include "support/temp_dir.hpp"

using namespace solstrata::io;
using solstrata::testing::TempDir;

namespace {

// An invented three-level, two-layer, two-band column (not a physical result).
const std::vector<double> kLevelPressure = {100.0, 500.0, 1000.0};     // hPa
const std::vector<double> kBandCentre = {400.0, 550.0};                // nm
const std::vector<double> kFluxDown = {1.5, 2.5, 3.5, 4.5, 5.5, 6.5};  // W m-2, [band][level]
const std::vector<double> kOpticalDepth = {0.1, 0.2, 0.3, 0.4};        // 1, [band][layer]
const std::vector<int> kLayerIndex = {0, 1};
const std::vector<std::string> kBandName = {"blue", "green, with comma"};

/// Writes the invented example file with every kind of content.
void write_example(const std::filesystem::path& path) {
  Hdf5Writer w(path);
  w.add_coordinate("level", kLevelPressure, {"hPa", "air pressure at level", "air_pressure"});
  w.add_dimension("layer", 2);
  w.add_coordinate("band", kBandCentre, {"nm", "central wavelength of band", ""});
  w.write("flux_down", {"band", "level"}, std::span<const double>(kFluxDown),
          {"W m-2", "downward flux at level", "downwelling_shortwave_flux_in_air"});
  w.write("optical_depth", {"band", "layer"}, std::span<const double>(kOpticalDepth),
          {"1", "optical depth of layer", ""});
  w.write("layer_index", {"layer"}, std::span<const int>(kLayerIndex),
          {"1", "index of layer from the top", ""});
  w.write("band_name", {"band"}, std::span<const std::string>(kBandName), {"", "name of band", ""});
  const double cos_zenith = 0.5;
  w.write("cos_zenith", {}, std::span<const double>(&cos_zenith, 1),
          {"1", "cosine of solar zenith angle", ""});
  w.set_attribute("", "title", "invented example column");
  w.set_attribute("", "Conventions", "CF-1.8");
  w.set_attribute("", "solar_constant", 1361.0);
  w.set_attribute("", "scenario_count", 1);
  w.set_attribute("", "comment", "");
  w.set_attribute("flux_down", "cell_methods", "band: sum");
  w.commit();
}

double number(const std::map<std::string, AttributeValue>& a, const std::string& name) {
  const auto& v = std::get<std::vector<double>>(a.at(name));
  REQUIRE(v.size() == 1);
  return v[0];
}

}  // namespace

TEST_CASE("variables and attributes read back with their dimensions", "[io]") {
  TempDir dir("h5");
  const auto path = dir / "example.h5";
  write_example(path);
  CHECK(dir.files() == std::vector<std::string>{"example.h5"});

  // Creation order is kept (netCDF-4 tracks it), so ncdump lists in the order written.
  CHECK(list_datasets(path) == std::vector<std::string>{"level", "layer", "band", "flux_down",
                                                        "optical_depth", "layer_index", "band_name",
                                                        "cos_zenith"});
  const StoredVariable flux = read_variable(path, "flux_down");
  CHECK(flux.dimensions == std::vector<std::string>{"band", "level"});
  CHECK(flux.shape == std::vector<std::size_t>{2, 3});
  CHECK(flux.values == kFluxDown);
  CHECK(text_attribute(flux.attributes, "units") == "W m-2");
  CHECK(text_attribute(flux.attributes, "long_name") == "downward flux at level");
  CHECK(text_attribute(flux.attributes, "standard_name") == "downwelling_shortwave_flux_in_air");
  CHECK(text_attribute(flux.attributes, "cell_methods") == "band: sum");

  const StoredVariable tau = read_variable(path, "optical_depth");
  CHECK(tau.dimensions == std::vector<std::string>{"band", "layer"});
  CHECK(tau.values == kOpticalDepth);
  CHECK(tau.attributes.count("standard_name") == 0);

  const StoredVariable level = read_variable(path, "level");
  CHECK(level.dimensions == std::vector<std::string>{"level"});
  CHECK(level.values == kLevelPressure);
  CHECK(text_attribute(level.attributes, "CLASS") == "DIMENSION_SCALE");
  CHECK(text_attribute(level.attributes, "NAME") == "level");

  const StoredVariable layer = read_variable(path, "layer");
  CHECK_THAT(text_attribute(layer.attributes, "NAME"),
             Catch::StartsWith("This is a netCDF dimension but not a netCDF variable."));

  CHECK(read_variable(path, "layer_index").values == std::vector<double>{0, 1});
  CHECK(read_variable(path, "band_name").texts == kBandName);
  const StoredVariable mu0 = read_variable(path, "cos_zenith");
  CHECK(mu0.shape.empty());
  CHECK(mu0.values == std::vector<double>{0.5});

  const auto global = read_global_attributes(path);
  CHECK(text_attribute(global, "title") == "invented example column");
  CHECK(text_attribute(global, "Conventions") == "CF-1.8");
  CHECK(text_attribute(global, "comment").empty());
  CHECK(number(global, "solar_constant") == 1361.0);
  CHECK(number(global, "scenario_count") == 1.0);
}

TEST_CASE("the file uses the HDF5 types and scales netCDF-4 expects", "[io]") {
  // Checked with the HDF5 C++ API directly, independently of the io module's reader. The
  // expected layout is the netCDF-4 format's (Unidata netCDF-4 format notes; from memory):
  // text attributes are scalar fixed-length NUL-terminated ASCII strings, dimensions are
  // dimension scales attached to each variable.
  TempDir dir("h5");
  const auto path = dir / "example.h5";
  write_example(path);
  H5::H5File file(path.string(), H5F_ACC_RDONLY);
  const H5::DataSet flux = file.openDataSet("flux_down");
  const H5::Attribute units = flux.openAttribute("units");
  CHECK(units.getSpace().getSimpleExtentType() == H5S_SCALAR);
  const H5::StrType type = units.getStrType();
  CHECK_FALSE(type.isVariableStr());
  CHECK(type.getSize() == std::string("W m-2").size());
  CHECK(type.getStrpad() == H5T_STR_NULLTERM);
  CHECK(type.getCset() == H5T_CSET_ASCII);

  const H5::DataSet band = file.openDataSet("band");
  const H5::DataSet level = file.openDataSet("level");
  const H5::DataSet layer = file.openDataSet("layer");
  CHECK(H5DSis_scale(band.getId()) > 0);
  CHECK(H5DSis_scale(layer.getId()) > 0);
  CHECK(H5DSis_scale(flux.getId()) == 0);
  CHECK(H5DSis_attached(flux.getId(), band.getId(), 0) > 0);
  CHECK(H5DSis_attached(flux.getId(), level.getId(), 1) > 0);
  CHECK(H5DSis_attached(flux.getId(), level.getId(), 0) == 0);
  CHECK(H5DSget_num_scales(flux.getId(), 0) == 1);
}

TEST_CASE("ncdump opens the file as a netCDF-4 dataset", "[io]") {
  if (!solstrata::testing::have_program("ncdump")) {
    WARN("ncdump not found (Debian package netcdf-bin): the netCDF-C check is skipped");
    return;
  }
  TempDir dir("h5");
  const auto path = dir / "example.h5";
  write_example(path);
  // netCDF-C is an independent reader: it must find our dimensions (not phony_dim_N), variables
  // over them, their units and the global attributes.
  const auto header = solstrata::testing::run_command("ncdump -h " + path.string());
  INFO(header.output);
  REQUIRE(header.status == 0);
  const std::vector<std::string> expected = {
      "netcdf example {",
      "dimensions:\n\tlevel = 3 ;\n\tlayer = 2 ;\n\tband = 2 ;",
      "\tdouble level(level) ;\n\t\tlevel:units = \"hPa\" ;",
      "\tdouble flux_down(band, level) ;\n\t\tflux_down:units = \"W m-2\" ;\n"
      "\t\tflux_down:long_name = \"downward flux at level\" ;\n"
      "\t\tflux_down:standard_name = \"downwelling_shortwave_flux_in_air\" ;",
      "\tdouble optical_depth(band, layer) ;",
      "\tint layer_index(layer) ;",
      "\tstring band_name(band) ;",
      "\tdouble cos_zenith ;",
      "\t\t:title = \"invented example column\" ;",
      "\t\t:solar_constant = 1361. ;",
      "\t\t:scenario_count = 1 ;",
  };
  for (const std::string& text : expected) CHECK_THAT(header.output, Catch::Contains(text));
  CHECK_THAT(header.output, !Catch::Contains("phony_dim"));

  const auto data = solstrata::testing::run_command("ncdump -v level,band_name " + path.string());
  REQUIRE(data.status == 0);
  CHECK_THAT(data.output, Catch::Contains("level = 100, 500, 1000 ;"));
  CHECK_THAT(data.output, Catch::Contains("band_name = \"blue\", \"green, with comma\" ;"));
}

TEST_CASE("h5py sees the dimension scales of each variable", "[io]") {
  // h5py (the reader under xarray's h5netcdf engine) is a second independent reader. Debian's
  // python3-h5py lives in the system interpreter, which may not be the first python3 on PATH.
  std::string python;
  for (const std::string candidate : {"python3", "/usr/bin/python3"}) {
    if (solstrata::testing::run_command(candidate + " -c 'import h5py'").status == 0) {
      python = candidate;
      break;
    }
  }
  if (python.empty()) {
    WARN("no python3 with h5py found (Debian package python3-h5py): the h5py check is skipped");
    return;
  }
  TempDir dir("h5");
  const auto path = dir / "example.h5";
  write_example(path);
  const auto result = solstrata::testing::run_command(
      python +
      " -c \"import h5py,sys; f=h5py.File(sys.argv[1],'r'); v=f['flux_down']; "
      "print([list(d.keys()) for d in v.dims], v.attrs['units'].decode(), "
      "h5py.h5ds.is_scale(f['layer'].id), list(f['level'][:]))\" " +
      path.string());
  INFO(result.output);
  REQUIRE(result.status == 0);
  CHECK(result.output == "[['band'], ['level']] W m-2 True [100.0, 500.0, 1000.0]\n");
}

TEST_CASE("rows along a growing dimension can be written in any order", "[io]") {
  TempDir dir("h5");
  const auto path = dir / "rows.h5";
  {
    Hdf5Writer w(path);
    w.add_growing_dimension("scenario");
    w.add_coordinate("level", kLevelPressure, {"hPa", "air pressure at level", "air_pressure"});
    w.define_rows("flux_up", {"scenario", "level"}, {"W m-2", "upward flux at level", ""});
    w.define_rows("flux_net", {"scenario", "level"}, {"W m-2", "net flux at level", ""});
    w.write_row("flux_up", 2, std::vector<double>{7, 8, 9});
    w.write_row("flux_up", 0, std::vector<double>{1, 2, 3});
    w.flush();
    CHECK(w.dimension_size("scenario") == 3);
    CHECK_THROWS_WITH(w.write_row("flux_up", 1, std::vector<double>{1, 2}),
                      Catch::Contains("row has 2 values, expected 3"));
    w.commit();
  }
  const StoredVariable up = read_variable(path, "flux_up");
  CHECK(up.dimensions == std::vector<std::string>{"scenario", "level"});
  CHECK(up.shape == std::vector<std::size_t>{3, 3});
  // Row 1 was never written: it holds netCDF's default double fill value (NC_FILL_DOUBLE,
  // from memory 9.9692099683868690e+36); ncdump below confirms by printing it as missing, '_'.
  const double fill = 9.9692099683868690e+36;
  CHECK(up.values == std::vector<double>{1, 2, 3, fill, fill, fill, 7, 8, 9});
  // Every variable along the growing dimension grows with it.
  CHECK(read_variable(path, "flux_net").shape == std::vector<std::size_t>{3, 3});
  if (solstrata::testing::have_program("ncdump")) {
    const auto dump = solstrata::testing::run_command("ncdump -v flux_up " + path.string());
    INFO(dump.output);
    REQUIRE(dump.status == 0);
    CHECK_THAT(dump.output, Catch::Contains("scenario = UNLIMITED ; // (3 currently)"));
    CHECK_THAT(dump.output, Catch::Contains("1, 2, 3,\n  _, _, _,\n  7, 8, 9 ;"));
  }
}

TEST_CASE("rows along a fixed dimension are checked against its size", "[io]") {
  TempDir dir("h5");
  const auto path = dir / "fixed_rows.h5";
  Hdf5Writer w(path);
  w.add_dimension("scenario", 2);
  w.add_dimension("band", 2);
  w.define_rows("albedo", {"scenario", "band"}, {"1", "surface albedo", "surface_albedo"});
  w.write_row("albedo", 1, std::vector<double>{0.2, 0.3});
  CHECK_THROWS_WITH(w.write_row("albedo", 2, std::vector<double>{0.2, 0.3}),
                    Catch::Contains("row 2 is beyond dimension 'scenario' of size 2"));
  CHECK_THROWS_WITH(w.write_row("nothing", 0, std::vector<double>{0.2, 0.3}),
                    Catch::Contains("not a row variable"));
  w.commit();
  CHECK(read_variable(path, "albedo").values[3] == 0.3);
}

TEST_CASE("a writer that fails or is abandoned leaves no file", "[io]") {
  TempDir dir("h5");
  const auto path = dir / "result.h5";
  SECTION("an exception while writing") {
    try {
      Hdf5Writer w(path);
      w.add_dimension("band", 2);
      CHECK(std::filesystem::exists(w.temp_path()));
      CHECK_FALSE(std::filesystem::exists(path));
      w.write("flux", {"band"}, std::span<const double>(kFluxDown), {"W m-2", "flux", ""});
      FAIL("six values over a dimension of two were accepted");
    } catch (const OutputError& e) {
      CHECK_THAT(e.what(), Catch::Contains("has 6 values but its dimensions band(2) need 2"));
    }
    CHECK(dir.files().empty());
  }
  SECTION("destroyed without commit") {
    {
      Hdf5Writer w(path);
      w.add_dimension("band", 2);
    }
    CHECK(dir.files().empty());
  }
  SECTION("an existing file survives a failed rewrite and is replaced by a committed one") {
    write_example(path);
    try {
      Hdf5Writer w(path);
      w.add_dimension("band", 2);
      w.write("flux", {"band"}, std::vector<double>{1.0, std::nan("")}, {"W m-2", "flux", ""});
    } catch (const OutputError&) {
    }
    CHECK(dir.files() == std::vector<std::string>{"result.h5"});
    CHECK(read_variable(path, "flux_down").values == kFluxDown);
    {
      Hdf5Writer w(path);
      w.add_dimension("band", 2);
      w.write("flux", {"band"}, std::vector<double>{1.0, 2.0}, {"W m-2", "flux", ""});
      w.commit();
    }
    CHECK(list_datasets(path) == std::vector<std::string>{"band", "flux"});
  }
}

TEST_CASE("a long multi-line text attribute, such as a whole experiment file, is kept", "[io]") {
  // Attributes over 64 KiB do not fit HDF5's compact attribute storage; the file must switch to
  // dense storage (it does, because attribute creation order is tracked).
  TempDir dir("h5");
  const auto path = dir / "provenance.h5";
  std::string text;
  for (int i = 0; text.size() < 100000; ++i)
    text += "key_" + std::to_string(i) + ": " + std::to_string(i * 0.5) + "\n";
  {
    Hdf5Writer w(path);
    w.add_dimension("scenario", 1);
    w.set_attribute("", "experiment_text", text);
    w.commit();
  }
  CHECK(text_attribute(read_global_attributes(path), "experiment_text") == text);
}

TEST_CASE("misuse of the writer is reported with the file and variable", "[io]") {
  TempDir dir("h5");
  const auto path = dir / "bad.h5";
  Hdf5Writer w(path);
  w.add_dimension("band", 2);
  const std::vector<double> two = {1.0, 2.0};
  const VariableAttributes ok = {"W m-2", "flux", ""};
  CHECK_THROWS_WITH(w.write("flux", {"wavelength"}, std::span<const double>(two), ok),
                    Catch::Contains("variable 'flux': unknown dimension 'wavelength'"));
  CHECK_THROWS_WITH(w.write("flux", {"band"}, std::vector<double>{1.0, HUGE_VAL}, ok),
                    Catch::Contains("value [1] is inf; outputs must be finite"));
  CHECK_THROWS_WITH(w.write("flux", {"band"}, std::span<const double>(two), {"", "flux", ""}),
                    Catch::Contains("needs units"));
  CHECK_THROWS_WITH(w.write("flux", {"band"}, std::span<const double>(two), {"1", "", ""}),
                    Catch::Contains("needs a long_name"));
  CHECK_THROWS_WITH(w.write("2flux", {"band"}, std::span<const double>(two), ok),
                    Catch::Contains("invalid name"));
  CHECK_THROWS_WITH(w.write("flux", {"band", "band"}, std::span<const double>(two), ok),
                    Catch::Contains("listed twice"));
  w.write("flux", {"band"}, std::span<const double>(two), ok);
  CHECK_THROWS_WITH(w.write("flux", {"band"}, std::span<const double>(two), ok),
                    Catch::Contains("already written"));
  CHECK_THROWS_WITH(w.add_dimension("band", 3), Catch::Contains("already written"));
  CHECK_THROWS_WITH(w.add_dimension("empty", 0), Catch::Contains("at least 1 point"));
  CHECK_THROWS_WITH(w.set_attribute("flux", "CLASS", "x"), Catch::Contains("reserved"));
  CHECK_THROWS_WITH(w.set_attribute("missing", "note", "x"), Catch::Contains("no such variable"));
  CHECK_THROWS_WITH(w.set_attribute("band", "note", "x"),
                    Catch::Contains("dimension without coordinate values"));
  CHECK_THROWS_WITH(w.set_attribute("", "bad name", "x"),
                    Catch::Contains("invalid attribute name"));
  CHECK_THROWS_AS(read_variable(dir / "absent.h5", "x"), OutputError);
  w.commit();
  CHECK_THROWS_WITH(w.add_dimension("late", 1), Catch::Contains("writer is closed"));
  CHECK_THROWS_AS(read_variable(path, "absent_variable"), OutputError);
}

TEST_CASE("a text coordinate variable labels its dimension for netCDF-C and h5py", "[io]") {
  TempDir dir("hdf5_text_coordinate");
  const auto path = dir / "labels.h5";
  {
    Hdf5Writer w(path);
    w.add_coordinate("band", std::span<const std::string>(kBandName), {"", "name of band", ""});
    w.write("flux", {"band"}, std::span<const double>(kBandCentre), {"W m-2", "flux in band", ""});
    w.commit();
  }
  const StoredVariable band = read_variable(path, "band");
  CHECK(band.texts == kBandName);
  CHECK(read_variable(path, "flux").dimensions == std::vector<std::string>{"band"});
  if (solstrata::testing::have_program("ncdump")) {
    // netCDF-C reads it as a string coordinate variable of its own dimension.
    const auto dump = solstrata::testing::run_command("ncdump " + path.string());
    REQUIRE(dump.status == 0);
    CHECK_THAT(dump.output, Catch::Contains("band = 2 ;") && Catch::Contains("string band(band) ;") &&
                                Catch::Contains("band = \"blue\", \"green, with comma\" ;"));
  }
  Hdf5Writer bad(dir / "bad.h5");
  CHECK_THROWS_AS(bad.add_coordinate("band", std::span<const std::string>(), {"", "empty", ""}), OutputError);
}
