#include <algorithm>
#include "io/result_file.hpp"

#include <chrono>
#include <ctime>
#include <vector>

#include "io/csv_writer.hpp"
#include "io/hdf5_reader.hpp"
#include "io/hdf5_writer.hpp"
#include "io/result_file_detail.hpp"
#include "io/result_fields.hpp"
#include "io/sweep_file.hpp"
#include "version.hpp"

namespace solstrata::io {
namespace {

using experiment::RunResult;

}  // namespace
using detail::add_result_dimensions;
using detail::set_field_attributes;
using detail::write_global_attributes;

std::string iso_timestamp_utc() {
  const std::time_t t = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buf;
}

namespace detail {
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
  if (!e.given_optics_mode && e.aerosol.tau_ref > 0.0) {
    // The aerosol as resolved (a preset's values, or the user's), with the preset's source.
    w.set_attribute("", "aerosol_type", e.aerosol_type.empty() ? std::string("given in the experiment") : e.aerosol_type);
    w.set_attribute("", "aerosol_single_scattering_albedo", e.aerosol.omega);
    w.set_attribute("", "aerosol_asymmetry_parameter", e.aerosol.g);
    w.set_attribute("", "aerosol_angstrom_exponent", e.aerosol.alpha());
    if (const auto t = optics::parse_aerosol_type(e.aerosol_type)) {
      w.set_attribute("", "aerosol_preset_source", std::string(optics::preset(*t).source));
    }
  }
  if (!e.given_optics_mode) {
    std::string gases;
    for (const std::string& g : r.gas_tables) gases += (gases.empty() ? "" : "\n") + g;
    w.set_attribute("", "gas_tables", gases.empty() ? std::string("none (no gas absorption but ozone)") : gases);
    std::string missing;
    for (const std::string& g : r.gases_not_modelled) missing += (missing.empty() ? "" : ", ") + g;
    if (!missing.empty()) w.set_attribute("", "gases_not_modelled", missing + ": absorption by these gases is not modelled");
    if (r.h2o_broadband) w.set_attribute("", "water_vapour_note", experiment::kH2oBroadbandNote);
    w.set_attribute("", "spectral_points", static_cast<int>(r.n_points));
  }
  w.set_attribute("", "direct_beam_convention",
                  "direct = unscattered beam exp(-tau/mu0) of the unscaled optical depth; diffuse down = total down - direct "
                  "(forward scattering folded into the beam by delta scaling counts as diffuse)");
  w.set_attribute("", "caution", std::string(experiment::kSolarCaution) + " " + experiment::kUvCaution);
}
}  // namespace detail

namespace detail {
void add_result_dimensions(Hdf5Writer& w, const RunResult& r) {
  const ResultDims d = result_dims(r);
  w.add_dimension("level", d.level);
  w.add_dimension("layer", d.layer);
  w.add_dimension("band", d.band);
  if (d.wavelength > 0) {
    w.add_coordinate("wavelength", r.bin_center_nm, {"nm", "centre wavelength of the spectral bin", "radiation_wavelength"});
  }
}
}  // namespace detail

namespace detail {
void set_field_attributes(Hdf5Writer& w, const Field& f) {
  for (const auto& [k, v] : f.notes) w.set_attribute(f.name, k, v);
}
}  // namespace detail

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

std::string sweep_variable_name(const std::string& path) {
  std::string n;
  for (char c : path) {
    if (c == '.' || c == '[') n += '_';
    else if (c != ']') n += c;
  }
  return n;
}

std::uint64_t experiment_hash(const std::string& text, bool spectral) {
  const std::string extra = spectral ? "\n#spectral" : "\n#no-spectral";
  return fnv1a(extra.data(), extra.size(), fnv1a(text.data(), text.size()));
}

std::vector<double> scenario_record(const experiment::ScenarioResult& s, bool with_effect) {
  std::vector<double> v;
  for (const Field& f : result_fields(s.result)) {
    if (f.per_scenario && f.texts.empty()) v.insert(v.end(), f.values.begin(), f.values.end());
  }
  if (with_effect) {
    v.push_back(s.effect.toa);
    v.push_back(s.effect.surface);
    v.push_back(s.effect.atmosphere);
  }
  return v;
}

namespace {
/// Unit of a swept key, from the unit suffix of its name (the experiment keys state their unit).
std::string unit_of_key(const std::string& path) {
  const auto ends = [&](const char* s) {
    const std::string t(s);
    return path.size() >= t.size() && path.compare(path.size() - t.size(), t.size(), t) == 0;
  };
  if (ends("_deg")) return "degree";
  if (ends("_nm")) return "nm";
  if (ends("_hpa")) return "hPa";
  if (ends("_km")) return "km";
  if (ends("_du")) return "DU";
  if (ends("_ppmv")) return "ppmv";
  if (ends("_w_m2")) return "W m-2";
  return "1";
}
}  // namespace

