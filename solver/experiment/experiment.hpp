// The typed experiment: everything one run needs, resolved from the experiment file.
#pragma once

#include <filesystem>
#include <map>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "atmos/profile.hpp"
#include "experiment/input_error.hpp"
#include "optics/aerosol.hpp"
#include "optics/column_optics.hpp"
#include "rt/closure.hpp"
#include "spectrum/grid.hpp"
#include "sun/earth_sun.hpp"
#include "sun/position.hpp"
#include "sun/tilted_plane.hpp"

namespace solstrata::experiment {

/// One layer of user-given optics (direct-optics mode).
struct GivenLayer {
  double tau = 0.0;    ///< dimensionless: optical depth, >= 0
  double omega = 0.0;  ///< dimensionless: single-scattering albedo, [0, 1]
  double g = 0.0;      ///< dimensionless: asymmetry parameter, (-1, 1)
};

/// One band of user-given optics: its own layers and TOA irradiance.
struct GivenBand {
  std::string name;                ///< label of the band
  double lower_nm = 0.0;           ///< nm: lower edge (0 with upper_nm 0 when not stated)
  double upper_nm = 0.0;           ///< nm: upper edge
  double solar_w_m2 = 0.0;         ///< W m-2: TOA irradiance normal to the beam (before distance factor)
  std::vector<GivenLayer> layers;  ///< top layer first
};

/// Direct-optics mode: the solver runs on exactly these layers, no gas/aerosol optics.
struct GivenOptics {
  std::vector<GivenBand> bands;       ///< one or more bands, all with the same number of layers
  std::vector<double> pressure_hpa;   ///< hPa: level pressures (optional: empty = no heating rate)
};

/// How one absorbing gas enters a run (atmosphere.absorbers).
struct Absorber {
  std::string gas;                ///< "H2O", "O2" or "CO2"
  std::string mode;               ///< "builtin", "none" or "file"
  std::filesystem::path file;     ///< the k-table file (mode "file", and the built-in O2 table)
  /// the table, read once at load time (mode "file" and built-in O2); the built-in H2O table is
  /// built for the run's grid (optics/h2o_lacis_hansen.hpp)
  std::shared_ptr<const optics::KTable> table;
};

/// Where the experiment is (section `site`): sets the sun's position from a time, the gravity
/// latitude and, with an elevation, the bottom of the atmosphere.
struct SiteSpec {
  bool given = false;         ///< a `site` section was given
  double latitude_deg = 0.0;  ///< degrees north, [-90, 90]
  double longitude_deg = 0.0; ///< degrees east, [-180, 180]
  double elevation_m = 0.0;   ///< m above mean sea level (the profile is cut there when given)
  bool elevation_given = false;
  SourceMark elevation_mark;  ///< where elevation_m is written
};

/// A tilted receiving plane (section `plane_of_array`), e.g. a solar collector.
struct PlaneSpec {
  bool given = false;
  double tilt_deg = 0.0;      ///< degrees from horizontal, [0, 90]
  double azimuth_deg = 180.0; ///< degrees from north, eastward, [0, 360): the way the plane faces
  sun::SkyDiffuseModel sky = sun::SkyDiffuseModel::perez;
  /// dimensionless: ground albedo seen by the plane; < 0 = the run's broadband surface reflectance
  double ground_albedo = -1.0;
};

/// A time series (section `times`): the steps of a study over time at the site.
struct TimeSeriesSpec {
  bool given = false;
  std::vector<double> times_unix;      ///< s since 1970-01-01T00:00:00Z of each step, increasing
  std::vector<std::string> times_text; ///< each step's time as written (or generated, with its offset)
  /// minutes: the UTC offset of the first time as written; local calendar days (for daily totals)
  /// are counted in it
  int utc_offset_minutes = 0;
  /// key paths given per step by the inputs file (e.g. "aerosol.optical_depth"), and their
  /// values [path][step]; NaN = the cell was empty (the experiment's own value holds)
  std::vector<std::string> input_paths;
  std::vector<std::vector<double>> inputs;
  std::filesystem::path inputs_file;   ///< the per-step inputs CSV ("" when none)
  std::vector<int> inputs_line;        ///< line of each step in the inputs file
  bool daily_totals = true;            ///< integrate daily totals per local day
  SourceMark mark;                     ///< where `times` is declared
};

/// Output choices.
struct OutputConfig {
  std::filesystem::path file;  ///< the HDF5 file to write
  bool spectral = false;       ///< also write per-bin level fluxes
  std::filesystem::path csv;   ///< optional flat CSV summary (empty = none)
  /// output.variables: variable names and groups to write (experiment/output_variables.hpp);
  /// empty = everything. Coordinates and the band table are always written.
  std::vector<std::string> variables;
  SourceMark file_mark;        ///< where output.file is written in the experiment (unknown: default)
  SourceMark csv_mark;         ///< where output.csv is written (unknown: not in the file)
};

/// Which top-of-atmosphere solar spectrum a run uses.
enum class SolarChoice {
  e490,    ///< built-in ASTM E490-00a rescaled to 1361 W m-2 (the default)
  planck,  ///< built-in Planck approximation (flagged approximate)
  file,    ///< the user's CSV (solar_file, solar_column)
};

/// A fully resolved experiment.
struct Experiment {
  std::string title;               ///< the user's title ("" when not given)
  std::filesystem::path source;    ///< path of the experiment file as given
  std::string text;                ///< the complete experiment text (provenance)

