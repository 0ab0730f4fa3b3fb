// Sweeps: many scenarios from one experiment file, by grids or zipped lists over any numeric key.
#pragma once

#include <cstddef>
#include <filesystem>
#include <memory>
#include <string>
#include <utility>
#include <vector>

#include "experiment/experiment.hpp"
#include "experiment/input_error.hpp"

namespace solstrata::experiment {

/// The most scenarios one study may have (a stated ceiling: 10^8 scenarios of a 60-layer column
/// at ~10^4 scenarios per second is about three hours on one machine). Larger sweeps are refused
/// when the file is read, before anything is allocated.
inline constexpr std::size_t kMaxScenarios = 100'000'000;

/// One swept parameter: a key path in the experiment file and its values.
struct SweepParameter {
  std::string path;            ///< dotted key path, e.g. "aerosol.optical_depth" or "given_optics.layers[0].optical_depth"
  std::vector<double> values;  ///< one value per point of its axis, in the key's unit
  SourceMark mark;             ///< where the parameter is declared (for error messages)
};

/// One axis of the scenario grid: a single parameter, or several zipped (taken together).
struct SweepAxis {
  std::vector<SweepParameter> parameters;  ///< all of the same length
  [[nodiscard]] std::size_t size() const { return parameters.empty() ? 1 : parameters.front().values.size(); }
};

/// The cases of a time series: its steps, then the quadrature nodes of its daily totals.
struct TimePlan {
  std::size_t n_steps = 0;               ///< cases [0, n_steps) are the steps of `times`
  /// Daily totals: case n_steps + k is node k of a Gauss-Legendre quadrature over the daylight
  /// intervals of its local day (kDailyNodes per interval).
  std::vector<double> node_time;         ///< s since 1970-01-01T00:00:00Z
  std::vector<double> node_weight;       ///< s: quadrature weight (a sum of weights x flux is J m-2)
  std::vector<std::size_t> node_day;     ///< day of the node
  std::vector<std::size_t> node_step;    ///< the step whose per-step inputs the node takes (nearest in time)
  std::vector<double> day_start;         ///< s since 1970-01-01T00:00:00Z: local midnight starting each day
  std::vector<double> daylight_s;        ///< s: daylight (apparent sun above the horizon) of each day
  [[nodiscard]] std::size_t n_nodes() const { return node_time.size(); }
};

/// Daily totals: Gauss-Legendre nodes over the part of each daylight interval with the sun above
/// kLowSunDeg of elevation, and kDailyLowSunNodes over each low-sun piece (sunrise to that
/// elevation, and back to sunset), where the plane-of-array models have kinks (Perez et al. 1990
/// hold cos Z at cos 85 deg below 5 deg). Checked against a 1-minute trapezoidal sum of the same
/// runs to 0.1 % for global, diffuse and plane-of-array (tests/experiment/time_series_test.cpp).
inline constexpr int kDailyNodes = 12;
inline constexpr int kDailyLowSunNodes = 4;
inline constexpr double kLowSunDeg = 5.0;

/// The scenarios of a study: the Cartesian product of the axes, first axis slowest (row-major).
/// A scenario list file is a single zipped axis.
struct SweepPlan {
  std::vector<SweepAxis> axes;  ///< empty: one scenario, the file as written
  bool from_list = false;       ///< scenarios came from a scenario list (CSV), not a grid
  bool time_series = false;     ///< the study is a time series (`times`): see `time`
  TimePlan time;                ///< its steps and daily-total nodes (time_series only)

  [[nodiscard]] std::size_t n_scenarios() const;
  /// Axis sizes (the grid shape; {n} for a list).
  [[nodiscard]] std::vector<std::size_t> shape() const;
  /// Every swept parameter, in axis order.
  [[nodiscard]] std::vector<const SweepParameter*> parameters() const;
  /// (path, value) of every swept parameter in scenario i.
  [[nodiscard]] std::vector<std::pair<std::string, double>> assignment(std::size_t i) const;
};

/// Parses the text of a scenario list (sweep.scenario_file): comment ('#') and blank lines, a
/// header of key paths separated by commas, then one row of numbers per scenario. `file` names
/// it in messages and `mark` (the scenario_file entry) goes into each parameter. Throws
/// std::invalid_argument "FILE line N: ..." on a malformed table.
SweepAxis parse_scenario_csv(const std::string& text, const std::string& file, const SourceMark& mark);

/// An experiment file with its sweep: yields the resolved Experiment of each scenario, and of the
/// same scenario without aerosol (for aerosol radiative effects).
class Study {
 public:
  /// Reads the file, validates the base experiment and the sweep section. Throws InputError.
  static Study load(const std::filesystem::path& path);
  /// As load, from text; `name` stands for the file, `base_dir` resolves relative paths.
  static Study parse(std::string text, const std::string& name, const std::filesystem::path& base_dir);

  Study(Study&&) noexcept;
  Study& operator=(Study&&) noexcept;
  ~Study();

  [[nodiscard]] std::size_t size() const { return plan_.n_scenarios(); }
  [[nodiscard]] const SweepPlan& plan() const { return plan_; }
  /// The experiment as written (sweep values not applied).
  [[nodiscard]] const Experiment& base() const { return base_; }
  /// Scenario i, validated. Throws InputError pointing at the sweep entry of a bad value.
  [[nodiscard]] Experiment scenario(std::size_t i) const;
  /// Scenario i without its aerosol section.
  [[nodiscard]] Experiment aerosol_free(std::size_t i) const;
  /// Identifies the aerosol-free case of scenario i: equal keys, equal aerosol-free problems.
  [[nodiscard]] std::string aerosol_free_key(std::size_t i) const;
  /// Whether the study has an aerosol at all.
  [[nodiscard]] bool has_aerosol() const;
  /// Whether aerosol radiative effects are computed: studies with aerosol, except time series
  /// (which would double their cost; run a sweep over the aerosol for effects).
  [[nodiscard]] bool computes_aerosol_effect() const { return has_aerosol() && !plan_.time_series; }
  /// Whether the study is a time series (section `times`).
  [[nodiscard]] bool is_time_series() const { return plan_.time_series; }
  /// Checks every scenario (throws InputError at the first bad one).
  void validate_all() const;
  /// Whether scenarios are the base experiment with typed values set (every swept key one the
  /// study can set directly), rather than the file re-read with the values written in.
  [[nodiscard]] bool typed_patches() const;
  /// For tests: false sends every scenario through the loader (the reference path).
  void use_typed_patches(bool on);

 private:
  Study();
  /// Case i of a time series: a step, or a daily-total node.
  [[nodiscard]] Experiment time_step(std::size_t i) const;
  struct Impl;
  std::unique_ptr<Impl> impl_;
  Experiment base_;
  SweepPlan plan_;
};

}  // namespace solstrata::experiment