void write_sweep_file(const std::filesystem::path& path, const experiment::Study& study,
                      const experiment::ScenarioResult& templ, const std::filesystem::path& checkpoint,
                      const CheckpointContents& contents, bool partial) {
  // netCDF's default fill value for doubles (NC_FILL_DOUBLE): readers show it as missing.
  constexpr double kFill = 9.9692099683868690e+36;
  const std::size_t n = study.size();
  if (study.is_time_series()) {
    write_time_series_file(path, study, templ, checkpoint, contents, partial);
    return;
  }
  const bool with_effect = study.computes_aerosol_effect();
  const std::vector<Field> fields = result_fields(templ.result);
  Hdf5Writer w(path);
  add_result_dimensions(w, templ.result);
  w.add_dimension("scenario", n);

  // Swept parameters as coordinates along the scenario dimension.
  std::string coords;
  // assignment(i) lists the parameters in parameters() order: one pass fills every column.
  const std::vector<const experiment::SweepParameter*> params = study.plan().parameters();
  std::vector<std::vector<double>> swept(params.size(), std::vector<double>(n));
  for (std::size_t i = 0; i < n; ++i) {
    const auto a = study.plan().assignment(i);
    for (std::size_t k = 0; k < params.size(); ++k) swept[k][i] = a[k].second;
  }
  for (std::size_t k = 0; k < params.size(); ++k) {
    const experiment::SweepParameter* p = params[k];
    const std::string name = sweep_variable_name(p->path);
    w.write(name, {"scenario"}, swept[k], {unit_of_key(p->path), "swept parameter " + p->path, ""});
    w.set_attribute(name, "parameter_path", p->path);
    coords += (coords.empty() ? "" : " ") + name;
  }

  // The same for every scenario: band table, bins.
  for (const Field& f : fields) {
    if (f.per_scenario) continue;
    const VariableAttributes a{f.units, f.long_name, f.standard_name};
    if (!f.texts.empty()) w.write(f.name, f.dims, std::span<const std::string>(f.texts), a);
    else w.write(f.name, f.dims, std::span<const double>(f.values), a);
  }

  // Per-scenario variables: small ones gathered and written whole, large ones row by row.
  struct Slot {
    const Field* f;
    std::size_t offset, size;
    bool rows;
    std::vector<double> buffer;
  };
  std::vector<Slot> slots;
  std::size_t offset = 0;
  constexpr std::size_t kRowThreshold = 2048;
  for (const Field& f : fields) {
    if (!f.per_scenario || !f.texts.empty()) continue;
    slots.push_back({&f, offset, f.values.size(), f.values.size() > kRowThreshold, {}});
    offset += f.values.size();
  }
  if (offset + (with_effect ? 3 : 0) != contents.header.record_values) {
    throw OutputError(checkpoint.string() + ": record layout does not match this experiment");
  }
  const auto dims_of = [](const Field& f) {
    std::vector<std::string> d{"scenario"};
    d.insert(d.end(), f.dims.begin(), f.dims.end());
    return d;
  };
  for (Slot& s : slots) {
    if (s.rows) w.define_rows(s.f->name, dims_of(*s.f), {s.f->units, s.f->long_name, s.f->standard_name});
    else s.buffer.reserve(s.size * n);
  }
  std::vector<double> toa(with_effect ? n : 0, kFill), sfc(with_effect ? n : 0, kFill), atm(with_effect ? n : 0, kFill);
  std::vector<int> complete(n, 0);
  for (std::size_t i = 0; i < n; ++i) {
    const auto it = contents.offsets.find(i);
    if (it == contents.offsets.end()) {
      if (!partial) throw OutputError(checkpoint.string() + ": scenario " + std::to_string(i) + " is missing");
      for (Slot& s : slots)
        if (!s.rows) s.buffer.insert(s.buffer.end(), s.size, kFill);
      continue;
    }
    complete[i] = 1;
    const std::vector<double> rec = read_checkpoint_record(checkpoint, it->second, contents.header.record_values);
    for (Slot& s : slots) {
      const std::span<const double> part(rec.data() + s.offset, s.size);
      if (s.rows) w.write_row(s.f->name, i, part);
      else s.buffer.insert(s.buffer.end(), part.begin(), part.end());
    }
    if (with_effect) {
      toa[i] = rec[offset];
      sfc[i] = rec[offset + 1];
      atm[i] = rec[offset + 2];
    }
  }
  for (Slot& s : slots) {
    if (!s.rows) w.write(s.f->name, dims_of(*s.f), s.buffer, {s.f->units, s.f->long_name, s.f->standard_name});
    const std::string c = coords + (s.f->on_levels ? " level_pressure" : "");
    if (!c.empty()) w.set_attribute(s.f->name, "coordinates", c);
    set_field_attributes(w, *s.f);
    // Scenarios still to run hold the fill value: say so, so that readers mask them.
    w.set_attribute(s.f->name, "_FillValue", kFill);
    w.set_attribute(s.f->name, "missing_value", kFill);
  }
  if (with_effect) {
    const char* sign = " (net downward flux with aerosol minus without; negative = the aerosol cools, positive = it warms)";
    w.write("aerosol_effect_toa", {"scenario"}, toa, {"W m-2", std::string("instantaneous aerosol radiative effect at the top of the atmosphere") + sign, ""});
    w.write("aerosol_effect_surface", {"scenario"}, sfc, {"W m-2", std::string("instantaneous aerosol radiative effect at the surface") + sign, ""});
    w.write("aerosol_effect_atmosphere", {"scenario"}, atm, {"W m-2", "instantaneous aerosol radiative effect in the atmosphere (TOA effect minus surface effect; positive = aerosol heats the air)", ""});
    for (const char* v : {"aerosol_effect_toa", "aerosol_effect_surface", "aerosol_effect_atmosphere"}) {
      if (!coords.empty()) w.set_attribute(v, "coordinates", coords);
      w.set_attribute(v, "_FillValue", kFill);
      w.set_attribute(v, "missing_value", kFill);
    }
  }
  w.write("scenario_complete", {"scenario"}, std::span<const int>(complete),
          {"1", "1 when the scenario's results are in this file, 0 while it is still to be run", ""});
  {
    const int flags[] = {0, 1};
    w.set_attribute("scenario_complete", "flag_values", std::span<const int>(flags));
    w.set_attribute("scenario_complete", "flag_meanings", "still_to_run complete");
  }
  write_global_attributes(w, study.base(), templ.result);
  w.set_attribute("", "sweep_scenarios", static_cast<int>(n));
  w.set_attribute("", "sweep_complete", partial && contents.offsets.size() < n ? 0 : 1);
  w.set_attribute("", "sweep_kind", study.plan().from_list ? "list" : "grid");
  std::vector<int> shape;
  std::string axes;
  for (const experiment::SweepAxis& a : study.plan().axes) {
    shape.push_back(static_cast<int>(a.size()));
    std::string names;
    for (const auto& p : a.parameters) names += (names.empty() ? "" : "+") + p.path;
    axes += (axes.empty() ? "" : " x ") + names;
  }
  w.set_attribute("", "sweep_shape", std::span<const int>(shape));
  w.set_attribute("", "sweep_axes", axes);
  w.set_attribute("", "sweep_layout",
                  "scenario index is row-major over sweep_axes (last axis fastest): reshape any (scenario, ...) "
                  "variable to sweep_shape + its other dimensions for an N-D grid");
  w.commit();
}