  bool given_optics_mode = false;  ///< true: `given_optics` replaces atmosphere/aerosol/spectrum
  GivenOptics given;               ///< the user's optics (given_optics_mode only)

  atmos::Profile profile;          ///< the atmosphere (levels top to surface)
  std::string profile_origin;      ///< where the profile came from (file path or "built-in ...")
  optics::OpticsOptions optics;    ///< which components and how
  optics::AerosolSpec aerosol;     ///< the aerosol (tau_ref 0 when there is none)
  std::string aerosol_type;        ///< preset name used ("" when none)
  std::vector<Absorber> absorbers; ///< H2O, O2, CO2 in this order (atmosphere mode only)

  double solar_zenith_deg = 0.0;   ///< degrees: solar zenith angle, [0, 90) (apparent, when from a time)
  SiteSpec site;                   ///< the site (section `site`), when given
  /// true: the sun's position came from `site` and `sun.time` (then azimuth and time are set)
  bool has_sun_position = false;
  double time_unix_s = 0.0;        ///< s since 1970-01-01T00:00:00Z: the instant (has_sun_position)
  double solar_azimuth_deg = 0.0;  ///< degrees from north, eastward (has_sun_position)
  /// false: the sun is below the horizon at `time` (night): fluxes are zero, nothing is solved
  bool sun_up = true;
  PlaneSpec plane;                 ///< plane-of-array output, when asked for
  TimeSeriesSpec series;           ///< the time series, when `times` is given (study level)
  /// true: the direct beam crosses each layer along its slant path in a spherical-shell
  /// atmosphere (pseudo-spherical; sun/air_mass.hpp); false: plane-parallel 1/mu0
  bool spherical_beam = true;
  sun::DistanceSpec distance;      ///< Earth-Sun distance factor (day of year or given)
  double irradiance_scale = 1.0;   ///< dimensionless: extra factor on the TOA irradiance, > 0

  double albedo_direct = 0.2;      ///< dimensionless: surface albedo for the direct beam, [0, 1] (0.2 without a surface section, as documented)
  double albedo_diffuse = 0.2;     ///< dimensionless: surface albedo for diffuse light, [0, 1]
  /// dimensionless: albedo for the bins of named reporting bands, overriding the above (both
  /// direct and diffuse)
  std::map<std::string, double> albedo_by_band;

  std::vector<spectrum::GridSegment> segments;  ///< spectral bins
  std::vector<spectrum::Band> bands;            ///< reporting bands
  SolarChoice solar = SolarChoice::e490;        ///< which solar spectrum
  std::filesystem::path solar_file;             ///< user's solar spectrum CSV (SolarChoice::file)
  std::string solar_column;                     ///< its column ("" = the only one)
  /// true: bins of the grid outside the user's table get zero irradiance (the table's partial
  /// coverage is reported); false: a table that does not cover the grid is an input error
  bool solar_fill_zero = false;
  /// built-in data (solar/astm_e490_00a.csv, ...): default_data_dir() when loaded
  std::filesystem::path data_dir;

