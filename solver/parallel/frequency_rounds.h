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
//
// Block items. A frequency whose s(xi) is one reduction over independent units
// (Geometry::block_sum, solver/blocks/chunk.h) can be cut into chunks: tasks that compute some of
// its units alone (blocks::ChunkScope). A round with too few tasks for the slots (a frequency
// task costing more than the round's cost / (kItemsPerSlot x slots)) splits its largest
// frequency tasks. The frequency's value is then the reduction replayed on the gathered unit
// values in the serial order with the serial stopping tests, so it is the serial value bit for
// bit; units computed beyond where the reduction stopped are not used (`unused_blocks`), and a
// reduction that goes on beyond the chunks asked for asks for more in the next round. Chunks are
// not journaled; the frequency's value is, once known.
//  - m sums (sphere-plate, sphere-sphere; blocks::replay_sum_over_m): the walk over m samples
//    blocks (solver/blocks/m_walk.h), so a chunk is an arithmetic run of m (begin, end, stride):
//    the first round asks for the first batch and the walk's panels while its stride doubles
//    (blocks::likely_m_chunks, as many blocks as the cost model expects); the replay stops at the
//    first step with blocks missing and the next round asks for exactly those.
//  - k_z integrals (cylinder-plate, cylinder-cylinder; cylinder::replay_de_integrate): the
//    node set depends on the values (the level-0 march and the number of levels), so the
//    replay goes on over missing nodes with stand-ins and asks for every node it visited (a
//    level decided on stand-ins stops where the measured convergence predicts, so a first ask
//    is the level-0 march and level 1); the first ask replays with stand-ins only, at the
//    task's rel_tol for the integral's own tolerance (the chunks then report the real one). The
//    asked nodes, in index order, are cut into contiguous chunks of about (asked nodes) / parts
//    nodes.
//  - Bloch-vector integrals (grating-plate, grating-grating; blocks::BlochIntegral): each step
//    (a, b) of the refinement walk has a fixed node set, so the frequency's value is replayed by
//    calling the geometry on rank 0 under a scope holding the gathered node values
//    (Chunk::bloch_replay): the walk stops at the first step with missing nodes, and those
//    (sorted) are cut into `parts` contiguous chunks; one round per step. When the walk
//    completes, the value is the serial one bit for bit. The replay builds the geometry's
//    per-frequency set-up (layer structure, plate) on rank 0 each round.
// Material scans. The serial run computes its first scan point together with the points that
// share its frequency work (run.h): every frequency the first point computes is computed for
// them too, and each of them takes such a value the first time its own rule asks for it, else
// computes alone. Here the lead point's frequency tasks compute the companions' values too
// (SweepInput::companions; such tasks are not split into blocks), and a companion's gap is
// replayed only once the lead's gap is finished, when the values the serial lead computed are
// known: a companion takes those, once each, and asks for the rest as tasks of its own, so its
// values are the serial run's bit for bit (at_frequency_shared agrees with at_frequency_within
// only to rounding).
#include <cstdint>
#include <functional>
#include <map>
#include <optional>
#include <set>
#include <string>
#include <tuple>
#include <vector>

#include "solver/blocks/m_sum.h"
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
  /// A material scan computed together (solver/run.h, SharedFrequencyValues): the scan points
  /// whose values this point's frequency tasks compute with its own (Geometry::
  /// at_frequency_shared), as the serial run's first point does with its companions.
  std::vector<int> companions;
  /// For such a companion: the point that computes with it, else -1.
  int lead = -1;
};

enum class TaskKind : int { kFrequency = 0, kPfa = 1, kBlocks = 2 };

struct Task {
  TaskKind kind = TaskKind::kFrequency;
  int point = 0;
  int gap = 0;
  double xi = 0.0;       ///< rad/s (frequency tasks)
  double rel_tol = 0.0;  ///< accuracy asked for (frequency tasks)
  double cost = 0.0;     ///< model cost, for largest-first ordering
  int m_begin = 0;       ///< block tasks: the units m_begin <= i < m_end of frequency xi (m
  int m_end = 0;         ///< blocks or k_z node indices, blocks::Chunk)
  int m_stride = 1;      ///< block tasks: every m_stride-th unit from m_begin (m blocks)
  /// Bloch node tasks: the (p, q) nodes to compute, sorted (m_begin numbers the chunk).
  std::vector<blocks::BlochKey> bloch_keys = {};
};

/// What a task computed: s(xi) of a frequency task; for a PFA task (energy, force, gradient) in
/// (value, d1, d2) and `present` false when the geometry has no PFA.
struct TaskValue {
  Spectral s;
  bool present = true;
  double seconds = 0.0;          ///< compute time of the task
  std::vector<Spectral> shared;  ///< the companions' values of a shared frequency task
  /// Block tasks: the chunk; if the geometry ran no reduction at this xi (chunk.seen false),
  /// the whole frequency's value is in s.
  blocks::Chunk chunk;
};

/// Compute one task (any rank, any thread): Geometry::at_frequency_within or Geometry::pfa.
TaskValue compute_task(const std::vector<SweepInput>& inputs, const Task& task);

