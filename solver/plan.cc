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

constexpr int kMBatch = 8;  // m blocks are computed in batches of 8 (sphere_plate.cc)

double seconds_since(std::chrono::steady_clock::time_point t0) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

bool dense_blocks(const std::map<std::string, double>& t) {
  return t.count("l_max") && t.count("quadrature_nodes");
}

// In double throughout: at R/L ~ 1e8 and beyond, l_max and the block count leave the int range.
double estimated_blocks(const Geometry& g, double gap, double lmax, double rel_tol) {
  const auto R = g.pfa_length();
  if (!R) return lmax + 1.0;
  const double m = std::sqrt(*R / gap) * std::log(10.0 / rel_tol) / 2.0;
  const double batches = std::max(1.0, std::ceil(m / kMBatch));
  return std::min(lmax + 1.0, batches * kMBatch);
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
  const auto t = g.truncation(gap);
  if (!dense_blocks(t)) return 1.0;
  const double lmax = t.at("l_max");
  const double q = 2.0 * t.at("quadrature_nodes");
  const double blocks = estimated_blocks(g, gap, lmax, rel_tol);
  // Cost model of solver/logdet/low_rank.cc as used by the sphere-plate blocks (n multipole
  // rows, q node columns). Node space (q < n): banded Gram (a node couples to ~8/sqrt(l_max) of
  // the multipoles; measured 0.22 at l_max = 1109), Cholesky, inverse for the derivatives, and
  // the column assembly (Legendre recurrences, exp inside the band). Otherwise the dense
  // multipole-space factorisation. The factor kNodeSpaceInefficiency = 6 converts to
  // "gemm-equivalent" flops: measured at R/L = 200 and 1000 (gold, rel_tol 1e-4) against the
  // timed 384 x 384 product; the small blocked products and transcendental functions run well
  // below the large-gemm rate.
  // The node-space matrix is banded (nodes couple to nodes within a fixed distance in sqrt(t);
  // so the Gram pairs each column only with ~nb others over its band of rows;
  // measured half-width ~50-100, kNodeBand): banded Cholesky q nb^2, selected inversion for
  // the force ~4 q nb^2, two block-bidiagonal solves 4 q^2 nb for the gradient. The columns
  // (Legendre recurrences and exp) are computed over their bands only: ~50 flops per entry.
  constexpr double kNodeSpaceInefficiency = 6.0;
  constexpr double kNodeBand = 100.0;
  const double band = std::min(1.0, 8.0 / std::sqrt(lmax));
  const double nb = std::min(q, kNodeBand);
  double flops = 0.0;
  // Blocks beyond what could ever run (the plan refuses them, truncation_problem) are summed in
  // 1000 strides of equal size, so that the model stays cheap and finite.
  const double stride = std::max(1.0, std::floor(blocks / 1000.0));
  for (double m = 0.0; m < blocks; m += stride) {
    const double n = 2.0 * (lmax - std::max(1.0, m) + 1.0);
    if (q < n) {
      double f = band * n * q * nb + q * nb * nb + 50.0 * band * n * q;
      if (order != DerivativeOrder::kEnergy) f += 4.0 * q * nb * nb;
      if (order == DerivativeOrder::kGradient) f += 4.0 * q * q * nb;
      flops += stride * kNodeSpaceInefficiency * f;
    } else {
      flops += stride * (4.0 * n * n * q + n * n * n / 3.0);
      if (order == DerivativeOrder::kGradient) flops += stride * 2.0 * n * q * q;
    }
  }
  return flops;
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
    if (dense_blocks(t) && !(flops * gemm <= max_seconds && t.at("l_max") <= kMaxMultipoleOrder))
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
    p.flops_per_frequency = plan_flops_per_frequency(g, gap, order, tol);
    if (dense_blocks(p.truncation)) {
      const double lmax = p.truncation.at("l_max");
      p.blocks = estimated_blocks(g, gap, lmax, tol);
      const double n = 2.0 * lmax, q = 2.0 * p.truncation.at("quadrature_nodes");
      p.memory_bytes = 8.0 * (n * q + 3.0 * q * q);
    }
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

std::string bytes_text(double b) {
  if (!(b > 0.0)) return "negligible";
  if (b < 1024.0 * 1024.0) return fmt::format("{:.0f} KiB", std::max(1.0, b / 1024.0));
  if (b < 1024.0 * 1024.0 * 1024.0) return fmt::format("{:.1f} MiB", b / (1024.0 * 1024.0));
  return fmt::format("{:.2f} GiB", b / (1024.0 * 1024.0 * 1024.0));
}

std::string truncation_problem(const Geometry& g, const Plan& plan) {
  for (const GapPlan& p : plan.gaps) {
    const auto it = p.truncation.find("l_max");
    if (it == p.truncation.end()) continue;
    const double lmax = it->second;
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
  MemoryLimit m{a.bytes, a.bytes > 0.0 ? a.source : std::string()};
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
