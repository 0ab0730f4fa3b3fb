// The output of a time series: per-step results on a CF time axis, daily totals per local day.
#include <algorithm>
#include <cmath>
#include <span>
#include <string>
#include <vector>

#include "experiment/output_variables.hpp"
#include "io/csv_writer.hpp"
#include "io/hdf5_reader.hpp"
#include "io/hdf5_writer.hpp"
#include "io/atomic_file.hpp"
#include "io/result_file_detail.hpp"
#include "io/result_fields.hpp"
#include "io/sweep_file.hpp"
#include "sun/daily.hpp"
#include "sun/position.hpp"
#include "sun/tilted_plane.hpp"

namespace solstrata::io {
namespace {

using detail::kFill;

/// CF time units of the time and day coordinates (POSIX seconds; no leap seconds).
constexpr const char* kTimeUnits = "seconds since 1970-01-01 00:00:00";
/// CF calendar: the proleptic Gregorian calendar (what the ISO 8601 reader computes in).
constexpr const char* kCalendar = "proleptic_gregorian";

/// A daily quantity: its name, unit, description, the record field it integrates and a scale.
struct DailyQuantity {
  const char* name;
  const char* units;
  const char* long_name;
  const char* field;   ///< record field (instantaneous flux) integrated over the day
  const char* minus;   ///< a field subtracted from it ("" for none)
  double scale;        ///< from (field unit x s) to the unit
  const char* standard_name;
};

const DailyQuantity kDaily[] = {
    {"daily_global_horizontal", "MJ m-2 day-1", "daily total of the global horizontal irradiance (GHI)",
     "global_horizontal_irradiance", "", 1e-6, ""},
    {"daily_direct_horizontal", "MJ m-2 day-1", "daily total of the direct-beam irradiance on a horizontal surface",
     "global_horizontal_irradiance", "diffuse_horizontal_irradiance", 1e-6, ""},
    {"daily_diffuse_horizontal", "MJ m-2 day-1", "daily total of the diffuse horizontal irradiance (DHI)",
     "diffuse_horizontal_irradiance", "", 1e-6, ""},
    {"daily_direct_normal", "MJ m-2 day-1", "daily total of the direct-normal irradiance (DNI)",
     "direct_normal_irradiance", "", 1e-6, ""},
    {"daily_par_energy", "MJ m-2 day-1", "daily total of photosynthetically active radiation (400-700 nm), energy",
     "par_energy", "", 1e-6, ""},
    {"daily_par_photon", "mol m-2 day-1", "daily total of photosynthetically active radiation (400-700 nm), photons",
     "par_photon", "", 1e-6, ""},
    {"daily_plane_global", "MJ m-2 day-1", "daily total of the global irradiance on the tilted plane",
     "plane_global_irradiance", "", 1e-6, ""},
};

}  // namespace

namespace {
/// The series file. `record(i, values)` gives case i's record (false: no checkpoint holds it);
/// `where` names the records' origin in messages. With `granule` > 0 the per-step rows are
/// deferred to the ranks of an MPI run (write_time_series_skeleton) and only the daily-total
/// nodes are looked up.
void write_series(const std::filesystem::path& path, const experiment::Study& study,
                  const experiment::ScenarioResult& templ, const RecordLookup& record, std::size_t record_values,
                  const std::string& where, bool partial, std::size_t granule) {
  const bool deferred = granule > 0;
  const experiment::Experiment& base = study.base();
  const experiment::TimeSeriesSpec& ts = base.series;
  const experiment::TimePlan& tp = study.plan().time;
  const std::size_t n = tp.n_steps, n_all = study.size();
  const std::vector<Field> fields = result_fields(templ.result);

  Hdf5Writer w(path);
  if (deferred) w.defer_rows_to_ranks(granule);
  detail::add_result_dimensions(w, templ.result);
  w.add_coordinate("time", ts.times_unix, {kTimeUnits, "time of the step (UTC)", "time"});
  w.set_attribute("time", "calendar", kCalendar);
  w.set_attribute("time", "axis", "T");
  w.write("local_time", {"time"}, std::span<const std::string>(ts.times_text),
          {"", "time of the step as written in the experiment (ISO 8601 with its UTC offset)", ""});

  // The site as scalar coordinates (CF discrete sampling: one station).
  w.write("latitude", {}, std::vector<double>{base.site.latitude_deg}, {"degrees_north", "latitude of the site", "latitude"});
  w.write("longitude", {}, std::vector<double>{base.site.longitude_deg}, {"degrees_east", "longitude of the site", "longitude"});
  if (base.site.elevation_given) {
    w.write("surface_altitude", {}, std::vector<double>{base.site.elevation_m},
            {"m", "elevation of the site above mean sea level (the profile is cut there)", "surface_altitude"});
  }

  for (const Field& f : fields) {
    if (f.per_scenario || !experiment::output_selected(base.output.variables, f.name)) continue;
    const VariableAttributes a{f.units, f.long_name, f.standard_name};
    if (!f.texts.empty()) w.write(f.name, f.dims, std::span<const std::string>(f.texts), a);
    else w.write(f.name, f.dims, std::span<const double>(f.values), a);
  }

  // Per-step variables, written in blocks of steps.
  detail::RecordRows rows(w, fields, "time", base.output.variables, deferred);
  if (rows.record_values() != record_values) {
    throw OutputError(where + ": record layout does not match this experiment");
  }
  std::vector<int> complete(n, deferred ? 1 : 0);
  std::vector<double> rec;
  std::size_t found = 0;
  for (std::size_t i = 0; i < n && !deferred; ++i) {
    if (!record(i, rec)) {
      if (!partial) throw OutputError(where + ": step " + std::to_string(i) + " is missing");
      rows.add(nullptr);
      continue;
    }
    complete[i] = 1;
    ++found;
    rows.add(rec.data());
  }
  rows.finish("");
  w.write("step_complete", {"time"}, std::span<const int>(complete),
          {"1", "1 when the step's results are in this file, 0 while it is still to be run", ""});
  {
    const int flags[] = {0, 1};
    w.set_attribute("step_complete", "flag_values", std::span<const int>(flags));
    w.set_attribute("step_complete", "flag_meanings", "still_to_run complete");
  }

  // Daily totals: sum of weight x flux over each day's quadrature nodes.
  const std::size_t n_days = tp.day_start.size();
  if (n_days > 0) {
    w.add_coordinate("day", tp.day_start,
                     {kTimeUnits, "start of the local calendar day (local midnight, UTC offset of the first step)", "time"});
    w.set_attribute("day", "calendar", kCalendar);
    w.set_attribute("day", "bounds", "day_bounds");
    w.add_dimension("day_edge", 2);
    std::vector<double> bounds;
    for (double d : tp.day_start) bounds.insert(bounds.end(), {d, d + 86400.0});
    w.write("day_bounds", {"day", "day_edge"}, bounds, {kTimeUnits, "start and end of the local calendar day", ""});
    std::vector<int> day_done(n_days, 1);
    std::vector<std::vector<double>> sums(std::size(kDaily), std::vector<double>(n_days, 0.0));
    double s0 = 0.0;  // W m-2: TOA irradiance at mean distance, from any daylight node
    // Record offsets, looked up once: each quantity's field and the field subtracted from it.
    const std::size_t esf = rows.offset_of("earth_sun_factor"), toa_normal = rows.offset_of("toa_normal_irradiance");
    std::vector<bool> present(std::size(kDaily));
    std::vector<std::size_t> field_at(std::size(kDaily), 0), minus_at(std::size(kDaily), 0);
    for (std::size_t q = 0; q < std::size(kDaily); ++q) {
      present[q] = rows.has(kDaily[q].field);
      if (!present[q]) continue;
      field_at[q] = rows.offset_of(kDaily[q].field);
      if (*kDaily[q].minus) minus_at[q] = rows.offset_of(kDaily[q].minus);
    }
    for (std::size_t k = 0; k < tp.n_nodes(); ++k) {
      const std::size_t day = tp.node_day[k];
      if (!record(n + k, rec)) {
        if (!partial) throw OutputError(where + ": daily-total node " + std::to_string(k) + " is missing");
        day_done[day] = 0;
        continue;
      }
      ++found;
      if (s0 == 0.0 && rec[esf] > 0.0) s0 = rec[toa_normal] / rec[esf];
      for (std::size_t q = 0; q < std::size(kDaily); ++q) {
        if (!present[q]) continue;
        double v = rec[field_at[q]];
        if (*kDaily[q].minus) v -= rec[minus_at[q]];
        sums[q][day] += tp.node_weight[k] * v;
      }
    }
    for (std::size_t q = 0; q < std::size(kDaily); ++q) {
      if (!present[q]) continue;
      std::vector<double> v(n_days);
      for (std::size_t d = 0; d < n_days; ++d) v[d] = day_done[d] ? sums[q][d] * kDaily[q].scale : kFill;
      w.write(kDaily[q].name, {"day"}, v, {kDaily[q].units, kDaily[q].long_name, kDaily[q].standard_name});
      w.set_attribute(kDaily[q].name, "cell_methods", "day: sum");
      w.set_attribute(kDaily[q].name, "_FillValue", kFill);
      w.set_attribute(kDaily[q].name, "missing_value", kFill);
      w.set_attribute(kDaily[q].name, "quadrature",
                      std::to_string(experiment::kDailyNodes) + "-point Gauss-Legendre over each daylight interval "
                      "(sunrise to sunset of the refracted sun), converged to 0.1 % against 1-minute sums");
      if (std::string(kDaily[q].field) == "plane_global_irradiance") {
        w.set_attribute(kDaily[q].name, "caution", sun::kPlaneCaution);
      }
    }
    // Extraterrestrial (TOA) insolation on a horizontal surface: geometry only.
    std::vector<double> toa(n_days), daylight(n_days);
    const sun::Site site = experiment::refraction_site(base);
    for (std::size_t d = 0; d < n_days; ++d) {
      toa[d] = s0 > 0.0 || !partial ? sun::extraterrestrial_insolation(site, tp.day_start[d], tp.day_start[d] + 86400.0, s0) * 1e-6
                                    : kFill;
      daylight[d] = tp.daylight_s[d] / 3600.0;
    }
    w.write("daily_toa_horizontal", {"day"}, toa,
            {"MJ m-2 day-1", "daily extraterrestrial insolation on a horizontal surface at the top of the atmosphere", ""});
    w.set_attribute("daily_toa_horizontal", "cell_methods", "day: sum");
    w.set_attribute("daily_toa_horizontal", "_FillValue", kFill);
    w.set_attribute("daily_toa_horizontal", "method",
                    "24-point Gauss-Legendre over the geometric daylight of the day, Michalsky (1988) position and "
                    "distance, the run's TOA irradiance at mean distance");
    w.write("daylight_length", {"day"}, daylight, {"h", "time the refracted sun's centre is above the horizon", ""});
    w.write("day_complete", {"day"}, std::span<const int>(day_done), {"1", "1 when every daily-total node of the day has run", ""});
    const int flags[] = {0, 1};
    w.set_attribute("day_complete", "flag_values", std::span<const int>(flags));
    w.set_attribute("day_complete", "flag_meanings", "still_to_run complete");
  }

  detail::write_global_attributes(w, base, templ.result);
  w.set_attribute("", "featureType", "timeSeries");
  w.set_attribute("", "time_steps", static_cast<int>(n));
  w.set_attribute("", "time_series_complete", partial && found < n_all ? 0 : 1);
  w.set_attribute("", "utc_offset_minutes", ts.utc_offset_minutes);
  w.set_attribute("", "solar_position_algorithm",
                  "Michalsky (1988), Solar Energy 40, 227 (about 0.01 degree), refraction after Saemundsson (1986) "
                  "at the surface pressure and temperature of the profile");
  w.set_attribute("", "night_steps", "steps with the sun below the horizon: every flux is 0 and sun_above_horizon = 0");
  if (!ts.inputs_file.empty()) {
    std::string cols;
    for (const std::string& c : ts.input_paths) cols += (cols.empty() ? "" : ", ") + c;
    w.set_attribute("", "per_step_inputs", ts.inputs_file.string() + ": " + cols);
  }
  if (base.plane.given) {
    w.set_attribute("", "plane_tilt_deg", base.plane.tilt_deg);
    w.set_attribute("", "plane_azimuth_deg", base.plane.azimuth_deg);
    w.set_attribute("", "plane_sky_diffuse_model", std::string(sun::to_string(base.plane.sky)));
    w.set_attribute("", "plane_caution", sun::kPlaneCaution);
  }
  w.commit();
}
}  // namespace

void write_time_series_file(const std::filesystem::path& path, const experiment::Study& study,
                            const experiment::ScenarioResult& templ, const std::filesystem::path& checkpoint,
                            const CheckpointContents& contents, bool partial) {
  const RecordLookup record = [&](std::size_t i, std::vector<double>& values) {
    const auto it = contents.offsets.find(i);
    if (it == contents.offsets.end()) return false;
    values = read_checkpoint_record(checkpoint, it->second, contents.header.record_values);
    return true;
  };
  write_series(path, study, templ, record, contents.header.record_values, checkpoint.string(), partial, 0);
}

void write_time_series_skeleton(const std::filesystem::path& path, const experiment::Study& study,
                                const experiment::ScenarioResult& templ, std::size_t granule,
                                std::size_t record_values, const RecordLookup& nodes) {
  if (granule == 0) throw OutputError(path.string() + ": the row granule of a parallel write must be positive");
  write_series(path, study, templ, nodes, record_values, "the checkpoints", false, granule);
}

void write_time_series_csv(const std::filesystem::path& file, const std::filesystem::path& csv,
                           const experiment::Study& study) {
  const std::vector<std::string> present = list_datasets(file);
  std::vector<std::string> header{"local_time"};
  std::vector<std::vector<double>> columns;
  for (const char* v : {"solar_zenith_angle", "solar_azimuth_angle", "sun_above_horizon", "global_horizontal_irradiance",
                        "direct_normal_irradiance", "diffuse_horizontal_irradiance", "plane_global_irradiance",
                        "par_energy", "par_photon", "uv_index", "precipitable_water"}) {
    if (std::find(present.begin(), present.end(), v) == present.end()) continue;
    const StoredVariable sv = read_variable(file, v);
    std::string name(v);
    if (sv.attributes.count("units")) {
      name += '_';  // appended in two steps: GCC 12 warns (-Wrestrict, falsely) on "_" + string
      name += text_attribute(sv.attributes, "units");
    }
    for (char& c : name)
      if (c == ' ') c = '_';
    header.push_back(std::move(name));
    columns.push_back(sv.values);
  }
  CsvTable t(header);
  const auto& times = study.base().series.times_text;
  for (std::size_t i = 0; i < times.size(); ++i) {
    std::vector<std::string> row{times[i]};
    for (const auto& c : columns) row.push_back(csv_number(c[i]));
    t.add_row(std::move(row));
  }
  t.write(csv);
}

}  // namespace solstrata::io
