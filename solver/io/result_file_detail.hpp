// Pieces shared by the writers of single runs, sweeps and time series (io/ internal).
#pragma once

#include <string>

#include "experiment/experiment.hpp"
#include "experiment/run.hpp"
#include "io/hdf5_writer.hpp"
#include "io/result_fields.hpp"

namespace solstrata::io::detail {

/// netCDF's default fill value for doubles (NC_FILL_DOUBLE): readers show it as missing.
inline constexpr double kFill = 9.9692099683868690e+36;

/// Provenance, conventions, the experiment text and the cautions as global attributes.
void write_global_attributes(Hdf5Writer& w, const experiment::Experiment& e, const experiment::RunResult& r);
/// The level, layer, band (and wavelength) dimensions of a result.
void add_result_dimensions(Hdf5Writer& w, const experiment::RunResult& r);
/// A field's extra text attributes (notes).
void set_field_attributes(Hdf5Writer& w, const Field& f);

}  // namespace solstrata::io::detail
