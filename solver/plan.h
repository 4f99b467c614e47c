#pragma once
// Planned work of a separation sweep before it runs: truncations per gap (Geometry::truncation),
// the number of frequency evaluations, the dense-matrix sizes, peak memory and a time estimate.
//
// Model: Geometry::cost (each kind's own; the default in solver/geometries/geometry.cc models
// blocked plane-wave round trips; plates have no dense blocks and cost a constant per
// frequency). The default, as measured on sphere-plate:
//   per frequency, blocks m = 0 .. m_est, each a round trip in factored form M = S W C W^T
//   (solver/logdet/low_rank.h) with W of n x q, n = 2 (l_max - max(1, m) + 1) multipoles
//   (TE and TM), q = 2 N plane-wave columns (N = quadrature_nodes, both polarisations);
//   flops(m) in node space (q < n): the banded Gram, the column assembly, and the banded
//   factorisation of the q x q node matrix (band nb ~ 100: q nb^2, more for the derivatives,
//   2 q^2 nb for the gradient); otherwise 4 n^2 q + n^3 / 3 (+ 2 n q^2 for the gradient) in
//   multipole space. Exact constants in plan_flops_per_frequency.
//   memory per thread = 8 bytes (n q + 3 q^2): W and three q x q work matrices.
//   m_est = min(l_max, 8 ceil(sqrt(R/L) ln(10/rel_tol) / 16)) : the m sum is cut when its
//   geometric tail is below rel_tol, and the terms fall off beyond m ~ sqrt(R/L) (measured,
//   solver/geometries/sphere_plate.cc).
// Frequencies: the frequency rule itself is run on the model integrand s(xi) = -exp(-xi/xi_c)
// (xi_c = Geometry::frequency_scale), whose decay is that of every round trip at large xi.
// Time per frequency = t_ref (flops / flops_ref)^alpha: the case's own frequencies are timed at
// its largest and smallest gap when affordable (alpha from the two; else alpha = 1 from one, or
// a timed dense matrix product with t_ref = flops_ref x seconds per flop), plus per-gap work
// timed once: the xi = 0 term (T > 0), the first frequency's set-up at a new gap, the PFA
// partner. See PlanCalibration.
// The estimate is rough: about a factor of 3 either way (measured on the shipped cases).
#include <cmath>
#include <map>
#include <string>
#include <vector>

#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/geometry.h"
#include "solver/run.h"

namespace roundtrip {

struct GapPlan {
  double gap = 0.0;                          ///< m
  std::map<std::string, double> truncation;  ///< Geometry::truncation(gap)
  int frequencies = 0;                       ///< estimated evaluations of s(xi)
  double blocks = 1;                         ///< estimated symmetry blocks per frequency
  std::vector<double> block_flops;           ///< model flops of each block (Geometry::cost)
  double flops_per_frequency = 0.0;          ///< model flops (plates: 1 = one unit)
  double memory_bytes = 0.0;                 ///< peak working memory per thread, bytes
  double seconds = 0.0;                      ///< estimated wall time of this gap on one thread
};

struct PlanCalibration {
  double seconds_ref = 0.0;      ///< measured (or derived) seconds of one frequency ...
  double flops_ref = 1.0;        ///< ... of this many model flops
  double alpha = 1.0;            ///< time ~ flops^alpha between the reference points
  double per_gap_seconds = 0.0;  ///< xi = 0 term, set-up at a new gap, PFA partner
  std::string how;               ///< a sentence for the user: what was measured
  double seconds_per_frequency(double flops) const {
    return seconds_ref * std::pow(flops / flops_ref, alpha);
  }
};

struct Plan {
  std::vector<GapPlan> gaps;
  int threads = 1;
  double seconds = 0.0;       ///< estimated wall time of the sweep
  double memory_bytes = 0.0;  ///< estimated peak working memory, all threads
  PlanCalibration calibration;
};

/// One addressable unit of work: block `block` (m, k_z or Bloch vector) of frequency number
/// `frequency` at gap number `gap` of scan point `point`, with its model cost. The frequencies
/// of a gap are known before it runs (the rule is chosen on a model spectrum, frequency_rule.h);
/// the blocks are those of the cost model (a geometry may stop its block sum earlier). This is
/// the unit a distributed run hands out (largest first) and a journal may key on.
struct WorkItem {
  int point = 0;
  int gap = 0;
  int frequency = 0;
  int block = 0;
  double flops = 0.0;
};

/// Every work item of `plan` for scan point `point`, largest cost first (ties in
/// (gap, frequency, block) order, so the list is deterministic).
std::vector<WorkItem> work_items(const Plan& plan, int point = 0);

/// Model flops of one frequency at `gap` (Geometry::cost; plates: 1).
double plan_flops_per_frequency(const Geometry& geometry, double gap, DerivativeOrder order,
                                double rel_tol);

/// Time one frequency of `geometry` at the largest and at the smallest gap, each only if the
/// model says it takes less than `max_seconds` at the rate of a timed 384 x 384 matrix product
/// (Eigen); with neither affordable, that rate itself is used. `how` says which.
PlanCalibration calibrate_plan(const Geometry& geometry, const std::vector<double>& gaps,
                               const FrequencyRuleOptions& frequency, DerivativeOrder order,
                               double max_seconds = 0.5);

/// The plan of run_sweep(geometry, gaps, options) on `threads` threads (0: OpenMP default).
/// Truncations and costs are doubles: a plan beyond what can run is still finite and printable
/// (truncation_problem says why it cannot run).
Plan make_plan(const Geometry& geometry, const std::vector<double>& gaps, const RunOptions& options,
               const PlanCalibration& calibration);

/// Why the plan cannot run at all, or empty: a gap whose l_max is beyond kMaxMultipoleOrder
/// (solver/guards.h) or not finite. Names the gap, the radius and R/L, and the largest R/L that
/// fits at this rel_tol (l_max grows linearly with R/L near contact).
std::string truncation_problem(const Geometry& geometry, const Plan& plan);

/// The memory a run may use and where the figure comes from.
struct MemoryLimit {
  double bytes = 0.0;  ///< 0: unknown (no check)
  std::string source;  ///< e.g. "MemAvailable in /proc/meminfo", "--max-memory"
  std::string note;    ///< with --max-memory: what the machine has, e.g. "21.6 GiB available (...)"
};
/// The machine's (available_memory, guards.h), lowered to `user_bytes` if that is > 0.
MemoryLimit memory_limit(double user_bytes);
/// Empty if the plan's peak memory fits `limit`, else one sentence (the same for `check`'s
/// warning and `run`'s refusal): "the plan needs about 540.93 GiB of working memory (largest at
/// L = ... on 2 threads), more than the 21.2 GiB available (MemAvailable in /proc/meminfo)".
std::string memory_problem(const Plan& plan, const MemoryLimit& limit);

/// "negligible", "812 KiB", "3.4 MiB", "1.25 GiB" (binary units).
std::string bytes_text(double bytes);

}  // namespace roundtrip
