#include "io/accuracy_file.hpp"

#include <cmath>

#include "io/hdf5_writer.hpp"
#include "io/result_file.hpp"
#include "version.hpp"

namespace solstrata::io {

void write_accuracy_file(const std::filesystem::path& path, const experiment::Experiment& e,
                         const std::vector<AccuracyCase>& cases, int streams) {
  const experiment::RunResult& first = cases.front().two_stream;
  const std::size_t nlev = first.n_levels, nb = first.n_bands + 1, nc = cases.size();
  Hdf5Writer w(path);
  w.add_dimension("case", nc);
  w.add_dimension("band", nb);
  w.add_dimension("level", nlev);
  w.add_dimension("layer", first.n_layers);
  std::vector<std::string> names = first.band_names;
  names.push_back("broadband");
  w.write("band_name", {"band"}, std::span<const std::string>(names), {"", "reporting band (the last is broadband)", ""});
  std::vector<int> idx;
  for (const AccuracyCase& c : cases) idx.push_back(static_cast<int>(c.scenario));
  w.write("scenario", {"case"}, std::span<const int>(idx), {"1", "scenario index in the experiment's sweep (0 for a single run)", ""});
  if (!first.level_pressure_hpa.empty()) {
    w.write("level_pressure", {"level"}, first.level_pressure_hpa, {"hPa", "air pressure at the level (of the first case)", "air_pressure"});
  }
  for (const char* q : {"direct_down", "diffuse_down", "up", "net_down"}) {
    std::vector<double> ts, ref, diff, rel;
    for (const AccuracyCase& c : cases) {
      const std::vector<double> a = experiment::band_and_broadband(c.two_stream, q), b = experiment::band_and_broadband(c.reference, q);
      const double toa = c.reference.toa_down;
      for (std::size_t i = 0; i < a.size(); ++i) {
        ts.push_back(a[i]);
        ref.push_back(b[i]);
        diff.push_back(a[i] - b[i]);
        rel.push_back(std::abs(b[i]) > 1e-6 * toa ? 100.0 * (a[i] - b[i]) / b[i] : 0.0);
      }
    }
    const std::string s(q);
    const std::vector<std::string> dims{"case", "band", "level"};
    w.write("two_stream_flux_" + s, dims, ts, {"W m-2", s + " flux, two-stream closure " + first.closure, ""});
    w.write("reference_flux_" + s, dims, ref, {"W m-2", s + " flux, multi-stream reference", ""});
    w.write("difference_flux_" + s, dims, diff, {"W m-2", s + " flux, two-stream minus reference", ""});
    w.write("relative_difference_flux_" + s, dims, rel, {"percent", s + " flux, (two-stream - reference) / reference (0 where the reference is below 1e-6 of the TOA flux)", ""});
  }
  if (!first.heating_rate.empty()) {
    std::vector<double> ts, ref, diff;
    for (const AccuracyCase& c : cases) {
      for (std::size_t l = 0; l < first.n_layers; ++l) {
        ts.push_back(c.two_stream.heating_rate[l]);
        ref.push_back(c.reference.heating_rate[l]);
        diff.push_back(c.two_stream.heating_rate[l] - c.reference.heating_rate[l]);
      }
    }
    w.write("two_stream_heating_rate", {"case", "layer"}, ts, {"K day-1", "shortwave heating rate, two-stream", ""});
    w.write("reference_heating_rate", {"case", "layer"}, ref, {"K day-1", "shortwave heating rate, multi-stream reference", ""});
    w.write("difference_heating_rate", {"case", "layer"}, diff, {"K day-1", "heating rate, two-stream minus reference", ""});
  }
  w.set_attribute("", "Conventions", "CF-1.8");
  w.set_attribute("", "title", "two-stream accuracy against the multi-stream reference: " + e.source.string());
  w.set_attribute("", "source", std::string("solstrata ") + kVersion);
  w.set_attribute("", "history", iso_timestamp_utc() + " created by solstrata accuracy");
  w.set_attribute("", "experiment", e.text);
  w.set_attribute("", "closure", first.closure);
  w.set_attribute("", "solar_spectrum", first.solar_description);
  if (!e.given_optics_mode) {
    std::string gases;
    for (const std::string& g : first.gas_tables) gases += (gases.empty() ? "" : "\n") + g;
    w.set_attribute("", "gas_tables", gases.empty() ? std::string("none (no gas absorption but ozone)") : gases);
    if (first.h2o_broadband) w.set_attribute("", "water_vapour_note", experiment::kH2oBroadbandNote);
  }
  w.set_attribute("", "reference", "discrete ordinates (Stamnes et al. 1988 formulation), Rayleigh and Henyey-Greenstein phase functions, delta-M, " +
                                       std::to_string(streams) + " streams");
  w.commit();
}

}  // namespace solstrata::io