  rt::Closure closure = rt::Closure::delta_eddington;  ///< two-stream closure
  /// true: solve with the exact multi-stream reference (discrete ordinates) instead of two-stream
  bool reference_solver = false;
  int reference_streams = 16;  ///< streams of the reference solver, even, 4..64
  /// true: the two-stream kernel computes in float (solver.precision: float), about 1.5-2x faster,
  /// fluxes within ~1e-5 of the incident flux of the double result
  bool single_precision = false;
  OutputConfig output;                                 ///< where and what to write
};

/// Profiles already read, by path: a sweep reads its profile file once, not once per scenario.
/// Thread-safe.
class ProfileCache {
 public:
  ProfileCache();
  ~ProfileCache();
  ProfileCache(const ProfileCache&) = delete;
  ProfileCache& operator=(const ProfileCache&) = delete;
  /// The profile at `path`, reading it with `read` the first time.
  template <class Read>
  atmos::Profile get(const std::filesystem::path& path, Read&& read) {
    if (const atmos::Profile* p = find(path)) return *p;
    atmos::Profile p = read();
    store(path, p);
    return p;
  }

 private:
  const atmos::Profile* find(const std::filesystem::path& path) const;
  void store(const std::filesystem::path& path, const atmos::Profile& p);
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

/// The k-table at `path`, read once per process (thread-safe cache). Throws optics::KTableError.
std::shared_ptr<const optics::KTable> cached_ktable(const std::filesystem::path& path);

/// The directory of built-in data: the environment variable SOLSTRATA_DATA_DIR when set and not
/// empty, else <prefix>/share/solstrata/data beside an installed <prefix>/bin executable, else the
/// source tree's solver/data (compile definition SOLSTRATA_SOURCE_DATA_DIR),
/// else "data" (relative to the working directory).
std::filesystem::path default_data_dir();

/// Reads and validates an experiment file. Relative paths inside it (profile, solar spectrum)
/// are taken relative to the file's directory; the output path relative to the working
/// directory. Throws InputError (file, line, column, key, expected form) on any problem, before
/// any work is done.
Experiment load_experiment(const std::filesystem::path& path);

/// The text of an experiment file. Throws InputError naming the file when it cannot be read.
std::string read_experiment_text(const std::filesystem::path& path);

/// As load_experiment, from text; `name` stands for the file in messages and `base_dir` resolves
/// relative paths.
/// With `step_time_unix` (a time series step, s since 1970-01-01T00:00:00Z), the sun's position is
/// that of this instant and the `times` section is not read again.
Experiment parse_experiment(std::string text, const std::string& name,
                            const std::filesystem::path& base_dir, ProfileCache* profiles = nullptr,
                            std::optional<double> step_time_unix = std::nullopt);

/// The site of `e` as the solar-position code needs it, with the air that refracts the sun: the
/// profile's surface pressure and temperature (atmosphere mode), else standard air (1013.25 hPa,
/// 15 C).
sun::Site refraction_site(const Experiment& e);

/// Sets the sun of `e` from the instant `t_unix` (s since 1970-01-01T00:00:00Z) at its site:
/// apparent zenith (refraction at the profile's surface pressure and temperature), azimuth,
/// Earth-Sun distance, and whether the sun is up (`e.site` must be given).
void place_sun(Experiment& e, double t_unix);

/// The most steps one time series may have (a year of 1-minute steps fits).
inline constexpr std::size_t kMaxTimeSteps = 1'000'000;

/// Reads the text of an atmosphere profile file (the format of profiles/*.yaml); `name` stands
/// for the file in messages. Throws InputError (file, line, column, key) on any problem.
atmos::Profile parse_profile(std::string text, const std::string& name);

/// Every top-level key of an experiment file, with a one-line description (for help texts and
/// the key reference test).
const std::vector<std::pair<std::string, std::string>>& top_level_keys();

}  // namespace solstrata::experiment
