#include <algorithm>
#include "io/result_file.hpp"

#include <chrono>
#include <ctime>
#include <variant>
#include <vector>

#include "io/csv_writer.hpp"
#include "io/hdf5_reader.hpp"
#include "io/hdf5_writer.hpp"
#include "io/result_file_detail.hpp"
#include "io/result_fields.hpp"
#include "io/sweep_file.hpp"
#include "experiment/output_variables.hpp"
#include "version.hpp"

namespace solstrata::io {
namespace {

using experiment::RunResult;

/// The quality column of the CSV summaries: "ok", or the notes that qualify the values, joined by
/// ';' (approximate_solar_spectrum: the built-in Planck spectrum, PAR and UV index indicative;
/// h2o_broadband: the built-in water-vapour table, spectral detail in the near infrared approximate).
std::string quality_flags(bool solar_approximate, bool h2o_broadband) {
  std::string q;
  if (solar_approximate) q = "approximate_solar_spectrum";
  if (h2o_broadband) q += std::string(q.empty() ? "" : ";") + "h2o_broadband";
  return q.empty() ? "ok" : q;
}

/// The caution column of the CSV summaries (the same text as the files' global "caution").
std::string caution_text() { return std::string(experiment::kSolarCaution) + " " + experiment::kUvCaution; }

}  // namespace
using detail::add_result_dimensions;
using detail::RecordRows;
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
  w.set_attribute("", "solver_precision", e.reference_solver ? "double" : e.single_precision ? "float" : "double");
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
  w.add_dimension("nv", 2);  // the two edges of a cell, for CF bounds variables
  if (r.level_pressure_hpa.size() == d.level && d.layer + 1 == d.level) {
    // Coordinate variables in pressure, so that readers index levels and layers by pressure.
    const std::vector<double>& p = r.level_pressure_hpa;
    w.add_coordinate("level", p, {"hPa", "air pressure at the level (level 0 = top of atmosphere)", "air_pressure"});
    w.set_attribute("level", "positive", "down");
    w.set_attribute("level", "axis", "Z");
    std::vector<double> mid(d.layer), bounds(2 * d.layer);
    for (std::size_t l = 0; l < d.layer; ++l) {
      mid[l] = 0.5 * (p[l] + p[l + 1]);
      bounds[2 * l] = p[l];
      bounds[2 * l + 1] = p[l + 1];
    }
    w.add_coordinate("layer", mid, {"hPa", "air pressure in the middle of the layer (mean of its two level pressures)", "air_pressure"});
    w.set_attribute("layer", "positive", "down");
    w.set_attribute("layer", "bounds", "layer_bounds");
    w.write("layer_bounds", {"layer", "nv"}, bounds, {"hPa", "air pressure at the top and at the bottom of the layer", ""});
  } else {
    w.add_dimension("level", d.level);
    w.add_dimension("layer", d.layer);
  }
  w.add_coordinate("band", std::span<const std::string>(r.band_names), {"", "name of the reporting band", ""});
  if (d.wavelength > 0) {
    w.add_coordinate("wavelength", r.bin_center_nm, {"nm", "centre wavelength of the spectral bin", "radiation_wavelength"});
    w.set_attribute("wavelength", "bounds", "wavelength_bounds");
  }
}
}  // namespace detail

