#pragma once
// The time estimate of `roundtrip check`: a plan (solver/plan.h) whose per-gap seconds come from
// timing the case's own work items, not from one timed frequency extrapolated with a fitted
// exponent (which varied from 0.08 to 1.31 between identical calls and missed the real run by
// up to 30x).
//
// What is timed (all on this machine, with the threads the run will use):
//  - at every gap, the frequency rule itself on the model spectrum (plan.h): the frequencies
//    and per-term accuracies the run will ask for, and the rule's own set-up (Pade poles,
//    weights), which is most of the time of a plate-plate gap;
//  - at up to kSampleGaps gaps (smallest, largest, and the median), s(xi) at one frequency from
//    each of up to kSampleGroups equal-count groups of the gap's frequencies (the middle one of
//    each group, with the accuracy the rule asks for it), after a warm-up call (the first call
//    at a new gap is timed separately as the gap's set-up), as the median of up to kRepeats
//    calls; the xi = 0 term separately; and the PFA partner; each sampled gap gets a third of
//    the budget plus what the gaps timed before it left unused (the largest, first, is cheap);
//  - between the sampled gaps, seconds per frequency divided by Geometry::cost's model flops is
//    interpolated linearly in log L (so steps of l_max show), and multiplied by each gap's flops.
// A frequency too expensive for the budget (model flops at a timed flop rate) is timed at a
// larger surrogate gap with its frequency scaled alike and scaled back by the model flops
// (time ~ flops at the reference rate; stated in `how`).
// Gaps that run in parallel (Geometry::parallel_inside false) are scheduled as run_sweep does:
// dynamic, one gap at a time per thread, in gap order.
// Measured against the real runs of every shipped and benchmark case by
// benchmarks/bench_check_estimate.cc (README, "Performance").
#include <vector>

#include "solver/geometries/geometry.h"
#include "solver/plan.h"
#include "solver/run.h"

namespace roundtrip {

inline constexpr int kSampleGaps = 3;
inline constexpr int kSampleGroups = 3;
inline constexpr int kRepeats = 3;
/// Pairs of calls (alone, shared) timed by shared_marginal_share: at least kMinSharePairs, more
/// while the budget allows, at most kMaxSharePairs.
inline constexpr int kMinSharePairs = 5;
inline constexpr int kMaxSharePairs = 15;

/// Mean of the lower half (the ceil(n/2) smallest) of CPU times of repeated equal calls: the
/// load of other programs only adds to a call's CPU time (cache and TLB refills after being
/// switched out), so the lower half is the calls least disturbed, and its mean is steadier than
/// the minimum (one value) or the median (one value, moved by the disturbed half). 0 if empty.
double lower_half_mean(std::vector<double> v);

/// The plan of run_sweep(geometry, gaps, options) with times measured as above, spending about
/// `budget_seconds` on timing (more only when a single work item is longer than that: then
/// once, at a surrogate gap). Polls throw_if_cancelled (guards.h) between calls.
Plan timed_plan(const Geometry& geometry, const std::vector<double>& gaps,
                const RunOptions& options, double budget_seconds = 2.0);

/// The points of a scan that run_sweep computes together with the first (RunOptions::companions,
/// Geometry::at_frequency_shared) cost only their marginal work. Measured at `gap` and its
/// frequency scale xi_c = Geometry::frequency_scale(gap): the CPU time of one shared call with
/// every companion minus that of `first` alone, per companion, over that of `first` alone
/// (lower_half_mean of kMinSharePairs to kMaxSharePairs alternating pairs, as many as
/// `budget_seconds` allows), clamped to [0, 1]. 1 if there are no companions.
double shared_marginal_share(const Geometry& first, const std::vector<const Geometry*>& companions,
                             double gap, const RunOptions& options, double budget_seconds = 1.0);

}  // namespace roundtrip
