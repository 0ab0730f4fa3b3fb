// Running the scenarios of a study on worker threads, with aerosol radiative effects.
#pragma once

#include <algorithm>
#include <atomic>
#include <cstddef>
#include <functional>
#include <vector>

#include "experiment/run.hpp"
#include "experiment/sweep.hpp"

namespace solstrata::experiment {

/// Instantaneous aerosol radiative effect (W m-2): net downward flux with the aerosol minus the
/// same scenario without it. Positive: the aerosol adds energy below that level (warming);
/// negative: it removes energy (cooling). atmosphere = toa - surface (energy kept in the air).
struct AerosolEffect {
  double toa = 0.0;         ///< W m-2: at the top of the atmosphere
  double surface = 0.0;     ///< W m-2: at the surface
  double atmosphere = 0.0;  ///< W m-2: absorbed in the atmosphere
};

/// One finished scenario.
struct ScenarioResult {
  std::size_t index = 0;   ///< scenario number in the study
  RunResult result;        ///< the scenario's products
  AerosolEffect effect;    ///< zero when the study has no aerosol
};

/// How to run the scenarios.
struct SweepOptions {
  /// Worker threads, >= 1.
  unsigned threads = 1;
  /// Write per-bin fluxes (spectral output) for every scenario.
  bool spectral = false;
  /// Scenarios solved together by one engine call (run_experiments): their spectral points go
  /// through one batched kernel call. >= 1 (see cases_per_call_for); results do not depend on it.
  std::size_t cases_per_call = 4;
  /// Set (e.g. by a signal handler) to stop handing out scenarios; those in flight still finish.
  const std::atomic<bool>* stop = nullptr;
};

/// Scenarios per engine call for cases of `n_points` spectral points each: enough for about 512
/// problems per kernel call (four of the kernel's blocks, so that a short last block costs little),
/// and one case when a case alone has that many (more would only spill the caches: measured in
/// bench/sweep_bench --cases-per-call).
inline std::size_t cases_per_call_for(std::size_t n_points) {
  return n_points == 0 ? 1 : std::max<std::size_t>(1, (512 + n_points - 1) / n_points);
}

/// Runs scenarios `todo` of `study` on `options.threads` threads. `on_done` is called on the
/// calling thread for each finished scenario, in completion order (the results themselves do not
/// depend on the thread count or order). The aerosol-free companion of each scenario is solved
/// once per distinct aerosol-free case. Returns the number of scenarios finished (fewer than
/// todo.size() only when stopped). Rethrows the first exception of a worker.
std::size_t run_scenarios(const Study& study, const std::vector<std::size_t>& todo, const SweepOptions& options,
                          const std::function<void(ScenarioResult&&)>& on_done);

/// The thread pool under run_scenarios, for other batches of independent work: runs work(k) for
/// k = 0..count-1 on `threads` threads (dynamic scheduling from an atomic counter) and calls
/// on_done(k) on the calling thread as each item finishes, in completion order. work(k) should
/// write only its own slot k of the caller's storage; on_done(k) may read it. Stops handing out
/// items once *stop is set (null: never). Returns the number of on_done calls; rethrows the first
/// exception of a worker or of on_done. Workers pause while `max_waiting` finished items wait
/// for on_done (0: 64 per thread), so memory stays bounded when on_done is slow.
std::size_t run_parallel(std::size_t count, unsigned threads, const std::atomic<bool>* stop,
                         const std::function<void(std::size_t)>& work,
                         const std::function<void(std::size_t)>& on_done, std::size_t max_waiting = 0);

/// One scenario (and its aerosol-free companion when the study has aerosol), single-threaded.
ScenarioResult run_scenario(const Study& study, std::size_t index, bool spectral);

}  // namespace solstrata::experiment
