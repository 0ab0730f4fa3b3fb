// Top-of-atmosphere solar spectral irradiance: built-in Planck approximation or a user's table.
#pragma once

#include <optional>
#include <stdexcept>
#include <string>
#include <string_view>
#include <vector>

#include "spectrum/grid.hpp"

namespace solstrata::spectrum {

/// W m-2: total solar irradiance at mean Earth–Sun distance, 1360.8 ± 0.5 W m-2
/// (Kopp & Lean 2011, Geophys. Res. Lett. 38, L01706).
inline constexpr double kTotalSolarIrradiance = 1360.8;
/// K: effective temperature of the Sun, 5772 K (IAU 2015 Resolution B3 nominal value;
/// Prša et al. 2016, Astron. J. 152, 41).
inline constexpr double kSunEffectiveTemperature = 5772.0;

/// A tabulated spectrum: wavelengths strictly increasing, irradiance >= 0, linear between samples.
struct TabulatedSpectrum {
  std::vector<double> wavelength_nm;  ///< nm: sample wavelengths, strictly increasing
  std::vector<double> irradiance;     ///< W m-2 nm-1: spectral irradiance at each sample, >= 0
  std::string label;                  ///< where it came from (file and column), for provenance

  /// Empty when valid, else a sentence naming the sample index, the value and the rule.
  [[nodiscard]] std::string validate() const;
};

/// The irradiance column of a spectrum file cannot be told: several columns and none chosen, or
/// the chosen one does not exist. The message names the file and the columns it has.
class SpectrumColumnError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

/// Reads a CSV spectrum: one header line of column names, then rows of numbers separated by
/// commas; the first column is the wavelength in nm, the others spectral irradiance in
/// W m-2 nm-1. `column` picks the irradiance column by header name, or by 1-based position among
/// the data columns ("1", "2", ...); empty picks the only data column (an error when there are
/// several: SpectrumColumnError, as for an unknown column). Lines that are empty or start with '#'
/// are skipped. Throws std::runtime_error naming
/// the file and line on any problem (missing file, unknown column, bad number, non-increasing
/// wavelength, negative irradiance).
TabulatedSpectrum read_spectrum_csv(const std::string& path, std::string_view column = {});
/// As read_spectrum_csv, from the text of such a file; `path` names it in messages.
TabulatedSpectrum parse_spectrum_csv(const std::string& text, const std::string& path, std::string_view column = {});

/// W m-2: integral of the piecewise-linear spectrum over [lower_nm, upper_nm] (exact for the
/// linear interpolant: the trapezoid rule on the native samples, cut at the limits). Outside the
/// tabulated range the spectrum counts as zero.
double integrate(const TabulatedSpectrum& s, double lower_nm, double upper_nm);

/// W m-2: nominal total solar irradiance to which the built-in ASTM E490 spectrum is rescaled
/// (IAU 2015 Resolution B3, nominal solar constant 1361 W m-2; Kopp & Lean 2011 measured
/// 1360.8 +- 0.5 W m-2).
inline constexpr double kNominalTotalSolarIrradiance = 1361.0;
/// File of the built-in spectrum, relative to the data directory (solver/data/solar/README.md).
inline constexpr const char* kE490RelativePath = "solar/astm_e490_00a.csv";

/// Where a solar source came from; the output code reports it.
enum class SolarSourceKind {
  builtin_planck,  ///< the built-in approximation (Planck at 5772 K scaled to 1360.8 W m-2)
  user_table,      ///< a user-supplied tabulated spectrum
  builtin_e490,    ///< the built-in ASTM E490-00a spectrum rescaled to 1361 W m-2
};
/// Stable lower-case name for files and attributes ("builtin_planck", "user_table",
/// "builtin_e490").
std::string_view to_string(SolarSourceKind k);
/// Inverse of to_string; std::nullopt for an unknown name.
std::optional<SolarSourceKind> parse_solar_source_kind(std::string_view name);

/// TOA solar irradiance per bin at mean Earth–Sun distance, with its provenance.
struct SolarSource {
  SolarSourceKind kind = SolarSourceKind::builtin_planck;
  /// true when the spectrum is an approximation: results must say so (an output attribute and a
  /// terminal note), and UV products computed from it are only indicative.
  bool approximate = true;
  std::string description;           ///< one sentence for output attributes
  std::vector<double> bin_irradiance;  ///< W m-2: irradiance integrated over each bin of the grid
  /// dimensionless: fraction of each bin covered by the source's data (1 inside the table; less
  /// where a user table stops inside a bin, 0 beyond it — those bins get only the covered part)
  std::vector<double> bin_coverage;

  /// W m-2: sum over bins.
  [[nodiscard]] double total() const;
};

/// W m-2 nm-1: the built-in approximation at one wavelength: Planck's law at
/// kSunEffectiveTemperature scaled so that its integral over all wavelengths is
/// kTotalSolarIrradiance, i.e. E(lambda) = S pi B_lambda(T) / (sigma T^4).
double planck_solar_irradiance(double wavelength_nm);

/// The built-in source on `grid`: each bin holds the exact integral of the scaled Planck
/// spectrum over the bin (series for the blackbody fraction, e.g. Siegel & Howell, "Thermal
/// Radiation Heat Transfer"). Flagged approximate.
SolarSource builtin_solar(const Grid& grid);

/// A user's spectrum on `grid`, integrated conservatively onto the bins (integral of the
/// piecewise-linear table over each bin). Flagged not approximate. Throws std::invalid_argument
/// if the table is invalid or does not overlap the grid at all.
SolarSource tabulated_solar(const TabulatedSpectrum& s, const Grid& grid);

/// The built-in spectrum on `grid`: ASTM E490-00a read from `data_dir` / kE490RelativePath at
/// its native resolution, integrated exactly onto the bins (as tabulated_solar) and scaled by
/// kNominalTotalSolarIrradiance / (its integral over the whole file, 1366.09 W m-2), so that the
/// whole spectrum holds 1361 W m-2. Flagged not approximate; the description states the source
/// and the rescaling. Throws std::runtime_error naming the file when it cannot be read (e.g. a
/// wrong data directory), std::invalid_argument if it does not overlap the grid.
SolarSource builtin_e490_solar(const Grid& grid, const std::string& data_dir);

/// dimensionless: the factor builtin_e490_solar applies, 1361 / integral of the file (W m-2).
double e490_scale_factor(const TabulatedSpectrum& e490);

}  // namespace solstrata::spectrum
