#pragma once
// MPI runs of `roundtrip run` (built with -DROUNDTRIP_USE_MPI=ON; without it every function here
// says so and nothing is distributed).
//
// One process per rank, all reading the same case. Rank 0 parses, plans, keeps the checkpoint
// journal and writes the HDF5 file; every rank (rank 0 included, on a compute thread beside its
// dispatcher) computes frequency tasks of frequency_rounds.h. Rank 0 hands them out one at a
// time to whichever compute slot asks, largest model cost first (dynamic load balancing), and
// sums nothing itself: each gap's frequency rule is replayed on rank 0 with the gathered values,
// so the reduction order is the serial one and the numbers are those of a serial run bit for bit.
// A slot is one task at a time: 1 per rank with OpenMP threads inside the task for geometries
// that parallelise inside (spheres), else `threads` slots of 1 thread each.
//
// Stops: SIGINT/SIGTERM on any rank stops every rank (rank 0 tells the others; finished values
// are kept in the journal, finished gaps written, status 130); an exception on any rank ends all
// ranks through MPI_Abort after one message naming the rank and host; errors while reading the
// case are agreed on first (the first failing rank's message is printed once, every rank exits
// with its status, no MPI_Abort).
#include <cstdint>
#include <functional>
#include <string>
#include <vector>

#include "solver/parallel/frequency_rounds.h"

namespace roundtrip::parallel {

/// True if this program was built with MPI.
bool mpi_built();
/// True if an MPI launcher started this process (mpirun/mpiexec or srun: OMPI_COMM_WORLD_SIZE,
/// PMIX_RANK, PMI_RANK or PMI_SIZE in the environment).
bool launched_by_mpi();

/// The number of processes the launcher started (OMPI_COMM_WORLD_SIZE, PMI_SIZE, or under srun
/// SLURM_STEP_NUM_TASKS), 1 if not launched by one.
int launched_world_size();
/// The sentence saying that this program was built without MPI and how to build it with.
std::string not_built_text();

/// Thrown on the ranks that did not fail when the set-up agreement finds a failure elsewhere;
/// the message has been printed; exit with `status`.
struct StopRun {
  int status = 1;
};

class Session {
 public:
  /// Initialises MPI (threads: funneled) if built with MPI and launched by an MPI launcher;
  /// otherwise a single-process session (distributed() false).
  Session(int* argc, char*** argv);
  ~Session();
  Session(const Session&) = delete;
  Session& operator=(const Session&) = delete;
  /// The session of this process, or null.
  static Session* current();

  bool distributed() const { return distributed_; }
  int rank() const { return rank_; }
  int size() const { return size_; }
  bool lead() const { return rank_ == 0; }
  const std::string& host() const { return host_; }
  /// "rank 2 of 4 (node17)".
  std::string where(int rank) const;

  /// Collective, after every rank has read the case and rank 0 has opened its output files:
  /// returns if every rank succeeded and read the case of the same `case_hash`; else throws
  /// StopRun (the failing rank's message printed once by rank 0).
  void agree_setup(std::uint64_t case_hash);
  /// End of the process (collective): a set-up failure on this rank joins the agreement; after
  /// the run, every rank returns rank 0's status. `error` (empty if none) is printed by the rank
  /// that owns it ("roundtrip: error: " + error). During the run an error ends all ranks
  /// (abort_all). Returns the exit status; finalises MPI.
  int finish(int status, const std::string& error);
  /// Print "roundtrip: error: <this rank>: message" (without the rank if `name_rank` is false)
  /// and end every rank with `status` (MPI_Abort).
  [[noreturn]] void abort_all(const std::string& message, int status, bool name_rank = true);
  /// Called before MPI_Abort (e.g. remove the temporary results file).
  void set_before_abort(std::function<void()> f) { before_abort_ = std::move(f); }

  enum class Phase { kSetup, kRunning, kSwept, kDone };
  void set_phase(Phase p) { phase_ = p; }

 private:
  int agree(int status, const std::string& error, std::uint64_t hash, bool have_hash);
  bool distributed_ = false;
  int rank_ = 0, size_ = 1;
  std::string host_;
  std::vector<std::string> hosts_;
  Phase phase_ = Phase::kSetup;
  std::function<void()> before_abort_;
};

struct DistributedStats {
  int ranks = 1;
  int slots_per_rank = 1;
  int threads_per_slot = 1;
  RoundStats rounds;
  std::vector<double> busy_seconds;  ///< per rank: sum of its task times
  std::vector<int> tasks;            ///< per rank
  double wall_seconds = 0.0;
};

/// Every rank calls this with the same inputs (after Session::agree_setup). Rank 0 returns the
/// results of every input (complete = false for gaps a stop left unfinished); the other ranks
/// return an empty vector. `threads`: OpenMP threads per rank (0: the OpenMP default). The
/// cancel flag of inputs[0].options (the signal flag) is watched on every rank.
/// `progress` (rank 0 only, may be null): called on rank 0's main thread as values arrive.
std::vector<RunResult> run_sweeps_distributed(const std::vector<SweepInput>& inputs, int threads,
                                              DistributedStats* stats = nullptr,
                                              const RoundProgress* progress = nullptr);

}  // namespace roundtrip::parallel
