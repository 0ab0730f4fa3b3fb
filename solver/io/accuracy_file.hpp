// The output of `solstrata accuracy`: two-stream and reference fluxes and their differences.
#pragma once

#include <filesystem>
#include <vector>

#include "experiment/experiment.hpp"
#include "experiment/run.hpp"

namespace solstrata::io {

/// One compared scenario: the two-stream result and the reference result of the same inputs.
struct AccuracyCase {
  std::size_t scenario = 0;         ///< index in the study
  experiment::RunResult two_stream;  ///< with the experiment's closure
  experiment::RunResult reference;   ///< with the multi-stream reference
};

/// Writes the comparison (netCDF-4/HDF5, atomically): per case, band (the reporting bands, then
/// "broadband") and level, the two-stream and reference direct, diffuse, upward and net fluxes,
/// their difference (W m-2) and relative difference (percent of the reference where it exceeds
/// 1e-6 of the TOA flux, else 0), and the heating rates per layer with their difference.
void write_accuracy_file(const std::filesystem::path& path, const experiment::Experiment& e,
                         const std::vector<AccuracyCase>& cases, int streams);

}  // namespace solstrata::io