namespace detail {
void set_field_attributes(Hdf5Writer& w, const Field& f) {
  for (const auto& [k, v] : f.notes) w.set_attribute(f.name, k, v);
  if (f.has_fill) {
    w.set_attribute(f.name, "_FillValue", kFillValue);
    w.set_attribute(f.name, "missing_value", kFillValue);
  }
}

RecordRows::RecordRows(Hdf5Writer& w, const std::vector<Field>& fields, const std::string& leading_dimension,
                       const std::vector<std::string>& chosen, bool deferred)
    : w_(w), deferred_(deferred) {
  for_each_record_field(fields, [&](const Field& f, std::size_t offset) {
    slots_.push_back({&f, offset, f.values.size(), experiment::output_selected(chosen, f.name), {}});
    values_ = offset + f.values.size();
  });
  for (const Slot& s : slots_) {
    if (!s.keep) continue;
    std::vector<std::string> dims{leading_dimension};
    dims.insert(dims.end(), s.f->dims.begin(), s.f->dims.end());
    w_.define_rows(s.f->name, dims, {s.f->units, s.f->long_name, s.f->standard_name});
  }
  block_ = std::max<std::size_t>(1, (std::size_t{8} << 20) / std::max<std::size_t>(1, values_));
}

std::size_t RecordRows::offset_of(const std::string& name) const {
  for (const Slot& s : slots_)
    if (s.f->name == name) return s.offset;
  throw OutputError("no per-scenario variable '" + name + "' in the record");
}

bool RecordRows::has(const std::string& name) const {
  for (const Slot& s : slots_)
    if (s.f->name == name) return true;
  return false;
}

void RecordRows::add(const double* record) {
  if (deferred_) {
    ++rows_;
    return;
  }
  if (rows_ - block_start_ == block_) flush();
  for (Slot& s : slots_) {
    if (!s.keep) continue;
    if (record) s.buffer.insert(s.buffer.end(), record + s.offset, record + s.offset + s.size);
    else s.buffer.insert(s.buffer.end(), s.size, kFill);
  }
  ++rows_;
}

void RecordRows::flush() {
  for (Slot& s : slots_) {
    if (!s.keep || s.buffer.empty()) continue;
    w_.write_rows(s.f->name, block_start_, s.buffer);
    s.buffer.clear();
  }
  block_start_ = rows_;
}

void RecordRows::finish(const std::string& coordinates) {
  flush();
  for (const Slot& s : slots_) {
    if (!s.keep) continue;
    std::string c = coordinates;
    if (s.f->on_levels) c += (c.empty() ? "" : " ") + std::string("level_pressure");
    if (!c.empty()) w_.set_attribute(s.f->name, "coordinates", c);
    set_field_attributes(w_, *s.f);
    // Rows still to run hold the fill value: say so, so that readers mask them.
    w_.set_attribute(s.f->name, "_FillValue", kFill);
    w_.set_attribute(s.f->name, "missing_value", kFill);
  }
}
}  // namespace detail

