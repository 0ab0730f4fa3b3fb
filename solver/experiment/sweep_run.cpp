#include "experiment/sweep_run.hpp"

#include <condition_variable>
#include <deque>
#include <exception>
#include <future>
#include <map>
#include <mutex>
#include <optional>
#include <span>
#include <thread>

#if defined(__GLIBC__)
#include <malloc.h>
#endif

namespace solstrata::experiment {
namespace {

/// glibc hands blocks above 128 KiB to mmap and returns them to the system when freed, and every
/// scenario's optics and flux arrays are that large: each run then faults its pages in afresh
/// and the kernel zeroes them (measured on a 400-scenario sweep: 466,509 page faults and 2.1x the
/// CPU time). Keep freed memory for reuse: blocks up to 32 MiB come from the heap, and a heap is
/// trimmed only above 64 MiB free (mallopt, glibc), so what is kept stays bounded.
void keep_freed_memory() {
#if defined(__GLIBC__)
  static std::once_flag once;
  std::call_once(once, [] {
    mallopt(M_MMAP_THRESHOLD, 32 << 20);
    mallopt(M_TRIM_THRESHOLD, 64 << 20);
  });
#endif
}

AerosolEffect effect_of(const RunResult& with, const std::vector<double>& without_net_down) {
  AerosolEffect a;
  const std::size_t s = with.n_levels - 1;
  a.toa = with.net_down[0] - without_net_down[0];
  a.surface = with.net_down[s] - without_net_down[s];
  a.atmosphere = a.toa - a.surface;
  return a;
}

/// The net downward flux of the aerosol-free cases (all the radiative effect needs), each
/// computed once, shared between threads; a few hundred bytes per distinct case.
class CleanCache {
 public:
  CleanCache(const Study& study, bool spectral) : study_(study), spectral_(spectral) {}

  std::vector<double> get(std::size_t scenario) {
    const std::string key = study_.aerosol_free_key(scenario);
    std::shared_future<std::vector<double>> fut;
    std::optional<std::promise<std::vector<double>>> mine;
    {
      std::lock_guard<std::mutex> lock(mutex_);
      auto it = cache_.find(key);
      if (it == cache_.end()) {
        mine.emplace();
        fut = mine->get_future().share();
        cache_.emplace(key, fut);
      } else {
        fut = it->second;
      }
    }
    if (mine) {
      try {
        Experiment e = study_.aerosol_free(scenario);
        e.output.spectral = false;
        mine->set_value(run_experiment(e).net_down);
      } catch (...) {
        mine->set_exception(std::current_exception());
      }
    }
    (void)spectral_;
    return fut.get();
  }

  [[nodiscard]] std::size_t distinct() {
    std::lock_guard<std::mutex> lock(mutex_);
    return cache_.size();
  }