void write_sweep_summary_csv(const std::filesystem::path& sweep_file, const std::filesystem::path& csv,
                             const experiment::Study& study) {
  if (study.is_time_series()) {
    write_time_series_csv(sweep_file, csv, study);
    return;
  }
  std::vector<std::string> header{"scenario"};
  std::vector<std::vector<double>> columns;
  for (const experiment::SweepParameter* p : study.plan().parameters()) {
    header.push_back(p->path);
    columns.push_back(read_variable(sweep_file, sweep_variable_name(p->path)).values);
  }
  const std::vector<std::string> present = list_datasets(sweep_file);
  for (const char* v : {"global_horizontal_irradiance", "direct_normal_irradiance", "diffuse_horizontal_irradiance",
                        "toa_flux_up", "planetary_albedo", "absorbed_atmosphere", "par_photon", "uv_index",
                        "aerosol_effect_toa", "aerosol_effect_surface", "aerosol_effect_atmosphere"}) {
    if (std::find(present.begin(), present.end(), v) == present.end()) continue;
    const StoredVariable sv = read_variable(sweep_file, v);
    std::string name(v);
    if (sv.attributes.count("units")) {
      name += '_';
      name += text_attribute(sv.attributes, "units");
    }
    header.push_back(std::move(name));
    columns.push_back(sv.values);
  }
  for (std::string& h : header) {
    for (char& c : h) if (c == ' ') c = '_';
  }
  CsvTable t(header);
  for (std::size_t i = 0; i < study.size(); ++i) {
    std::vector<double> row{static_cast<double>(i)};
    for (const auto& c : columns) row.push_back(c[i]);
    t.add_row(row);
  }
  t.write(csv);
}

void write_summary_csv(const std::filesystem::path& path, const RunResult& r) {
  CsvTable t({"band", "lower_nm", "upper_nm", "toa_down_W_m-2", "surface_direct_W_m-2",
              "surface_diffuse_W_m-2", "surface_global_W_m-2", "transmittance", "absorbed_atmosphere_W_m-2",
              "toa_up_W_m-2"});
  for (const experiment::BandSummary& x : experiment::band_summary(r)) {
    t.add_row({x.name, csv_number(x.lower_nm), csv_number(x.upper_nm), csv_number(x.toa_down),
               csv_number(x.surface_direct), csv_number(x.surface_diffuse), csv_number(x.surface_global),
               csv_number(x.transmittance), csv_number(x.absorbed_atmosphere), csv_number(x.toa_up)});
  }
  t.write(path);
}

}  // namespace solstrata::io
