// Writing a run's results: the self-describing HDF5 file and the flat CSV summary.
#pragma once

#include <filesystem>
#include <string>

#include "experiment/experiment.hpp"
#include "experiment/run.hpp"

namespace solstrata::io {

/// Writes `r` (from experiment `e`) as a netCDF-4 compatible HDF5 file at `path`, atomically:
/// the file appears complete or not at all. Every variable has units and long_name (and CF
/// standard_name where CF defines one); global attributes carry provenance, the experiment text,
/// the solar-spectrum note and the cautions. Throws OutputError on failure.
void write_result_file(const std::filesystem::path& path, const experiment::Experiment& e,
                       const experiment::RunResult& r);

/// Writes the flat summary (one row per reporting band plus a broadband row) as CSV, atomically.
void write_summary_csv(const std::filesystem::path& path, const experiment::RunResult& r);

/// The current time as an ISO 8601 UTC timestamp ("2026-12-02T05:13:00Z"), for history attributes.
std::string iso_timestamp_utc();

}  // namespace solstrata::io
