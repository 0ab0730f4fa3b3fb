// Terminal summaries of an experiment (check) and of a run's results.
#pragma once

#include <filesystem>
#include <iosfwd>

#include "experiment/experiment.hpp"
#include "experiment/run.hpp"
#include "experiment/sweep.hpp"

namespace solstrata::app {

/// What a run of `e` would do: mode, atmosphere, spectral grid, bands, sun, output.
void print_check_summary(std::ostream& os, const experiment::Experiment& e);

/// The short table of a run: per band and broadband TOA down, surface direct, diffuse, global,
/// transmittance and atmospheric absorption; surface products; notes and cautions.
void print_run_summary(std::ostream& os, const experiment::Experiment& e, const experiment::RunResult& r);

/// The daily totals of a finished time-series file, one row per local day.
void print_time_series_summary(std::ostream& os, const std::filesystem::path& file, const experiment::Study& study);

/// The closing lines of a finished sweep or time series: the daily totals of a series, the legend
/// of the aerosol radiative effects (when computed), the solar caution and the files written.
void print_study_outputs(std::ostream& os, const std::filesystem::path& file, const experiment::Study& study,
                         const experiment::Experiment& e, bool with_effect);

}  // namespace solstrata::app
