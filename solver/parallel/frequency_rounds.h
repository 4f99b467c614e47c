#pragma once
// A sweep cut into independent frequency tasks, for runs spread over MPI ranks (mpi_sweep.h) or
// over local threads (run_sweeps_in_rounds below).
//
// The frequency rules are adaptive (the Pade rule re-asks a term that came out larger than its
// model, the Matsubara sum stops on its computed tail, the T = 0 rule refines levels), so the
// frequencies of a gap are only known for certain once the values before them are. The work is
// therefore done in rounds: each round replays every unfinished gap's rule (cheap) on the values
// known so far; a frequency that is not known yet becomes a task and the replay goes on with a
// surrogate value (the nearest known value of that gap scaled by exp(-dxi/xi_scale), or the
// model -exp(-xi/xi_scale) that solver/plan.cc plans with), so that one round asks for every
// frequency the rule will probably need, not only the first missing one. A gap is finished when
// a replay needs no surrogate: its FrequencySum is then computed from exactly the values a serial
// run computes (same xi, same per-term rel_tol, same order of summation inside the rule), so the
// results are bit for bit those of run_sweep for any number of ranks or threads. A surrogate can
// make a round ask for a frequency the real values do not need: such tasks are computed and not
// used (`speculative` in RoundStats).
//
// The serial run's checkpoint semantics are kept: the first time a gap asks for xi, a value loaded
// from the journal is used (ContributionStore::lookup); a re-ask is computed anew; every computed
// value is recorded (ContributionStore::record). Each gap's PFA is a task of its own.
#include <cstdint>
#include <map>
#include <optional>
#include <set>
#include <string>
#include <tuple>
#include <vector>

#include "solver/run.h"

namespace roundtrip::parallel {

/// One scan point of a distributed run: its geometry, gaps and options (frequency rule,
/// quantities, store; progress callbacks are not used).
struct SweepInput {
  const Geometry* geometry = nullptr;
  std::vector<double> gaps;
  RunOptions options;
  /// Model cost of one frequency at each gap (solver/plan.h, GapPlan::flops_per_frequency);
  /// empty: all equal. Tasks are handed out largest first.
  std::vector<double> gap_costs;
};

enum class TaskKind : int { kFrequency = 0, kPfa = 1 };

struct Task {
  TaskKind kind = TaskKind::kFrequency;
  int point = 0;
  int gap = 0;
  double xi = 0.0;       ///< rad/s (frequency tasks)
  double rel_tol = 0.0;  ///< accuracy asked for (frequency tasks)
  double cost = 0.0;     ///< model cost, for largest-first ordering
};

/// What a task computed: s(xi) of a frequency task; for a PFA task (energy, force, gradient) in
/// (value, d1, d2) and `present` false when the geometry has no PFA.
struct TaskValue {
  Spectral s;
  bool present = true;
  double seconds = 0.0;  ///< compute time of the task
};

/// Compute one task (any rank, any thread): Geometry::at_frequency_within or Geometry::pfa.
TaskValue compute_task(const std::vector<SweepInput>& inputs, const Task& task);

struct RoundStats {
  int rounds = 0;
  int tasks = 0;        ///< tasks computed (frequency and PFA)
  int speculative = 0;  ///< computed frequencies the finished rules did not use
  double task_seconds = 0.0;
};

class SweepRounds {
 public:
  explicit SweepRounds(const std::vector<SweepInput>& inputs);
  /// Replay every unfinished gap; return the tasks still needed, largest cost first (ties: lower
  /// xi first, then point, gap). Empty: every gap is finished.
  std::vector<Task> next_round();
  /// Hand in the value of a task of the last round (any order). Frequency values are recorded
  /// in the point's store. Not thread-safe: call from one thread.
  void deliver(const Task& task, const TaskValue& value);
  /// The results of every point; gaps not finished (a cancelled run) have complete = false.
  /// Counts unused frequencies into stats().
  std::vector<RunResult> results(double wall_seconds);
  const RoundStats& stats() const { return stats_; }

 private:
  using Key = std::tuple<int, int, std::uint64_t, std::uint64_t>;  // point, gap, xi, rel_tol
  using XiKey = std::tuple<int, int, std::uint64_t>;               // point, gap, xi
  struct GapState {
    bool finished = false;
    FrequencySum sum;
    std::optional<PfaValues> pfa;
    bool pfa_done = false;
    double seconds = 0.0;
  };
  // Replay one gap's rule; true if no surrogate was needed. Adds missing values to `tasks`.
  bool replay(int point, int gap, std::vector<Task>* tasks, std::set<Key>* asked_now);

  const std::vector<SweepInput>& inputs_;
  std::vector<std::vector<GapState>> gaps_;
  std::map<Key, Spectral> values_;                    // computed this run, by (xi, rel_tol)
  std::map<XiKey, std::optional<Spectral>> journal_;  // first-ask lookups (loaded records)
  std::set<Key> used_;                                // values the finished replays used
  RoundStats stats_;
};

/// The same sweeps as run_sweep on each input, done in rounds on this process with `slots`
/// tasks at a time (OpenMP), each task on one thread: bit-identical results, for tests and as
/// the reference of the distributed run. Honours options.cancel of the first input.
std::vector<RunResult> run_sweeps_in_rounds(const std::vector<SweepInput>& inputs, int slots,
                                            RoundStats* stats = nullptr);

}  // namespace roundtrip::parallel