void write_result_file(const std::filesystem::path& path, const experiment::Experiment& e,
                       const RunResult& r) {
  Hdf5Writer w(path);
  add_result_dimensions(w, r);
  for (const Field& f : result_fields(r)) {
    if (!experiment::output_selected(e.output.variables, f.name)) continue;
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

namespace {
/// The aerosol radiative effects: three values after the fields in a record.
constexpr const char* kEffectNames[3] = {"aerosol_effect_toa", "aerosol_effect_surface", "aerosol_effect_atmosphere"};

/// The sweep file, from `checkpoint` and `contents`, or (both null) its skeleton with the rows of
/// the per-scenario variables deferred to the ranks of an MPI run (`granule`).
void write_sweep(const std::filesystem::path& path, const experiment::Study& study,
                 const experiment::ScenarioResult& templ, const std::filesystem::path* checkpoint_path,
                 const CheckpointContents* contents_ptr, bool partial, std::size_t granule) {
  // netCDF's default fill value for doubles (NC_FILL_DOUBLE): readers show it as missing.
  constexpr double kFill = detail::kFill;
  const bool deferred = contents_ptr == nullptr;
  const std::vector<std::string>& chosen = study.base().output.variables;
  const std::size_t n = study.size();
  const bool with_effect = study.computes_aerosol_effect();
  const std::vector<Field> fields = result_fields(templ.result);
  Hdf5Writer w(path);
  if (deferred) w.defer_rows_to_ranks(granule);
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
    if (f.per_scenario || !experiment::output_selected(chosen, f.name)) continue;
    const VariableAttributes a{f.units, f.long_name, f.standard_name};
    if (!f.texts.empty()) w.write(f.name, f.dims, std::span<const std::string>(f.texts), a);
    else w.write(f.name, f.dims, std::span<const double>(f.values), a);
    set_field_attributes(w, f);
  }

  // Per-scenario variables, written in blocks of scenarios.
  RecordRows rows(w, fields, "scenario", chosen, deferred);
  const std::size_t offset = rows.record_values();
  std::vector<double> toa(with_effect ? n : 0, kFill), sfc(with_effect ? n : 0, kFill), atm(with_effect ? n : 0, kFill);
  std::vector<int> complete(n, deferred ? 1 : 0);
  const CheckpointContents empty;
  const CheckpointContents& contents = deferred ? empty : *contents_ptr;
  const std::filesystem::path checkpoint = deferred ? std::filesystem::path() : *checkpoint_path;
  if (!deferred && offset + (with_effect ? 3 : 0) != contents.header.record_values) {
    throw OutputError(checkpoint.string() + ": record layout does not match this experiment");
  }
  for (std::size_t i = 0; i < n && !deferred; ++i) {
    const auto it = contents.offsets.find(i);
    if (it == contents.offsets.end()) {
      if (!partial) throw OutputError(checkpoint.string() + ": scenario " + std::to_string(i) + " is missing");
      rows.add(nullptr);
      continue;
    }
    complete[i] = 1;
    const std::vector<double> rec = read_checkpoint_record(checkpoint, it->second, contents.header.record_values);
    rows.add(rec.data());
    if (with_effect) {
      toa[i] = rec[offset];
      sfc[i] = rec[offset + 1];
      atm[i] = rec[offset + 2];
    }
  }
  rows.finish(coords);
  if (with_effect) {
    const std::string sign = " (net downward flux with aerosol minus without; negative = the aerosol cools, positive = it warms)";
    const struct {
      const char* name;
      const std::vector<double>* values;
      std::string long_name;
    } effects[] = {
        {kEffectNames[0], &toa, "instantaneous aerosol radiative effect at the top of the atmosphere" + sign},
        {kEffectNames[1], &sfc, "instantaneous aerosol radiative effect at the surface" + sign},
        {kEffectNames[2], &atm, "instantaneous aerosol radiative effect in the atmosphere (TOA effect minus surface effect; positive = aerosol heats the air)"},
    };
    for (const auto& x : effects) {
      if (!experiment::output_selected(chosen, x.name)) continue;
      // (fill 0: the HDF5 fill value of the serial file's variable, written at once)
      if (deferred) w.define_rows(x.name, {"scenario"}, {"W m-2", x.long_name, ""}, 0.0);
      else w.write(x.name, {"scenario"}, *x.values, {"W m-2", x.long_name, ""});
      if (!coords.empty()) w.set_attribute(x.name, "coordinates", coords);
      w.set_attribute(x.name, "_FillValue", kFill);
      w.set_attribute(x.name, "missing_value", kFill);
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
  w.set_attribute("", "sweep_complete", partial && !deferred && contents.offsets.size() < n ? 0 : 1);
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
}  // namespace

void write_sweep_file(const std::filesystem::path& path, const experiment::Study& study,
                      const experiment::ScenarioResult& templ, const std::filesystem::path& checkpoint,
                      const CheckpointContents& contents, bool partial) {
  if (study.is_time_series()) {
    write_time_series_file(path, study, templ, checkpoint, contents, partial);
    return;
  }
  write_sweep(path, study, templ, &checkpoint, &contents, partial, 0);
}

void write_sweep_skeleton(const std::filesystem::path& path, const experiment::Study& study,
                          const experiment::ScenarioResult& templ, std::size_t granule) {
  if (study.is_time_series()) throw OutputError(path.string() + ": a time series has no parallel file layout");
  write_sweep(path, study, templ, nullptr, nullptr, false, granule);
}

std::vector<RowDataset> sweep_row_datasets(const experiment::Study& study, const experiment::ScenarioResult& templ) {
  const std::vector<std::string>& chosen = study.base().output.variables;
  std::vector<RowDataset> out;
  std::size_t values = 0;
  RecordRows::for_each_record_field(result_fields(templ.result), [&](const Field& f, std::size_t offset) {
    if (experiment::output_selected(chosen, f.name)) out.push_back({f.name, offset, f.values.size()});
    values = offset + f.values.size();
  });
  if (study.computes_aerosol_effect()) {
    for (std::size_t k = 0; k < 3; ++k)
      if (experiment::output_selected(chosen, kEffectNames[k])) out.push_back({kEffectNames[k], values + k, 1});
  }
  return out;
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
                        "toa_flux_up", "planetary_albedo", "absorbed_atmosphere", "par_energy", "par_photon", "uv_index",
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
  header.push_back("quality");
  header.push_back("caution");
  const auto globals = read_global_attributes(sweep_file);
  const auto flag = [&](const char* name) {
    const auto it = globals.find(name);
    if (it == globals.end()) return false;
    const auto* v = std::get_if<std::vector<double>>(&it->second);
    return v == nullptr || v->empty() || v->front() != 0;
  };
  const std::string quality = quality_flags(flag("solar_spectrum_approximate"), globals.count("water_vapour_note") > 0);
  const std::vector<double> complete = read_variable(sweep_file, "scenario_complete").values;
  CsvTable t(header);
  for (std::size_t i = 0; i < study.size(); ++i) {
    std::vector<std::string> row{csv_number(static_cast<double>(i))};
    for (const auto& c : columns) row.push_back(csv_number(c[i]));
    row.push_back(i < complete.size() && complete[i] == 0 ? std::string("still_to_run") : quality);
    row.push_back(caution_text());
    t.add_row(row);
  }
  t.write(csv);
}

void write_summary_csv(const std::filesystem::path& path, const RunResult& r) {
  CsvTable t({"band", "lower_nm", "upper_nm", "toa_down_W_m-2", "surface_direct_W_m-2",
              "surface_diffuse_W_m-2", "surface_global_W_m-2", "transmittance", "absorbed_atmosphere_W_m-2",
              "toa_up_W_m-2", "direct_normal_W_m-2", "par_W_m-2", "par_umol_m-2_s-1", "uv_index", "quality",
              "caution"});
  const std::string quality = quality_flags(r.solar_approximate, r.h2o_broadband), caution = caution_text();
  const std::vector<experiment::BandSummary> rows = experiment::band_summary(r);
  for (const experiment::BandSummary& x : rows) {
    // Band edges not stated (given optics) are empty cells; PAR and UV index are broadband
    // products (empty in the band rows, and without wavelength bins).
    const bool bb = &x == &rows.back();
    const auto edge = [&](double v) { return v > 0.0 ? csv_number(v) : std::string(); };
    // DNI of the band: its direct flux on a horizontal surface over cos(zenith).
    const std::string dni = bb ? csv_number(r.direct_normal) : r.mu0 > 0.0 ? csv_number(x.surface_direct / r.mu0) : std::string();
    const bool products = bb && r.has_spectral_products;
    t.add_row({x.name, edge(x.lower_nm), edge(x.upper_nm), csv_number(x.toa_down),
               csv_number(x.surface_direct), csv_number(x.surface_diffuse), csv_number(x.surface_global),
               csv_number(x.transmittance), csv_number(x.absorbed_atmosphere), csv_number(x.toa_up), dni,
               products ? csv_number(r.par_w_m2) : std::string(), products ? csv_number(r.par_umol_m2_s) : std::string(),
               products ? csv_number(r.uv_index) : std::string(), quality, caution});
  }
  t.write(path);
}

}  // namespace solstrata::io
