// The variables of a run's output, independent of the file format: one list that the single-run
// writer, the sweep writer and the sweep checkpoint all walk in the same order.
#pragma once

#include <string>
#include <utility>
#include <vector>

#include "experiment/run.hpp"

namespace solstrata::io {

/// One output variable of one scenario.
struct Field {
  std::string name;               ///< variable name in the file
  std::vector<std::string> dims;  ///< dimensions, slowest first (without "scenario")
  std::vector<double> values;     ///< numbers in C order (empty for text)
  std::vector<std::string> texts; ///< text values (band names), else empty
  std::string units;              ///< UDUNITS string ("1" dimensionless, "" for text)
  std::string long_name;          ///< description
  std::string standard_name;      ///< CF standard name, or ""
  std::vector<std::pair<std::string, std::string>> notes;  ///< extra text attributes
  bool per_scenario = true;       ///< varies between the scenarios of a sweep
  bool on_levels = false;         ///< has the level dimension: gets coordinates="level_pressure"
  bool has_fill = false;          ///< may hold kFillValue for "not stated": gets _FillValue
};

/// netCDF's default fill value for doubles (NC_FILL_DOUBLE, from memory: 9.9692099683868690e+36),
/// written where a value is missing or not stated; variables that can hold it say so in
/// `_FillValue` and `missing_value`.
inline constexpr double kFillValue = 9.9692099683868690e+36;

/// Dimension sizes of a result: level, layer, band, and wavelength (0 without spectral output).
struct ResultDims {
  std::size_t level = 0, layer = 0, band = 0, wavelength = 0;
};
ResultDims result_dims(const experiment::RunResult& r);

/// Every variable of a run's result, in the order they are written.
std::vector<Field> result_fields(const experiment::RunResult& r);

}  // namespace solstrata::io