 private:
  const Study& study_;
  bool spectral_;
  std::mutex mutex_;
  std::map<std::string, std::shared_future<std::vector<double>>> cache_;
};

/// Scenarios `indices` of the study as one engine call; their aerosol radiative effects from the
/// cache of aerosol-free cases (null: none).
std::vector<ScenarioResult> solve_cases(const Study& study, std::span<const std::size_t> indices, bool spectral,
                                        CleanCache* clean) {
  std::vector<Experiment> es;
  es.reserve(indices.size());
  std::vector<const Experiment*> ptrs;
  for (std::size_t i : indices) {
    es.push_back(study.scenario(i));
    es.back().output.spectral = spectral;
  }
  for (const Experiment& e : es) ptrs.push_back(&e);
  std::vector<RunResult> rs = run_experiments(ptrs);
  std::vector<ScenarioResult> out(indices.size());
  for (std::size_t k = 0; k < indices.size(); ++k) {
    out[k].index = indices[k];
    out[k].result = std::move(rs[k]);
    if (clean) out[k].effect = effect_of(out[k].result, clean->get(indices[k]));
  }
  return out;
}

}  // namespace

ScenarioResult run_scenario(const Study& study, std::size_t index, bool spectral) {
  CleanCache cache(study, spectral);
  const std::size_t one[] = {index};
  return std::move(solve_cases(study, one, spectral, study.computes_aerosol_effect() ? &cache : nullptr).front());
}

std::size_t run_parallel(std::size_t count, unsigned threads, const std::atomic<bool>* stop,
                         const std::function<void(std::size_t)>& work,
                         const std::function<void(std::size_t)>& on_done, std::size_t max_waiting_items) {
  keep_freed_memory();
  std::atomic<std::size_t> next{0};
  std::mutex m;
  std::condition_variable cv;
  std::condition_variable room;   // the consumer took an item: a waiting worker may go on
  std::deque<std::size_t> ready;  // finished items, handed over under the lock
  std::exception_ptr failure;
  const unsigned n_threads = std::max(1u, threads);
  // Back-pressure: while the caller is busy (writing a snapshot of a large sweep, say), workers
  // stop after this many finished items are waiting, so memory does not grow with the run.
  const std::size_t max_waiting = max_waiting_items ? max_waiting_items : 64 * std::size_t{n_threads};
  unsigned running = n_threads;
  const auto stopped = [&] { return stop && stop->load(); };

  // Dynamic scheduling: each worker takes the next item when it is free, so both cores stay
  // busy even when items differ in cost.
  const auto worker = [&] {
    for (;;) {
      if (stopped()) break;
      {
        std::lock_guard<std::mutex> lock(m);
        if (failure) break;
      }
      const std::size_t k = next.fetch_add(1);
      if (k >= count) break;
      try {
        work(k);
        std::unique_lock<std::mutex> lock(m);
        ready.push_back(k);
        cv.notify_one();
        room.wait(lock, [&] { return ready.size() < max_waiting || failure != nullptr; });
      } catch (...) {
        {
          std::lock_guard<std::mutex> lock(m);
          if (!failure) failure = std::current_exception();
        }
        room.notify_all();
      }
      cv.notify_one();
    }
    std::lock_guard<std::mutex> lock(m);
    --running;
    cv.notify_one();
  };
  std::vector<std::thread> pool;
  for (unsigned t = 0; t < n_threads; ++t) pool.emplace_back(worker);

  std::size_t done = 0;
  for (;;) {
    std::unique_lock<std::mutex> lock(m);
    cv.wait(lock, [&] { return !ready.empty() || running == 0; });
    if (ready.empty() && running == 0) break;
    const std::size_t k = ready.front();
    ready.pop_front();
    const bool failed = failure != nullptr;  // read under the lock (the workers write it)
    lock.unlock();
    room.notify_all();
    if (!failed) {
      try {
        on_done(k);
        ++done;
      } catch (...) {
        {
          std::lock_guard<std::mutex> l2(m);
          if (!failure) failure = std::current_exception();
        }
        room.notify_all();
      }
    }
  }
  for (std::thread& t : pool) t.join();
  if (failure) std::rethrow_exception(failure);
  return done;
}

std::size_t run_scenarios(const Study& study, const std::vector<std::size_t>& todo, const SweepOptions& options,
                          const std::function<void(ScenarioResult&&)>& on_done) {
  CleanCache cache(study, options.spectral);
  CleanCache* clean = study.computes_aerosol_effect() ? &cache : nullptr;
  // Work items are blocks of consecutive scenarios of `todo`, one engine call each. Finished
  // results wait here to be handed over (bounded by what the workers are ahead of the caller,
  // not by the number of scenarios).
  const std::size_t per = std::max<std::size_t>(1, options.cases_per_call);
  const std::size_t n_items = (todo.size() + per - 1) / per;
  std::mutex slots_mutex;
  std::map<std::size_t, std::vector<ScenarioResult>> slots;
  std::size_t handed = 0;
  run_parallel(
      n_items, options.threads, options.stop,
      [&](std::size_t k) {
        const std::size_t first = k * per, count = std::min(per, todo.size() - first);
        std::vector<ScenarioResult> r =
            solve_cases(study, std::span<const std::size_t>(todo).subspan(first, count), options.spectral, clean);
        std::lock_guard<std::mutex> lock(slots_mutex);
        slots.emplace(k, std::move(r));
      },
      [&](std::size_t k) {
        std::vector<ScenarioResult> r;
        {
          std::lock_guard<std::mutex> lock(slots_mutex);
          auto it = slots.find(k);
          r = std::move(it->second);
          slots.erase(it);
        }
        for (ScenarioResult& s : r) {
          on_done(std::move(s));
          ++handed;
        }
      },
      // About 64 finished scenarios per thread may wait, as many as with one scenario per item.
      std::max<std::size_t>(2, 64 / per) * std::max(1u, options.threads));
  return handed;
}

}  // namespace solstrata::experiment
