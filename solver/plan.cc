// Planned work and resources (plan.h).
#include "solver/plan.h"

#include <fmt/format.h>
#include <omp.h>

#include <Eigen/Dense>
#include <algorithm>
#include <chrono>
#include <cmath>

#include "solver/guards.h"

namespace roundtrip {
namespace {

constexpr int kMBatch = 8;  // m blocks are computed in batches of 8 (solver/geometries)

double seconds_since(std::chrono::steady_clock::time_point t0) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

// Frequency evaluations of the rule on s(xi) = -exp(-xi / xi_c) and its L-derivatives.
int estimated_frequencies(const Geometry& g, double gap, const FrequencyRuleOptions& f) {
  const double xc = g.frequency_scale(gap);
  int n = 0;
  const SpectralFunction model = [&](double xi) {
    ++n;
    const double u = xi / xc, e = -std::exp(-u);
    return Spectral{e, e * (1.0 + u) / gap, e * (1.0 + u) * (1.0 + u) / (gap * gap)};
  };
  (void)sum_over_frequencies(model, xc, f);
  return n;
}

double gemm_seconds_per_flop() {
  constexpr int kN = 384;  // large enough for the blocked kernel, small enough for ~10 ms
  const Eigen::MatrixXd a = Eigen::MatrixXd::Random(kN, kN), b = Eigen::MatrixXd::Random(kN, kN);
  Eigen::MatrixXd c(kN, kN);
  double best = 1e300;
  for (int rep = 0; rep < 3; ++rep) {
    const auto t0 = std::chrono::steady_clock::now();
    c.noalias() = a * b;
    best = std::min(best, seconds_since(t0));
  }
  volatile double sink = c(0, 0);
  (void)sink;
  return best / (2.0 * kN * kN * kN);
}

}  // namespace

double plan_flops_per_frequency(const Geometry& g, double gap, DerivativeOrder order,
                                double rel_tol) {
  return g.cost(gap, order, rel_tol).flops();
}

PlanCalibration calibrate_plan(const Geometry& g, const std::vector<double>& gaps,
                               const FrequencyRuleOptions& frequency, DerivativeOrder order,
                               double max_seconds) {
  PlanCalibration c;
  const double gemm = gemm_seconds_per_flop();
  const double rel_tol = frequency.rel_tol;
  const std::string gemm_text =
      fmt::format("a timed 384 x 384 matrix product on this machine ({:.1f} GFLOP/s)", 1e-9 / gemm);
  c.seconds_ref = gemm;
  c.how = gemm_text;
  if (gaps.empty()) return c;
  const double large = *std::max_element(gaps.begin(), gaps.end());
  const double small = *std::min_element(gaps.begin(), gaps.end());
  // One timed frequency at `gap` (after one untimed call that fills caches), or a negative
  // number if the model says it is too expensive to time.
  const auto timed = [&](double gap) {
    const double flops = plan_flops_per_frequency(g, gap, order, rel_tol);
    const auto t = g.truncation(gap);
    if (flops > 1.0 &&
        !(flops * gemm <= max_seconds && max_multipole_order(t) <= kMaxMultipoleOrder))
      return -1.0;
    const double xi = g.frequency_scale(gap);
    (void)g.at_frequency(xi, gap, order);
    const auto t0 = std::chrono::steady_clock::now();
    (void)g.at_frequency(xi, gap, order);
    return seconds_since(t0);
  };
  const double t_large = timed(large);
  if (t_large < 0.0) {
    c.flops_ref = 1.0;
    c.how = gemm_text + "; one frequency of this case would take too long to time";
    return c;
  }
  const double f_large = plan_flops_per_frequency(g, large, order, rel_tol);
  c.seconds_ref = t_large;
  c.flops_ref = f_large;
  // Per-gap work beyond the frequencies: the first frequency at a new gap builds its quadrature
  // and multipole tables (cold minus warm), and at T > 0 the xi = 0 term has its own blocks.
  double cold_extra = 0.0, static_term = 0.0;
  {
    const double probe = large * (1.0 + 1e-3);  // a gap not seen yet: cold caches
    const double xi = g.frequency_scale(probe);
    auto t0 = std::chrono::steady_clock::now();
    (void)g.at_frequency(xi, probe, order);
    cold_extra = std::max(0.0, seconds_since(t0) - t_large);
    if (frequency.temperature_K > 0.0) {
      t0 = std::chrono::steady_clock::now();
      (void)g.at_frequency(0.0, large, order);
      static_term = seconds_since(t0);
    }
  }
  const auto pfa0 = std::chrono::steady_clock::now();
  const bool has_pfa = g.pfa(large, frequency).has_value();
  c.per_gap_seconds = seconds_since(pfa0) + cold_extra + static_term;
  const std::string pfa_text = fmt::format(
      "; per gap {:.3g} ms (first-frequency set-up {:.3g} ms{}{})", 1e3 * c.per_gap_seconds,
      1e3 * cold_extra,
      static_term > 0.0 ? fmt::format(", xi = 0 term {:.3g} ms", 1e3 * static_term) : std::string(),
      has_pfa ? " and the PFA" : "");
  const std::string team =
      g.parallel_inside() ? fmt::format(" on {} threads", omp_get_max_threads()) : std::string();
  const double f_small = plan_flops_per_frequency(g, small, order, rel_tol);
  const double t_small = small < large && f_small > f_large ? timed(small) : -1.0;
  if (t_small > 0.0) {
    c.alpha = std::log(t_small / t_large) / std::log(f_small / f_large);
    c.how = fmt::format(
        "one frequency of this case timed at L = {:.4g} m ({:.3g} ms) and at L = {:.4g} m "
        "({:.3g} ms){}, scaled between gaps as flops^{:.2f}{}",
        large, 1e3 * t_large, small, 1e3 * t_small, team, c.alpha, pfa_text);
  } else {
    c.how = fmt::format(
        "one frequency of this case timed at L = {:.4g} m ({:.3g} ms){}, scaled to the other "
        "gaps by the flop model{}",
        large, 1e3 * t_large, team, pfa_text);
  }
  return c;
}

Plan make_plan(const Geometry& g, const std::vector<double>& gaps, const RunOptions& options,
               const PlanCalibration& calibration) {
  Plan plan;
  plan.calibration = calibration;
  const int cores = options.threads > 0 ? options.threads : omp_get_max_threads();
  const DerivativeOrder order = options.quantities.order();
  const double tol = options.frequency.rel_tol;
  double serial = 0.0, per_thread_peak = 0.0;
  for (double gap : gaps) {
    GapPlan p;
    p.gap = gap;
    p.truncation = g.truncation(gap);
    p.frequencies = estimated_frequencies(g, gap, options.frequency);
    const FrequencyCost cost = g.cost(gap, order, tol);
    p.flops_per_frequency = cost.flops();
    p.blocks = cost.blocks;
    p.block_flops = cost.block_flops;
    p.memory_bytes = cost.memory_bytes;
    p.seconds = p.frequencies * calibration.seconds_per_frequency(p.flops_per_frequency) +
                calibration.per_gap_seconds;
    serial += p.seconds;
    per_thread_peak = std::max(per_thread_peak, p.memory_bytes);
    plan.gaps.push_back(std::move(p));
  }
  // Geometries that parallelise inside run the gaps one after the other (run.cc); a timed
  // calibration already includes that parallel speed-up. Others spread gaps over threads.
  if (g.parallel_inside()) {
    plan.threads = cores;
    plan.seconds = serial;
    plan.memory_bytes = per_thread_peak * std::min(cores, kMBatch);
  } else {
    plan.threads = std::max(1, std::min<int>(cores, static_cast<int>(gaps.size())));
    plan.seconds = serial / plan.threads;
    plan.memory_bytes = per_thread_peak * plan.threads;
  }
  return plan;
}

std::vector<WorkItem> work_items(const Plan& plan, int point) {
  std::vector<WorkItem> items;
  for (std::size_t g = 0; g < plan.gaps.size(); ++g) {
    const GapPlan& p = plan.gaps[g];
    const std::vector<double> blocks =
        p.block_flops.empty() ? std::vector<double>{p.flops_per_frequency} : p.block_flops;
    for (int f = 0; f < p.frequencies; ++f)
      for (std::size_t b = 0; b < blocks.size(); ++b)
        items.push_back({point, static_cast<int>(g), f, static_cast<int>(b), blocks[b]});
  }
  std::stable_sort(items.begin(), items.end(),
                   [](const WorkItem& a, const WorkItem& b) { return a.flops > b.flops; });
  return items;
}

std::string bytes_text(double b) {
  if (!(b > 0.0)) return "negligible";
  if (b < 1024.0 * 1024.0) return fmt::format("{:.0f} KiB", std::max(1.0, b / 1024.0));
  if (b < 1024.0 * 1024.0 * 1024.0) return fmt::format("{:.1f} MiB", b / (1024.0 * 1024.0));
  return fmt::format("{:.2f} GiB", b / (1024.0 * 1024.0 * 1024.0));
}

std::string truncation_problem(const Geometry& g, const Plan& plan) {
  for (const GapPlan& p : plan.gaps) {
    const double lmax = max_multipole_order(p.truncation);
    if (lmax <= 0.0) continue;
    if (lmax <= kMaxMultipoleOrder) continue;
    const auto R = g.pfa_length();
    const std::string body =
        R ? fmt::format("the sphere of radius R = {:.6g} m at gap L = {:.6g} m (R/L = {:.3g})", *R,
                        p.gap, *R / p.gap)
          : fmt::format("gap L = {:.6g} m", p.gap);
    std::string hint;
    if (R && std::isfinite(lmax))
      hint = fmt::format("; at this rel_tol R/L up to about {:.2g} fits",
                         *R / p.gap * kMaxMultipoleOrder / lmax);
    return fmt::format(
        "{} needs l_max = {:.3g} multipoles, beyond the {:.0e} this program can index{}: the "
        "exact computation is refused (the PFA and the derivative expansion are the tools "
        "there)",
        body, lmax, kMaxMultipoleOrder, hint);
  }
  return {};
}

MemoryLimit memory_limit(double user_bytes) {
  const AvailableMemory a = available_memory();
  MemoryLimit m;
  m.bytes = a.bytes;
  if (a.bytes > 0.0) m.source = a.source;
  if (user_bytes > 0.0 && (m.bytes <= 0.0 || user_bytes < m.bytes)) {
    m.bytes = user_bytes;
    m.source = "--max-memory";
    if (a.bytes > 0.0)
      m.note = fmt::format("the machine has {} available ({})", bytes_text(a.bytes), a.source);
  }
  return m;
}

std::string memory_problem(const Plan& plan, const MemoryLimit& limit) {
  if (!(limit.bytes > 0.0) || plan.memory_bytes <= limit.bytes) return {};
  const GapPlan* peak = nullptr;
  for (const GapPlan& p : plan.gaps)
    if (!peak || p.memory_bytes > peak->memory_bytes) peak = &p;
  return fmt::format(
      "the plan needs about {} of working memory ({}{} thread{}), more than the {} available "
      "({})",
      bytes_text(plan.memory_bytes),
      peak ? fmt::format("largest at L = {:.6g} m, ", peak->gap) : std::string(), plan.threads,
      plan.threads == 1 ? "" : "s", bytes_text(limit.bytes), limit.source);
}

}  // namespace roundtrip
