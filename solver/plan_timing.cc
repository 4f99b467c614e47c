// Measured time estimate of a run plan (plan_timing.h).
#include "solver/plan_timing.h"

#include <fmt/format.h>
#include <omp.h>

#include <Eigen/Dense>
#include <algorithm>
#include <chrono>
#include <cmath>
#include <ctime>

#include "solver/guards.h"

namespace roundtrip {
namespace {

using Clock = std::chrono::steady_clock;
double since(Clock::time_point t0) {
  return std::chrono::duration<double>(Clock::now() - t0).count();
}

double median(std::vector<double> v);

}  // namespace

double lower_half_mean(std::vector<double> v) {
  if (v.empty()) return 0.0;
  std::sort(v.begin(), v.end());
  const std::size_t n = (v.size() + 1) / 2;
  double sum = 0.0;
  for (std::size_t i = 0; i < n; ++i) sum += v[i];
  return sum / static_cast<double>(n);
}

namespace {

double median(std::vector<double> v) {
  if (v.empty()) return 0.0;
  std::sort(v.begin(), v.end());
  const std::size_t n = v.size();
  return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

// Seconds per "gemm-equivalent" model flop (geometry.h): the best of three 384 x 384 products.
double gemm_seconds_per_flop() {
  constexpr int kN = 384;
  const Eigen::MatrixXd a = Eigen::MatrixXd::Random(kN, kN), b = Eigen::MatrixXd::Random(kN, kN);
  Eigen::MatrixXd c(kN, kN);
  double best = 1e300;
  for (int rep = 0; rep < 3; ++rep) {
    const auto t0 = Clock::now();
    c.noalias() = a * b;
    best = std::min(best, since(t0));
  }
  volatile double sink = c(0, 0);
  (void)sink;
  return best / (2.0 * kN * kN * kN);
}

double cpu_seconds();

double thread_cpu_seconds() {
  timespec ts{};
  clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
  return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
}

// Wall time of single-threaded work, or its CPU time if the process got less (Timer below).
template <class F>
double single_thread_seconds(F f) {
  const double c0 = cpu_seconds();
  const auto t0 = Clock::now();
  f();
  return std::min(since(t0), cpu_seconds() - c0);
}

// The frequencies (and per-term accuracies) the rule asks for at `gap`, from the model spectrum
// s = -exp(-xi/xi_c) of plan.h, and the time the rule itself takes.
struct GapModel {
  std::vector<double> xi, tol;
  double rule_seconds = 0.0;
};
GapModel model_nodes(const Geometry& g, double gap, const FrequencyRuleOptions& f) {
  GapModel m;
  const double xc = g.frequency_scale(gap);
  const TolerantSpectralFunction model = [&](double xi, double tol) {
    m.xi.push_back(xi);
    m.tol.push_back(tol);
    const double u = xi / xc, e = -std::exp(-u);
    return Spectral{e, e * (1.0 + u) / gap, e * (1.0 + u) * (1.0 + u) / (gap * gap)};
  };
  m.rule_seconds = single_thread_seconds([&] { (void)sum_over_frequencies(model, xc, f); });
  return m;
}

// What was measured at one gap (seconds; per_frequency is the mean over its xi > 0 frequencies).
struct Sample {
  double gap = 0.0, flops = 1.0;
  double per_frequency = 0.0, static_term = 0.0, set_up = 0.0, pfa = 0.0;
  double t_middle = 0.0;       // the middle group's frequency (the one a ladder follows)
  double middle_ratio = 1.0;   // per_frequency / t_middle
  double surrogate_gap = 0.0;  // > 0: extrapolated from there as flops^alpha
  double alpha = 1.0;
  int calls = 0, repeats = 0;
  int probe_blocks = 0;  // > 0: timed by parts, this many blocks per frequency
};

double cpu_seconds() {
  timespec ts{};
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
  return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
}

// One call of s(xi) timed as the run would see it on a machine it has to itself: the process's
// CPU time over the threads it may use (parallel speed-up taken as ideal). Not the wall time:
// a loaded 2-core machine stretched wall times 5-10x while the CPU time stayed put, and a wall
// time that was used whenever it was below the CPU time (the call had both cores part of the
// time) made repeat checks of the R/L = 10^4 case differ by 39 %.
class Timer {
 public:
  Timer(const Geometry& g, DerivativeOrder order, int threads)
      : g_(g), order_(order), threads_(std::max(threads, 1)) {}
  double call(double xi, double gap, double tol) {
    throw_if_cancelled();
    const double c0 = cpu_seconds();
    const auto t0 = Clock::now();
    (void)g_.at_frequency_within(xi, gap, order_, tol);
    const double cpu = cpu_seconds() - c0;
    spent += since(t0);
    ++calls;
    return cpu / threads_;
  }
  int threads() const { return threads_; }
  double spent = 0.0;
  int calls = 0;
  int probed_blocks = 0;  // blocks timed one by one (time_by_blocks)

 private:
  const Geometry& g_;
  DerivativeOrder order_;
  int threads_;
};

// Keeps Eigen on one thread while a probe's block runs on the calling thread (in the run the
// blocks run inside the parallel m loop, where Eigen does not add threads).
class OneEigenThread {
 public:
  OneEigenThread() : saved_(Eigen::nbThreads()) { Eigen::setNbThreads(1); }
  ~OneEigenThread() { Eigen::setNbThreads(saved_); }

 private:
  int saved_;
};

// One frequency too long to time whole, timed by parts (Geometry::probe): its set-up (process
// CPU time) and `count` of its blocks spread evenly over m = 0 .. B - 1 (each on this thread,
// its thread CPU time, so other programs' load does not enter), B the cost model's block count
// (Geometry::cost; the run's m sum stops by its own tail test near there). The time of every
// block is its model flops times the measured seconds per model flop, interpolated linearly in
// m between the timed blocks; the blocks run in parallel on the run's threads, the set-up does
// not. Returns < 0 if the geometry does not split this frequency.
struct ProbeTime {
  double set_up = 0.0, blocks = 0.0;  // seconds on one thread
  double per_block = 0.0;             // mean of the timed blocks
};
ProbeTime time_by_blocks(const Geometry& g, double xi, double gap, double tol,
                         DerivativeOrder order, const FrequencyCost& cost, int count,
                         Timer& timer) {
  ProbeTime r;
  throw_if_cancelled();
  const double c0 = cpu_seconds();
  const auto t0 = Clock::now();
  const std::unique_ptr<FrequencyProbe> p = g.probe(xi, gap, order, tol);
  r.set_up = cpu_seconds() - c0;
  timer.spent += since(t0);
  if (!p) return ProbeTime{-1.0, -1.0, -1.0};
  // The model's listed blocks (each entry may stand for `stride` blocks, geometry.h).
  const int listed = static_cast<int>(cost.block_flops.size());
  const double stride = std::max(1.0, cost.blocks / std::max(listed, 1));
  const int B = std::max(1, std::min(p->blocks(), static_cast<int>(std::ceil(cost.blocks))));
  count = std::clamp(count, 1, B);
  std::vector<double> m_at, ratio;
  OneEigenThread one;
  for (int k = 0; k < count; ++k) {
    throw_if_cancelled();
    const int m =
        count == 1 ? B / 2
                   : static_cast<int>(std::lround(static_cast<double>(k) * (B - 1) / (count - 1)));
    if (!m_at.empty() && m == m_at.back()) continue;
    const int entry = std::min(listed - 1, static_cast<int>(m / stride));
    const double flops = std::max(cost.block_flops[entry] / stride, 1.0);
    const auto w0 = Clock::now();
    const double b0 = thread_cpu_seconds();
    (void)p->block(m);
    const double t = thread_cpu_seconds() - b0;
    timer.spent += since(w0);
    ++timer.probed_blocks;
    r.per_block += t;
    m_at.push_back(m);
    ratio.push_back(t / flops);
  }
  r.per_block /= static_cast<double>(m_at.size());
  for (int i = 0; i < listed; ++i) {
    const double m = i * stride;
    double q = ratio.front();
    if (m >= m_at.back()) {
      q = ratio.back();
    } else if (m > m_at.front()) {
      std::size_t k = 1;
      while (m_at[k] < m) ++k;
      const double w = (m - m_at[k - 1]) / (m_at[k] - m_at[k - 1]);
      q = (1.0 - w) * ratio[k - 1] + w * ratio[k];
    }
    // Only the blocks below B (the last listed entry may reach past it).
    const double share = std::clamp((B - m) / stride, 0.0, 1.0);
    r.blocks += share * cost.block_flops[i] * q;
  }
  return r;
}

// The gap's frequencies timed by parts (time_by_blocks): the middle group first with 3 blocks,
// which fixes the time per block; then every group with as many blocks (3 to kMaxProbeBlocks)
// as the budget allows (at least 3 each, even beyond the budget: a frequency of the R/L = 10^4
// case costs minutes, one of its blocks about a second). Fills s like the direct timing.
constexpr int kMaxProbeBlocks = 9;
bool measure_gap_by_blocks(const Geometry& g, const GapModel& m,
                           const std::vector<std::size_t>& rep, const std::vector<double>& count,
                           std::size_t static_index, DerivativeOrder order, double rel_tol,
                           double budget, Timer& timer, Sample& s) {
  const int groups = static_cast<int>(rep.size());
  const int middle = groups / 2;
  const FrequencyCost cost = g.cost(s.gap, order, rel_tol);
  const double threads = static_cast<double>(timer.threads());
  const double c0 = cpu_seconds();
  const ProbeTime first =
      time_by_blocks(g, m.xi[rep[middle]], s.gap, m.tol[rep[middle]], order, cost, 3, timer);
  if (first.blocks < 0.0) return false;
  const double used = cpu_seconds() - c0;
  const double left = std::max(0.0, budget - used);
  const int affordable =
      static_cast<int>((left / groups - first.set_up) / std::max(first.per_block, 1e-9));
  const int n = std::clamp(affordable, 3, kMaxProbeBlocks);
  std::vector<double> t_group(groups, 0.0);
  for (int k = 0; k < groups; ++k) {
    const ProbeTime t =
        k == middle && n == 3
            ? first
            : time_by_blocks(g, m.xi[rep[k]], s.gap, m.tol[rep[k]], order, cost, n, timer);
    t_group[k] = t.set_up + t.blocks / threads;
  }
  double sum = 0.0, total = 0.0;
  for (int k = 0; k < groups; ++k) {
    sum += count[k] * t_group[k];
    total += count[k];
  }
  s.per_frequency = total > 0.0 ? sum / total : 0.0;
  s.t_middle = t_group[middle];
  s.middle_ratio = s.t_middle > 0.0 ? s.per_frequency / s.t_middle : 1.0;
  s.set_up = 0.0;  // in each probe's set-up
  if (static_index < m.xi.size()) {
    const ProbeTime t = time_by_blocks(g, 0.0, s.gap, m.tol[static_index], order, cost, n, timer);
    s.static_term = t.blocks < 0.0 ? timer.call(0.0, s.gap, m.tol[static_index])
                                   : t.set_up + t.blocks / threads;
  }
  s.probe_blocks = n;
  return true;
}

Sample measure_gap(const Geometry& g, double gap, const GapModel& m, const RunOptions& options,
                   double budget, double gemm_rate, const std::vector<Sample>& done, Timer& timer) {
  const DerivativeOrder order = options.quantities.order();
  const double rel_tol = options.frequency.rel_tol;
  Sample s;
  s.gap = gap;
  s.flops = g.cost(gap, order, rel_tol).flops();
  std::vector<std::size_t> positive;
  std::size_t static_index = m.xi.size();
  for (std::size_t i = 0; i < m.xi.size(); ++i)
    (m.xi[i] > 0.0 ? positive.push_back(i) : void(static_index = i));
  const bool has_static = static_index < m.xi.size();
  const int groups = std::min<int>(kSampleGroups, static_cast<int>(positive.size()));
  // The middle frequency of each equal-count group, and the group's size.
  std::vector<std::size_t> rep;
  std::vector<double> count;
  for (int k = 0; k < groups; ++k) {
    const std::size_t lo = positive.size() * k / groups, hi = positive.size() * (k + 1) / groups;
    rep.push_back(positive[(lo + hi) / 2]);
    count.push_back(static_cast<double>(hi - lo));
  }
  const int middle = groups / 2;
  const int items = groups + (has_static ? 1 : 0);
  if (items == 0) return s;

  // Too long to time here? Predicted from the nearest gap timed so far (time ~ model flops) or,
  // before any, from the model flops at the matrix-product rate.
  const bool modelled = s.flops > 1.0;
  const Sample* near = nullptr;
  for (const Sample& d : done)
    if (!near || std::abs(std::log(d.gap / gap)) < std::abs(std::log(near->gap / gap))) near = &d;
  const double predicted = near ? near->t_middle * s.flops / near->flops : s.flops * gemm_rate;
  // Too long to time whole (the model's guess, with a factor 2 of margin): timed by parts at
  // this gap itself, if the geometry splits its frequencies (Geometry::probe); else a ladder.
  if (modelled && groups > 0 && 2.0 * predicted > budget &&
      measure_gap_by_blocks(g, m, rep, count, static_index, order, rel_tol, budget, timer, s)) {
    s.pfa = single_thread_seconds([&] { (void)g.pfa(gap, options.frequency); });
    s.calls = timer.calls;
    s.repeats = 1;
    return s;
  }
  // A call predicted up to kDirectFactor x the budget is timed directly (a warm-up and one
  // call of the middle group): the ladder's extrapolation is for calls far beyond it. With the
  // ladder from just above the budget, fibre_over_mirror's 500 nm gap (0.6 s per call against
  // a 0.67 s share of the budget) was estimated 9 s or 20 min depending on timer noise.
  constexpr double kDirectFactor = 4.0;
  Sample anchor;
  if (modelled && groups > 0 && !near && predicted > kDirectFactor * budget) {
    // Nothing timed yet: an anchor at a larger gap that the model puts well inside the budget.
    double la = gap, fa = s.flops;
    for (int k = 0; k < 60 && fa * gemm_rate > budget / 16.0; ++k) {
      la *= 1.5;
      fa = g.cost(la, order, rel_tol).flops();
    }
    const std::size_t j = rep[middle];
    const double xi = m.xi[j] * g.frequency_scale(la) / g.frequency_scale(gap);
    const double cold = timer.call(xi, la, m.tol[j]);
    std::vector<double> t;
    for (int r = 0; r < kRepeats; ++r) t.push_back(timer.call(xi, la, m.tol[j]));
    anchor.gap = la;
    anchor.flops = fa;
    anchor.t_middle = median(t);
    anchor.set_up = std::max(0.0, cold - anchor.t_middle);
    if (has_static) anchor.static_term = timer.call(0.0, la, m.tol[static_index]);
    near = &anchor;
  }
  if (modelled && groups > 0 && near &&
      (near == &anchor || near->t_middle * s.flops / near->flops > kDirectFactor * budget)) {
    // A ladder of gaps from the nearest timed one towards this one (geometric steps, the middle
    // frequency scaled with Geometry::frequency_scale), each timed (median of kRepeats after a
    // warm-up) while the next step is predicted affordable; from the last step the time is
    // extrapolated as flops^alpha with alpha measured between the last two steps.
    const std::size_t j = rep[middle];
    double prev_gap = near->gap, prev_t = near->t_middle, prev_f = near->flops, alpha = 1.0;
    double cold_share = near->t_middle > 0.0 ? near->set_up / near->t_middle : 0.0;
    double static_share = near->t_middle > 0.0 ? near->static_term / near->t_middle : 0.0;
    constexpr int kSteps = 6;
    bool reached = false;
    for (int k = 1; k <= kSteps; ++k) {
      const double lk = near->gap * std::pow(gap / near->gap, static_cast<double>(k) / kSteps);
      const double fk = g.cost(lk, order, rel_tol).flops();
      if (prev_t * std::pow(fk / prev_f, alpha) * (kRepeats + 1) > budget) break;
      const double xi = m.xi[j] * g.frequency_scale(lk) / g.frequency_scale(gap);
      const double cold = timer.call(xi, lk, m.tol[j]);
      std::vector<double> t;
      for (int r = 0; r < kRepeats; ++r) t.push_back(timer.call(xi, lk, m.tol[j]));
      const double tk = median(t);
      if (fk > 1.2 * prev_f && tk > 0.0 && prev_t > 0.0)
        alpha = std::clamp(std::log(tk / prev_t) / std::log(fk / prev_f), 0.2, 2.0);
      cold_share = std::max(0.0, cold - tk) / tk;
      if (has_static) static_share = timer.call(0.0, lk, m.tol[static_index]) / tk;
      prev_gap = lk;
      prev_t = tk;
      prev_f = fk;
      reached = k == kSteps;
    }
    s.t_middle = prev_t * std::pow(s.flops / prev_f, alpha);
    s.per_frequency = s.t_middle * near->middle_ratio;
    s.middle_ratio = near->middle_ratio;
    s.set_up = cold_share * s.t_middle;
    s.static_term = static_share * s.t_middle;
    if (!reached) s.surrogate_gap = prev_gap;
    s.alpha = alpha;
    s.pfa = single_thread_seconds([&] { (void)g.pfa(gap, options.frequency); });
    s.calls = timer.calls;
    s.repeats = kRepeats;
    return s;
  }

  // The first call at this gap: its set-up (quadrature, multipole tables) is in it. Then each
  // group (and xi = 0) as often as the budget allows, at least once; if not even that, the
  // middle group alone stands for all.
  const std::size_t jm = groups > 0 ? rep[middle] : static_index;
  const double cold = timer.call(m.xi[jm], gap, m.tol[jm]);
  const int affordable = static_cast<int>((budget - cold) / std::max(cold, 1e-6));
  const bool all_groups = affordable >= items;
  const int repeats = all_groups ? std::clamp(affordable / items, 1, kRepeats) : 1;
  s.repeats = repeats;
  std::vector<double> t_group(groups, 0.0);
  for (int k = 0; k < groups; ++k) {
    if (!all_groups && k != middle) continue;
    std::vector<double> t;
    for (int r = 0; r < repeats; ++r) t.push_back(timer.call(m.xi[rep[k]], gap, m.tol[rep[k]]));
    t_group[k] = median(t);
  }
  if (!all_groups)
    for (int k = 0; k < groups; ++k) t_group[k] = t_group[middle];
  if (has_static) {
    std::vector<double> t;
    for (int r = 0; r < (all_groups ? repeats : 1); ++r)
      t.push_back(timer.call(0.0, gap, m.tol[static_index]));
    s.static_term = median(t);
  }
  double sum = 0.0, n = 0.0;
  for (int k = 0; k < groups; ++k) {
    sum += count[k] * t_group[k];
    n += count[k];
  }
  s.per_frequency = n > 0.0 ? sum / n : 0.0;
  const double warm_middle = groups > 0 ? t_group[middle] : s.static_term;
  s.set_up = std::max(0.0, cold - warm_middle);
  s.t_middle = groups > 0 ? t_group[middle] : s.static_term;
  s.middle_ratio = s.t_middle > 0.0 ? s.per_frequency / s.t_middle : 1.0;
  s.pfa = single_thread_seconds([&] { (void)g.pfa(gap, options.frequency); });
  s.calls = timer.calls;
  return s;
}

// Linear interpolation of y in log(gap) between the samples (sorted by gap), clamped outside.
template <class F>
double interpolate(const std::vector<Sample>& s, double gap, F y) {
  if (s.size() == 1 || gap <= s.front().gap) return y(s.front());
  if (gap >= s.back().gap) return y(s.back());
  std::size_t k = 1;
  while (s[k].gap < gap) ++k;
  const double w = std::log(gap / s[k - 1].gap) / std::log(s[k].gap / s[k - 1].gap);
  return (1.0 - w) * y(s[k - 1]) + w * y(s[k]);
}

}  // namespace

double shared_marginal_share(const Geometry& first, const std::vector<const Geometry*>& companions,
                             double gap, const RunOptions& options, double budget_seconds) {
  if (companions.empty()) return 1.0;
  const double xi = first.frequency_scale(gap), tol = options.frequency.rel_tol;
  const DerivativeOrder order = options.quantities.order();
  const auto cpu_of = [&](auto f) {
    throw_if_cancelled();
    const double c0 = cpu_seconds();
    f();
    return cpu_seconds() - c0;
  };
  const auto alone = [&] { (void)first.at_frequency_within(xi, gap, order, tol); };
  const auto shared = [&] { (void)first.at_frequency_shared(xi, gap, order, tol, companions); };
  alone();  // warm-up: first-call set-up at this gap
  // Pairs alternate (and swap their order every pair) so that a change of load hits both; the
  // share is taken from the means of the lower halves of the two samples (lower_half_mean): a
  // median of per-pair differences varied 0.57-0.88 between checks of the Drude/plasma case
  // under load, medians of 3-9 pairs gave estimates 16 % apart.
  std::vector<double> ta, tb;
  double spent = 0.0;
  for (int r = 0; r < kMaxSharePairs; ++r) {
    if (r % 2 == 0) {
      ta.push_back(cpu_of(alone));
      tb.push_back(cpu_of(shared));
    } else {
      tb.push_back(cpu_of(shared));
      ta.push_back(cpu_of(alone));
    }
    spent += ta.back() + tb.back();
    if (r + 1 >= kMinSharePairs && spent * (r + 2) / (r + 1) > budget_seconds) break;
  }
  const double a = lower_half_mean(ta), b = lower_half_mean(tb);
  return std::clamp(
      std::max(0.0, b - a) / static_cast<double>(companions.size()) / std::max(a, 1e-9), 0.0, 1.0);
}

Plan timed_plan(const Geometry& g, const std::vector<double>& gaps, const RunOptions& options,
                double budget_seconds) {
  Plan plan = make_plan(g, gaps, options, PlanCalibration{});
  if (gaps.empty()) return plan;
  const DerivativeOrder order = options.quantities.order();
  std::vector<GapModel> models;
  for (double gap : gaps) models.push_back(model_nodes(g, gap, options.frequency));

  // Sampled gaps: the largest (cheapest, first: it fixes the flop rate), the smallest, the median.
  std::vector<std::size_t> by_gap(gaps.size());
  for (std::size_t i = 0; i < by_gap.size(); ++i) by_gap[i] = i;
  std::sort(by_gap.begin(), by_gap.end(), [&](auto a, auto b) { return gaps[a] < gaps[b]; });
  std::vector<std::size_t> chosen{by_gap.back(), by_gap.front(), by_gap[by_gap.size() / 2]};
  std::vector<std::size_t> sample_index;
  for (std::size_t i : chosen)
    if (std::find(sample_index.begin(), sample_index.end(), i) == sample_index.end() &&
        static_cast<int>(sample_index.size()) < kSampleGaps)
      sample_index.push_back(i);

  const double gemm_rate = gemm_seconds_per_flop();
  Timer timer(g, order, g.parallel_inside() ? omp_get_max_threads() : 1);
  // Each sampled gap gets its share of the budget plus what the gaps before it left unused
  // (CPU time over the timer's threads): the largest gap, timed first, is the cheapest, and the
  // smallest, which dominates most runs, gets more repeats (with a third of the budget it was
  // timed by one call of one frequency in the Drude/plasma sphere case).
  std::vector<Sample> samples;
  const double loop_cpu0 = cpu_seconds();
  const double even_share = budget_seconds / static_cast<double>(sample_index.size());
  for (std::size_t k = 0; k < sample_index.size(); ++k) {
    const std::size_t i = sample_index[k];
    const double used = (cpu_seconds() - loop_cpu0) / static_cast<double>(timer.threads());
    const double left = (budget_seconds - used) / static_cast<double>(sample_index.size() - k);
    samples.push_back(measure_gap(g, gaps[i], models[i], options, std::max(even_share, left),
                                  gemm_rate, samples, timer));
  }
  std::sort(samples.begin(), samples.end(),
            [](const Sample& a, const Sample& b) { return a.gap < b.gap; });

  double serial = 0.0;
  std::vector<double> gap_seconds;
  for (std::size_t i = 0; i < gaps.size(); ++i) {
    GapPlan& p = plan.gaps[i];
    const GapModel& m = models[i];
    const double flops = std::max(p.flops_per_frequency, 1.0);
    const double per_flop = std::exp(interpolate(samples, gaps[i], [](const Sample& s) {
      return std::log(std::max(s.per_frequency, 1e-12) / std::max(s.flops, 1.0));
    }));
    const double positive = static_cast<double>(
        std::count_if(m.xi.begin(), m.xi.end(), [](double xi) { return xi > 0.0; }));
    const bool has_static = positive < static_cast<double>(m.xi.size());
    p.frequencies = static_cast<int>(m.xi.size());
    p.seconds =
        m.rule_seconds + positive * per_flop * flops +
        (has_static ? interpolate(samples, gaps[i], [](const Sample& s) { return s.static_term; })
                    : 0.0) +
        interpolate(samples, gaps[i], [](const Sample& s) { return s.set_up; }) +
        interpolate(samples, gaps[i], [](const Sample& s) { return s.pfa; });
    serial += p.seconds;
    gap_seconds.push_back(p.seconds);
  }
  if (g.parallel_inside()) {
    plan.seconds = serial;
  } else {
    // run_sweep: schedule(dynamic, 1) over the gaps in order, one gap per thread.
    std::vector<double> free_at(std::max(plan.threads, 1), 0.0);
    for (double t : gap_seconds) *std::min_element(free_at.begin(), free_at.end()) += t;
    plan.seconds = *std::max_element(free_at.begin(), free_at.end());
  }

  bool surrogate = false;
  int repeats = kRepeats, probe_blocks = 0;
  for (const Sample& s : samples) probe_blocks = std::max(probe_blocks, s.probe_blocks);
  double alpha = 1.0;
  std::string surrogate_text;
  for (const Sample& s : samples) {
    if (s.surrogate_gap > 0.0) {
      surrogate = true;
      alpha = s.alpha;
      surrogate_text += fmt::format("{}L = {:.4g} m", surrogate_text.empty() ? "" : ", ", s.gap);
    }
    repeats = std::min(repeats, s.repeats);
  }
  std::string where;
  for (const Sample& s : samples)
    where += fmt::format("{}{:.4g}", where.empty() ? "" : ", ", s.gap);
  PlanCalibration& c = plan.calibration;
  c.per_gap_seconds = 0.0;
  c.how = fmt::format(
      "{} timed calls of this case's frequencies ({:.2g} s) at L = {} m (the frequencies the "
      "rule asks for, in {} groups, median of {} after a warm-up; the xi = 0 term, first-call "
      "set-up and PFA apart){}{}{}, interpolated between those gaps by the cost model; the "
      "frequency rule timed at every gap",
      timer.calls, timer.spent, where, kSampleGroups, repeats,
      surrogate ? fmt::format("; {} too long to time, extrapolated from a ladder of larger gaps as "
                              "flops^{:.2f}",
                              surrogate_text, alpha)
                : "",
      probe_blocks > 0
          ? fmt::format("; frequencies too long to time whole timed by parts: their set-up and {} "
                        "of their blocks spread over m ({} blocks in all), the other blocks "
                        "interpolated by the cost model",
                        probe_blocks, timer.probed_blocks)
          : "",
      g.parallel_inside() ? fmt::format(", CPU time over {} thread{}", omp_get_max_threads(),
                                        omp_get_max_threads() == 1 ? "" : "s")
                          : ", CPU time");
  return plan;
}

}  // namespace roundtrip