struct RoundStats {
  int rounds = 0;
  int tasks = 0;        ///< tasks computed (frequency and PFA)
  int speculative = 0;  ///< computed frequencies the finished rules did not use
  double task_seconds = 0.0;
  int split_frequencies = 0;  ///< frequencies computed as block tasks (m or k_z chunks)
  int block_tasks = 0;        ///< block tasks computed
  int block_units = 0;        ///< units (m blocks, k_z nodes) the block tasks computed
  int unused_blocks = 0;      ///< of these, units not used by the sums
  int shared_values = 0;      ///< companions' values taken from their lead's tasks
};

/// A round splits frequency tasks into block tasks until it has about this many tasks per
/// compute slot: with largest-first dynamic assignment the slots then finish within about one
/// small task of each other (list scheduling, Graham, SIAM J. Appl. Math. 17, 416 (1969)).
inline constexpr double kItemsPerSlot = 4.0;

/// Progress of a run in rounds, called on the thread that delivers the values (rank 0's main
/// thread under MPI): a gap's first value arrived, the frequencies known at a gap so far (a
/// frequency cut into block tasks counts once its first chunk arrives), a gap finished.
struct RoundProgress {
  std::function<void(int point, int gap)> gap_started;
  std::function<void(int point, int gap, int frequencies)> frequency;
  std::function<void(int point, int gap)> gap_done;
};

class SweepRounds {
 public:
  /// `slots`: tasks computed at once (all ranks); above 1, rounds may split frequencies into
  /// block tasks.
  explicit SweepRounds(const std::vector<SweepInput>& inputs, int slots = 1);
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
  /// Progress callbacks (null: none); must outlive the rounds.
  void set_progress(const RoundProgress* progress) { progress_ = progress; }

 private:
  using Key = std::tuple<int, int, std::uint64_t, std::uint64_t>;  // point, gap, xi, rel_tol
  using XiKey = std::tuple<int, int, std::uint64_t>;               // point, gap, xi
  struct GapState {
    bool finished = false;
    FrequencySum sum;
    std::optional<PfaValues> pfa;
    bool pfa_done = false;
    double seconds = 0.0;
    int frequencies = 0;  // values delivered (progress)
  };
  // A frequency computed in chunks (m blocks or k_z nodes).
  struct Split {
    blocks::BlockSum sum = blocks::BlockSum::kM;
    int parts = 0;  // chunks asked for at once
    double cost = 0.0;
    double unit_cost = 0.0;               // k_z: model cost of one node
    std::map<int, blocks::Chunk> chunks;  // k_z: delivered, by first unit
    // m sums: the delivered blocks by m, the blocks that failed (their messages), and the sum's
    // parameters from the first delivered chunk.
    std::map<int, Spectral> m_values;
    std::map<int, std::string> m_failed;
    std::optional<blocks::Chunk> m_meta;
    int m_computed = 0;
    std::optional<Spectral> whole;  // the geometry ran no reduction at this xi
    std::map<blocks::BlochKey, std::vector<double>> bloch;  // Bloch: gathered node values
    int next_chunk = 0;                                     // Bloch: number of the next chunk
  };
  // Replay one gap's rule; true if no surrogate was needed. Adds missing values to `tasks`.
  bool replay(int point, int gap, std::vector<Task>* tasks, std::set<Key>* asked_now);
  // The value of a split frequency if its reduction is complete; else adds the chunks it needs
  // next.
  std::optional<Spectral> settle(const Key& key, Split& split, std::vector<Task>* tasks);
  std::optional<Spectral> settle_m(const Key& key, Split& split, std::vector<Task>* tasks);
  std::optional<Spectral> settle_axial(const Key& key, Split& split, std::vector<Task>* tasks);
  std::optional<Spectral> settle_bloch(const Key& key, Split& split, std::vector<Task>* tasks);
  // Cut the largest frequency tasks of a round into block tasks (see the file comment).
  void split_largest(std::vector<Task>& tasks);

  const std::vector<SweepInput>& inputs_;
  std::vector<std::vector<GapState>> gaps_;
  std::map<Key, Spectral> values_;                    // computed this run, by (xi, rel_tol)
  std::map<XiKey, std::optional<Spectral>> journal_;  // first-ask lookups (loaded records)
  std::set<Key> used_;                                // values the finished replays used
  std::map<Key, Split> splits_;
  std::map<Key, Spectral> shared_;  // companions' values from their lead's tasks
  std::set<Key> shared_recorded_;   // shared values recorded in the companion's store
  // [point][gap]: (xi, rel_tol) the finished replay of a lead point's gap computed
  std::vector<std::vector<std::set<std::pair<std::uint64_t, std::uint64_t>>>> lead_computed_;
  std::set<std::pair<Key, int>> chunks_asked_;  // block tasks of the current round
  int slots_ = 1;
  const RoundProgress* progress_ = nullptr;
  RoundStats stats_;
};

/// The same sweeps as run_sweep on each input, done in rounds on this process with `slots`
/// tasks at a time (OpenMP), each task on one thread: bit-identical results, for tests and as
/// the reference of the distributed run. Honours options.cancel of the first input.
std::vector<RunResult> run_sweeps_in_rounds(const std::vector<SweepInput>& inputs, int slots,
                                            RoundStats* stats = nullptr);

}  // namespace roundtrip::parallel
