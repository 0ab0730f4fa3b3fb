#include "io/result_file.hpp"

#include <chrono>
#include <ctime>
#include <vector>

#include "io/csv_writer.hpp"
#include "io/hdf5_writer.hpp"
#include "io/result_fields.hpp"
#include "version.hpp"

namespace solstrata::io {
namespace {

using experiment::RunResult;

}  // namespace

std::string iso_timestamp_utc() {
  const std::time_t t = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buf;
}

void write_global_attributes(Hdf5Writer& w, const experiment::Experiment& e, const RunResult& r) {
  w.set_attribute("", "Conventions", "CF-1.8");
  w.set_attribute("", "title", e.title.empty() ? std::string("solstrata run of ") + e.source.string() : e.title);
  w.set_attribute("", "source", std::string("solstrata ") + kVersion + ", plane-parallel two-stream shortwave radiative transfer");
  w.set_attribute("", "history", iso_timestamp_utc() + " created by solstrata " + kVersion + " from " + e.source.string());
  w.set_attribute("", "experiment_file", e.source.string());
  w.set_attribute("", "experiment", e.text);
  w.set_attribute("", "closure", r.closure);
  w.set_attribute("", "atmosphere_profile", e.given_optics_mode ? std::string("given_optics") : e.profile_origin);
  w.set_attribute("", "solar_spectrum", r.solar_description);
  w.set_attribute("", "solar_spectrum_approximate", r.solar_approximate ? 1 : 0);
  w.set_attribute("", "direct_beam_convention",
                  "direct = unscattered beam exp(-tau/mu0) of the unscaled optical depth; diffuse down = total down - direct "
                  "(forward scattering folded into the beam by delta scaling counts as diffuse)");
  w.set_attribute("", "caution", std::string(experiment::kSolarCaution) + " " + experiment::kUvCaution);
}

void add_result_dimensions(Hdf5Writer& w, const RunResult& r) {
  const ResultDims d = result_dims(r);
  w.add_dimension("level", d.level);
  w.add_dimension("layer", d.layer);
  w.add_dimension("band", d.band);
  if (d.wavelength > 0) {
    w.add_coordinate("wavelength", r.bin_center_nm, {"nm", "centre wavelength of the spectral bin", "radiation_wavelength"});
  }
}

void set_field_attributes(Hdf5Writer& w, const Field& f) {
  for (const auto& [k, v] : f.notes) w.set_attribute(f.name, k, v);
}

void write_result_file(const std::filesystem::path& path, const experiment::Experiment& e,
                       const RunResult& r) {
  Hdf5Writer w(path);
  add_result_dimensions(w, r);
  for (const Field& f : result_fields(r)) {
    const VariableAttributes a{f.units, f.long_name, f.standard_name};
    if (!f.texts.empty()) {
      w.write(f.name, f.dims, std::span<const std::string>(f.texts), a);
    } else {
      w.write(f.name, f.dims, std::span<const double>(f.values), a);
    }
    if (f.on_levels) w.set_attribute(f.name, "coordinates", "level_pressure");
    set_field_attributes(w, f);
  }
  write_global_attributes(w, e, r);
  w.commit();
}

void write_summary_csv(const std::filesystem::path& path, const RunResult& r) {
  CsvTable t({"band", "lower_nm", "upper_nm", "toa_down_W_m-2", "surface_direct_W_m-2",
              "surface_diffuse_W_m-2", "surface_global_W_m-2", "transmittance", "absorbed_atmosphere_W_m-2",
              "toa_up_W_m-2"});
  const std::size_t n = r.n_levels, s = n - 1;
  for (std::size_t b = 0; b <= r.n_bands; ++b) {
    const bool bb = b == r.n_bands;
    const auto at = [&](const std::vector<double>& band_v, const std::vector<double>& v, std::size_t lev) {
      return bb ? v[lev] : band_v[b * n + lev];
    };
    const double top = at(r.band_direct_down, r.direct_down, 0) + at(r.band_diffuse_down, r.diffuse_down, 0);
    const double dir = at(r.band_direct_down, r.direct_down, s), dif = at(r.band_diffuse_down, r.diffuse_down, s);
    const double net_top = at(r.band_net_down, r.net_down, 0), net_sfc = at(r.band_net_down, r.net_down, s);
    t.add_row({bb ? std::string("broadband") : r.band_names[b],
               csv_number(bb ? (r.bin_lower_nm.empty() ? 0.0 : r.bin_lower_nm.front()) : r.band_lower_nm[b]),
               csv_number(bb ? (r.bin_upper_nm.empty() ? 0.0 : r.bin_upper_nm.back()) : r.band_upper_nm[b]),
               csv_number(top), csv_number(dir), csv_number(dif), csv_number(dir + dif),
               csv_number(top > 0 ? (dir + dif) / top : 0.0), csv_number(net_top - net_sfc),
               csv_number(at(r.band_diffuse_up, r.diffuse_up, 0))});
  }
  t.write(path);
}

}  // namespace solstrata::io
