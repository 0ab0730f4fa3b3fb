#include "app/mpi_run.hpp"

#include <mpi.h>
#include <sched.h>

#include <algorithm>
#include <chrono>
#include <csignal>
#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <iostream>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "app/summary_table.hpp"
#include "experiment/input_error.hpp"
#include "experiment/run.hpp"
#include "experiment/sweep_run.hpp"
#include "io/atomic_file.hpp"
#include "io/checkpoint.hpp"
#include "io/output_lock.hpp"
#include "io/parallel_rows.hpp"
#include "io/sweep_file.hpp"

namespace solstrata::app {
namespace fs = std::filesystem;

MpiSession::MpiSession() {
  int initialized = 0;
  MPI_Initialized(&initialized);
  if (!initialized) {
    int provided = 0;
    MPI_Init_thread(nullptr, nullptr, MPI_THREAD_FUNNELED, &provided);
  }
  MPI_Comm_rank(MPI_COMM_WORLD, &rank_);
  MPI_Comm_size(MPI_COMM_WORLD, &size_);
}

MpiSession::~MpiSession() {
  int finalized = 0;
  MPI_Finalized(&finalized);
  if (!finalized) MPI_Finalize();
}

namespace {

/// The worst exit code of all ranks (0 ok < 1 failed < 2 bad input < 130 interrupted), so that
/// every rank takes the same way out.
int agree(int code) {
  int worst = 0;
  MPI_Allreduce(&code, &worst, 1, MPI_INT, MPI_MAX, MPI_COMM_WORLD);
  return worst;
}

/// CPUs this process may run on: mpirun binds each rank (to a core, by default for 2 ranks or
/// fewer), and a rank's threads should share what it was given, not the whole machine.
unsigned cpus_of_this_process() {
  cpu_set_t set;
  CPU_ZERO(&set);
  if (sched_getaffinity(0, sizeof set, &set) == 0 && CPU_COUNT(&set) > 0) return static_cast<unsigned>(CPU_COUNT(&set));
  return 1;
}

/// The rank number of a per-rank checkpoint name ("OUT.h5.partial.rank12" -> 12), -1 for the
/// serial checkpoint "OUT.h5.partial", -2 for any other name.
long checkpoint_rank(const std::string& name, const std::string& base) {
  if (name == base) return -1;
  const std::string prefix = base + ".rank";
  if (name.size() <= prefix.size() || name.compare(0, prefix.size(), prefix) != 0) return -2;
  const std::string digits = name.substr(prefix.size());
  if (digits.size() > 6 || !std::all_of(digits.begin(), digits.end(), [](char c) { return c >= '0' && c <= '9'; })) return -2;
  return std::stol(digits);
}

fs::path rank_checkpoint(const fs::path& out, int rank) { return out.string() + ".partial.rank" + std::to_string(rank); }

/// The checkpoints of `out` in a fixed order (the serial one, then by rank), from a listing of
/// its directory plus the files of ranks [0, ranks) in `with`.
std::vector<fs::path> checkpoint_files(const fs::path& out, int with_ranks, const std::vector<fs::path>& also = {}) {
  const fs::path dir = out.has_parent_path() ? out.parent_path() : fs::path(".");
  const std::string base = out.filename().string() + ".partial";
  std::vector<std::pair<long, fs::path>> found;
  std::error_code ec;
  for (fs::directory_iterator it(dir, ec), end; !ec && it != end; it.increment(ec)) {
    const long r = checkpoint_rank(it->path().filename().string(), base);
    if (r >= -1 && it->is_regular_file(ec)) found.emplace_back(r, dir / it->path().filename());
  }
  for (int r = 0; r < with_ranks; ++r) found.emplace_back(r, dir / rank_checkpoint(out, r).filename());
  for (const fs::path& p : also) found.emplace_back(checkpoint_rank(p.filename().string(), base), dir / p.filename());
  std::sort(found.begin(), found.end());
  found.erase(std::unique(found.begin(), found.end()), found.end());
  std::vector<fs::path> files;
  for (auto& [r, p] : found) files.push_back(std::move(p));
  return files;
}

/// Which rank reads checkpoint `k` of `files`: rank R its own file OUT.h5.partial.rankR, the
/// others (the serial checkpoint, files of ranks beyond this run's) in turn.
int reader_of(const std::vector<fs::path>& files, std::size_t k, const fs::path& out, int size) {
  const std::string base = out.filename().string() + ".partial";
  int others = 0;
  for (std::size_t j = 0; j < files.size(); ++j) {
    const long r = checkpoint_rank(files[j].filename().string(), base);
    const bool own = r >= 0 && r < size;
    if (j == k) return own ? static_cast<int>(r) : others % size;
    if (!own) ++others;
  }
  return 0;
}

/// A finished scenario found in a checkpoint: (scenario, file index, byte offset).
struct Found {
  std::uint64_t scenario, file, offset;
};

/// Reads this rank's share of the checkpoints; checks each header against the study. Returns the
/// records found, and the contents of this rank's own checkpoint in `own` when it exists.
std::vector<Found> read_my_checkpoints(const std::vector<fs::path>& files, const fs::path& out, int rank, int size,
                                       const io::CheckpointHeader& expect, std::optional<io::CheckpointContents>& own) {
  std::vector<Found> found;
  const fs::path mine = rank_checkpoint(out, rank);
  for (std::size_t k = 0; k < files.size(); ++k) {
    if (reader_of(files, k, out, size) != rank) continue;
    std::error_code ec;
    if (!fs::exists(files[k], ec)) continue;  // a rank of this run that has not written one
    io::CheckpointContents c = io::read_checkpoint(files[k]);
    if (c.header.experiment_hash != expect.experiment_hash || c.header.n_scenarios != expect.n_scenarios) {
      throw io::OutputError("cannot resume: " + files[k].string() + " was made by a different experiment " +
                            "(the experiment file or its output options changed since); delete it to start afresh");
    }
    if (c.header.record_values != expect.record_values) {
      throw io::OutputError("cannot resume: " + files[k].string() + " has a different record layout");
    }
    for (const auto& [scenario, offset] : c.offsets) found.push_back({scenario, k, offset});
    if (files[k].filename() == mine.filename()) own = std::move(c);
  }
  return found;
}

/// Sends each found record to the rank whose row block holds it, and the cases beyond the rows
/// (the daily-total nodes of a time series) to rank 0, which reduces them into daily totals.
/// Returns this rank's rows in order; `beyond` gets the cases beyond the rows (rank 0). Throws
/// OutputError (on this rank) when a row of its block is in no checkpoint.
std::vector<io::RecordLocation> gather_block(const std::vector<Found>& found, const io::RankBlocks& blocks, int rank,
                                             int size, std::map<std::uint64_t, io::RecordLocation>& beyond) {
  std::vector<std::vector<std::uint64_t>> out(static_cast<std::size_t>(size));
  for (const Found& f : found) {
    auto& v = out[f.scenario < blocks.rows ? static_cast<std::size_t>(blocks.owner(f.scenario)) : 0];
    v.insert(v.end(), {f.scenario, f.file, f.offset});
  }
  std::vector<int> send_counts(static_cast<std::size_t>(size)), recv_counts(static_cast<std::size_t>(size));
  std::vector<int> send_at(static_cast<std::size_t>(size)), recv_at(static_cast<std::size_t>(size));
  std::vector<std::uint64_t> send;
  for (int r = 0; r < size; ++r) {
    send_at[static_cast<std::size_t>(r)] = static_cast<int>(send.size());
    send_counts[static_cast<std::size_t>(r)] = static_cast<int>(out[static_cast<std::size_t>(r)].size());
    send.insert(send.end(), out[static_cast<std::size_t>(r)].begin(), out[static_cast<std::size_t>(r)].end());
  }
  MPI_Alltoall(send_counts.data(), 1, MPI_INT, recv_counts.data(), 1, MPI_INT, MPI_COMM_WORLD);
  int total = 0;
  for (int r = 0; r < size; ++r) {
    recv_at[static_cast<std::size_t>(r)] = total;
    total += recv_counts[static_cast<std::size_t>(r)];
  }
  std::vector<std::uint64_t> recv(static_cast<std::size_t>(total));
  MPI_Alltoallv(send.data(), send_counts.data(), send_at.data(), MPI_UINT64_T, recv.data(), recv_counts.data(),
                recv_at.data(), MPI_UINT64_T, MPI_COMM_WORLD);
  const std::size_t lo = blocks.begin(rank), hi = blocks.end(rank);
  std::vector<io::RecordLocation> where(hi - lo);
  std::vector<char> have(hi - lo, 0);
  for (std::size_t i = 0; i + 2 < recv.size(); i += 3) {
    if (recv[i] >= blocks.rows) {
      beyond[recv[i]] = {recv[i + 1], recv[i + 2]};
      continue;
    }
    where[recv[i] - lo] = {recv[i + 1], recv[i + 2]};
    have[recv[i] - lo] = 1;
  }
  for (std::size_t i = 0; i < have.size(); ++i) {
    if (!have[i]) throw io::OutputError("scenario " + std::to_string(lo + i) + " is in no checkpoint");
  }
  return where;
}

}  // namespace

int run_sweep_mpi(const experiment::Study& study, const experiment::Experiment& e, const RunOptions& o,
                  const std::atomic<bool>* stop) {
  int rank = 0, size = 1;
  MPI_Comm_rank(MPI_COMM_WORLD, &rank);
  MPI_Comm_size(MPI_COMM_WORLD, &size);
  const fs::path out = e.output.file;
  const bool spectral = e.output.spectral;
  const std::size_t n = study.size();
  const bool say = rank == 0 && !o.quiet;
  const std::string who = size > 1 ? "solstrata run (rank " + std::to_string(rank) + "): " : "solstrata run: ";
  // Crash injection for tests: SIGKILL this rank after this many appended records (set the
  // variable for one rank only to kill one rank).
  const char* kill_env = std::getenv("SOLSTRATA_TEST_KILL_AFTER");
  const long kill_after = kill_env ? std::atol(kill_env) : -1;
  const auto t0 = std::chrono::steady_clock::now();

  // Rank 0 holds the output lock for the whole job: the ranks are one run. (Other ranks may be on
  // other machines, where flock on a shared file system need not reach rank 0's lock anyway.)
  std::optional<io::OutputLock> lock;
  int code = 0;
  if (rank == 0) {
    try {
      lock.emplace(out);
      io::remove_stale_temporaries(out);
      for (const fs::path& p : checkpoint_files(out, size)) io::remove_stale_temporaries(p);
    } catch (const std::exception& ex) {
      std::cerr << "solstrata run: " << ex.what() << "\n";
      code = kExitBadInput;
    }
  }
  if ((code = agree(code)) != 0) return code;

  // Scenario 0 fixes the record layout: every rank solves it (the rank that owns it records it).
  std::optional<experiment::ScenarioResult> templ;
  std::size_t record_values = 0;
  try {
    templ = experiment::run_scenario(study, 0, spectral);
    record_values = io::scenario_record(*templ, study.computes_aerosol_effect()).size();
  } catch (const experiment::InputError& ex) {
    if (rank == 0) std::cerr << ex.what() << "\n";
    code = kExitBadInput;
  } catch (const std::exception& ex) {
    std::cerr << who << o.experiment << ": sweep failed: " << ex.what() << "\n";
    code = kExitRunFailed;
  }
  if ((code = agree(code)) != 0) return code;
  const io::CheckpointHeader header{io::experiment_hash(study.base().text, spectral), n, record_values};
  const bool with_effect = study.computes_aerosol_effect();

  // What is done already: every rank reads its share of the checkpoints left by earlier runs
  // (serial, or with any number of ranks), then all learn the union.
  const std::vector<fs::path> left = checkpoint_files(out, 0);
  if (!left.empty() && !o.resume) {
    if (rank == 0) {
      std::cerr << "solstrata run: an interrupted run left " << left.front().string()
                << (left.size() > 1 ? " and " + std::to_string(left.size() - 1) + " more checkpoint(s)" : std::string())
                << "; continue it with --resume, or delete them to start afresh\n";
    }
    return kExitBadInput;
  }
  std::optional<io::CheckpointContents> own;
  std::vector<unsigned char> done(n, 0);
  try {
    for (const Found& f : read_my_checkpoints(left, out, rank, size, header, own)) done[f.scenario] = 1;
  } catch (const std::exception& ex) {
    std::cerr << "solstrata run: " << ex.what() << "\n";
    code = kExitBadInput;
  }
  if ((code = agree(code)) != 0) return code;
  MPI_Allreduce(MPI_IN_PLACE, done.data(), static_cast<int>(n), MPI_UNSIGNED_CHAR, MPI_BOR, MPI_COMM_WORLD);
  std::vector<std::size_t> pending;
  for (std::size_t i = 0; i < n; ++i)
    if (!done[i]) pending.push_back(i);
  const std::size_t from_checkpoints = n - pending.size();
  // Contiguous blocks of what is left, one per rank: the scenarios of a sweep cost about the same
  // (one solve of the same column), so equal blocks balance without a work queue, every rank
  // knows every block without talking, and a rank's checkpoint is one stretch of the study.
  const std::size_t p = pending.size(), r0 = static_cast<std::size_t>(rank), ranks = static_cast<std::size_t>(size);
  std::vector<std::size_t> todo(pending.begin() + static_cast<std::ptrdiff_t>(r0 * p / ranks),
                                pending.begin() + static_cast<std::ptrdiff_t>((r0 + 1) * p / ranks));
  pending.clear();
  pending.shrink_to_fit();

  // This rank's scenarios, on its threads, into its own checkpoint.
  experiment::SweepOptions opt;
  opt.threads = o.jobs ? o.jobs : cpus_of_this_process();
  opt.spectral = spectral;
  opt.stop = stop;
  if (templ) opt.cases_per_call = experiment::cases_per_call_for(templ->result.n_points);
  std::size_t finished = 0;
  try {
    const fs::path mine = rank_checkpoint(out, rank);
    std::optional<io::CheckpointWriter> writer;
    if (own) writer.emplace(mine, header, true, own->valid_bytes);
    else writer.emplace(mine, header, false);
    long appended = 0;
    const auto record = [&](const experiment::ScenarioResult& s) {
      writer->append(s.index, io::scenario_record(s, with_effect));
      if (kill_after >= 0 && ++appended >= kill_after) std::raise(SIGKILL);
    };
    if (!todo.empty() && todo.front() == 0) {
      record(*templ);
      todo.erase(todo.begin());
    }
    finished = experiment::run_scenarios(study, todo, opt, [&](experiment::ScenarioResult&& s) { record(s); });
    writer.reset();  // closed and on disk before this rank waits for the others
    if (finished < todo.size()) code = kExitInterrupted;
  } catch (const experiment::InputError& ex) {
    std::cerr << ex.what() << "\n";
    code = kExitBadInput;
  } catch (const std::exception& ex) {
    std::cerr << who << o.experiment << ": sweep failed: " << ex.what() << "\n";
    code = kExitRunFailed;
  }
  const double compute_seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  if ((code = agree(code)) != 0) {
    if (rank == 0) {
      std::cerr << "\nsolstrata run: " << (code == kExitInterrupted ? "interrupted" : "stopped") << "; "
                << out.string() << ".partial.rank* keep the finished scenarios. Continue with: mpirun -n N solstrata run "
                << o.experiment << (o.output.empty() ? "" : " -o " + o.output)
                << (spectral && !study.base().output.spectral ? " --spectral" : "") << " --resume\n";
    }
    return code;
  }

  // Which checkpoint holds each row of this rank's block of the file.
  // The rows of the file: the scenarios of a sweep, the steps of a time series.
  const bool series = study.is_time_series();
  const io::RankBlocks blocks = io::rank_blocks(series ? study.plan().time.n_steps : n, size);
  const std::vector<fs::path> files = checkpoint_files(out, size, left);
  std::vector<io::RecordLocation> where;
  std::map<std::uint64_t, io::RecordLocation> nodes;  // rank 0: daily-total nodes of a series
  try {
    std::optional<io::CheckpointContents> unused;
    where = gather_block(read_my_checkpoints(files, out, rank, size, header, unused), blocks, rank, size, nodes);
  } catch (const std::exception& ex) {
    std::cerr << who << ex.what() << "\n";
    code = kExitRunFailed;
  }
  if ((code = agree(code)) != 0) return code;

  // The file: rank 0 lays it out (everything but the per-scenario rows, with the serial writer),
  // then all ranks write their rows into it at once, then rank 0 renames it into place.
  std::optional<io::AtomicOutput> result;
  std::string temp;
  if (rank == 0) {
    try {
      result.emplace(out);
      temp = result->temp_path().string();
      if (series) {
        const io::RecordLookup node = [&](std::size_t i, std::vector<double>& values) {
          const auto it = nodes.find(i);
          if (it == nodes.end()) return false;
          values = io::read_checkpoint_record(files[it->second.file], it->second.offset, record_values);
          return true;
        };
        io::write_time_series_skeleton(temp, study, *templ, blocks.granule, record_values, node);
      } else {
        io::write_sweep_skeleton(temp, study, *templ, blocks.granule);
      }
    } catch (const std::exception& ex) {
      std::cerr << "solstrata run: writing " << out.string() << " failed: " << ex.what() << "\n";
      code = kExitRunFailed;
    }
  }
  if ((code = agree(code)) != 0) return code;
  int length = static_cast<int>(temp.size());
  MPI_Bcast(&length, 1, MPI_INT, 0, MPI_COMM_WORLD);
  temp.resize(static_cast<std::size_t>(length));
  MPI_Bcast(temp.data(), length, MPI_CHAR, 0, MPI_COMM_WORLD);
  io::ParallelWriteStats stats;
  try {
    stats = io::write_rows_collectively(temp, io::sweep_row_datasets(study, *templ), blocks, rank, files, where,
                                        record_values);
  } catch (const std::exception& ex) {
    // Inside collective HDF5 calls the other ranks cannot be told apart from waiting ones: end
    // the job. The checkpoints stay; the temporary is removed by the next run.
    std::cerr << who << "writing " << out.string() << " failed: " << ex.what() << "\n";
    MPI_Abort(MPI_COMM_WORLD, kExitRunFailed);
  }
  double write_seconds = 0;
  unsigned long long bytes = 0, my_bytes = stats.bytes;
  MPI_Reduce(&stats.seconds, &write_seconds, 1, MPI_DOUBLE, MPI_MAX, 0, MPI_COMM_WORLD);
  MPI_Reduce(&my_bytes, &bytes, 1, MPI_UNSIGNED_LONG_LONG, MPI_SUM, 0, MPI_COMM_WORLD);
  if (rank == 0) {
    try {
      result->commit();
      std::error_code ec;
      for (const fs::path& f : files) fs::remove(f, ec);
      if (!e.output.csv.empty()) io::write_sweep_summary_csv(out, e.output.csv, study);
    } catch (const std::exception& ex) {
      std::cerr << "solstrata run: writing " << out.string() << " failed: " << ex.what() << "\n";
      code = kExitRunFailed;
    }
  }
  if ((code = agree(code)) != 0) return code;
  if (say) {
    const double secs = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    std::cout << "solstrata run: " << o.experiment << ": " << n << (series ? " cases" : " scenarios");
    if (from_checkpoints) std::cout << " (" << from_checkpoints << " from the checkpoints)";
    std::cout << " in " << secs << " s on " << size << " rank(s) x " << opt.threads << " thread(s) (rank 0: "
              << compute_seconds << " s to solve)\n";
    std::cout << "parallel write: " << double(bytes) / 1e6 << " MB of rows in " << write_seconds << " s ("
              << (write_seconds > 0 ? double(bytes) / 1e6 / write_seconds : 0.0) << " MB/s)\n";
    print_study_outputs(std::cout, out, study, e, with_effect);
  }
  return kExitOk;
}

}  // namespace solstrata::app
