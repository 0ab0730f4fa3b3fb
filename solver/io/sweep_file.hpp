// The output of a sweep: records for the checkpoint, and the final HDF5 file built from them.
#pragma once

#include <cstdint>
#include <filesystem>
#include <functional>
#include <string>
#include <vector>

#include "experiment/sweep.hpp"
#include "experiment/sweep_run.hpp"
#include "io/checkpoint.hpp"

namespace solstrata::io {

/// The values of one scenario as a checkpoint record: every per-scenario numeric variable in
/// result_fields order, then the three aerosol radiative effects when `with_effect`.
std::vector<double> scenario_record(const experiment::ScenarioResult& s, bool with_effect);

/// Hash identifying a sweep's output content: experiment text and content options.
std::uint64_t experiment_hash(const std::string& text, bool spectral);

/// Builds the sweep's HDF5 file at `path` (atomically) from the records of a checkpoint.
/// `templ` is any scenario's result (layout, band table, spectral bins). A leading "scenario"
/// dimension, one coordinate variable per swept parameter, the grid shape as attributes, the
/// aerosol radiative effects when the study has aerosol, and `scenario_complete` (1 for each
/// scenario with results). With `partial`, scenarios missing from the checkpoint are allowed: their
/// values are netCDF's default fill value and the global attribute `sweep_complete` is 0 (a
/// snapshot of a running or interrupted sweep); otherwise a missing scenario is an OutputError.
void write_sweep_file(const std::filesystem::path& path, const experiment::Study& study,
                      const experiment::ScenarioResult& templ, const std::filesystem::path& checkpoint,
                      const CheckpointContents& contents, bool partial = false);

/// A per-scenario double variable of a sweep file as a slice of every checkpoint record: what
/// the ranks of an MPI run write by hyperslab (io/parallel_rows.hpp).
struct RowDataset {
  std::string name;        ///< the variable; its leading dimension is "scenario"
  std::size_t offset = 0;  ///< its first value in a record
  std::size_t size = 0;    ///< values per scenario (product of its other dimensions)
};

/// The per-scenario double variables of the sweep file of `study` (the row variables and the
/// aerosol radiative effects that output.variables selects), in the order the file declares them.
std::vector<RowDataset> sweep_row_datasets(const experiment::Study& study, const experiment::ScenarioResult& templ);

/// The file write_sweep_file makes of a complete sweep, without the values of the variables of
/// sweep_row_datasets: those are declared (Hdf5Writer::defer_rows_to_ranks(granule)) and every
/// row is then written by the ranks (write_rows_collectively). Same variables, attributes and
/// coordinates; scenario_complete is 1 everywhere. Written at `path` atomically. Sweeps only.
void write_sweep_skeleton(const std::filesystem::path& path, const experiment::Study& study,
                          const experiment::ScenarioResult& templ, std::size_t granule);

/// A finished case's checkpoint record by case index: fills `values` and returns true, or
/// returns false when no checkpoint holds the case.
using RecordLookup = std::function<bool(std::size_t, std::vector<double>&)>;

/// The time-series counterpart of write_sweep_skeleton: the file write_time_series_file makes of
/// a complete series, with the per-step rows (leading dimension "time", the variables of
/// sweep_row_datasets) deferred to the ranks; the daily totals are computed here from the
/// records of the quadrature nodes (cases n_steps and up), which `nodes` looks up.
void write_time_series_skeleton(const std::filesystem::path& path, const experiment::Study& study,
                                const experiment::ScenarioResult& templ, std::size_t granule,
                                std::size_t record_values, const RecordLookup& nodes);

/// The file of a time series (write_sweep_file calls it for a time-series study): a CF `time`
/// dimension and coordinate over the steps, with the sun's position per step; daily totals on a
/// `day` dimension from the quadrature nodes. Same atomicity and `partial` rules as
/// write_sweep_file (days with a node still to run hold fill values).
void write_time_series_file(const std::filesystem::path& path, const experiment::Study& study,
                            const experiment::ScenarioResult& templ, const std::filesystem::path& checkpoint,
                            const CheckpointContents& contents, bool partial);

/// Writes a flat CSV of a finished time-series file: one row per step with its local time.
void write_time_series_csv(const std::filesystem::path& series_file, const std::filesystem::path& csv,
                           const experiment::Study& study);

/// Writes a flat CSV of a finished sweep file: one row per scenario with its swept parameters and
/// the scalar surface, TOA and radiative-effect products. Atomic.
void write_sweep_summary_csv(const std::filesystem::path& sweep_file, const std::filesystem::path& csv,
                             const experiment::Study& study);

/// Name of the coordinate variable of a swept parameter path ("aerosol.optical_depth" ->
/// "aerosol_optical_depth").
std::string sweep_variable_name(const std::string& path);

}  // namespace solstrata::io
