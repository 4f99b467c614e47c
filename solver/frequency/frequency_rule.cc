// Frequency rules (formulas and signs in frequency_rule.h and geometry.h).
//
// T = 0: E = (hbar / 2 pi) \int_0^inf dxi s(xi). With u = xi / xi_scale we use the double-
// exponential substitution u = exp(t - e^-t) (Takahasi & Mori, Publ. RIMS 9, 721 (1974); the
// form for integrands decaying like e^-u, M. Mori, Publ. RIMS 41, 897 (2005), from memory) and
// the trapezoidal rule in t: double-exponential decay at both ends for s bounded at 0 and
// ~e^-u at infinity, so the log a-type endpoint terms of the plate spectra and the Drude TE
// drop near xi = 0 cost nothing extra. Levels h = 1, 1/2, 1/4, ... are nested; the left end
// u_L ~ rel_tol is chosen so that the gap [0, xi_L] (added assuming s flat there, checked) is
// negligible, the right end by a march until the nodes are negligible. Convergence: the change
// between the last two levels plus the truncation bounds, relative to \int |s|, is below
// rel_tol for value and derivatives; that sum is the reported error (it overstates the error
// of the finer level, by 10 to 1e4 times in tests/frequency). The exp-sinh rule used
// before (u = exp((pi/2) sinh t), left end u = 2.4e-19, h from 1/2) is kept as
// zero_temperature_exp_sinh_rule: on the same spectra it needs 2-4 times as many evaluations
// (benchmarks/bench_t0_rule.cc).
//
// T > 0: E = k_B T \sum'_{n>=0} s(xi_n), xi_n = 2 pi n k_B T / hbar, n = 0 weighted 1/2 (Lifshitz;
// e.g. Bordag, Mohideen, Mostepanenko, Phys. Rep. 353, 1 (2001)). The tail after the last term is
// estimated as geometric from the ratio of the last two terms.
//
// T > 0, Pade spectrum decomposition (pade_spectrum.h; Hu, Xu, Yan, J. Chem. Phys. 133, 101106
// (2010)): E ~ k_B T [s(0)/2 + sum_j eta_j s(xi_j)]; the number of poles comes from a model
// spectrum (choose_thermal_rule), the reported error is the model's relative error times |E|.
#include "solver/frequency/frequency_rule.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>

#include "solver/constants.h"
#include "solver/frequency/pade_spectrum.h"
#include "solver/special/polylog.h"

namespace roundtrip {

std::string to_string(FrequencyRuleKind k) {
  switch (k) {
    case FrequencyRuleKind::kZeroTemperatureQuadrature:
      return "zero-temperature-quadrature";
    case FrequencyRuleKind::kMatsubara:
      return "matsubara";
    case FrequencyRuleKind::kPadeSpectrum:
      return "pade-spectrum";
    case FrequencyRuleKind::kMatsubaraIntegralTail:
      return "matsubara-integral-tail";
  }
  return "unknown";
}

std::string to_string(ThermalRule r) {
  switch (r) {
    case ThermalRule::kAuto:
      return "auto";
    case ThermalRule::kMatsubara:
      return "matsubara";
    case ThermalRule::kPade:
      return "pade";
    case ThermalRule::kIntegralTail:
      return "integral-tail";
  }
  return "unknown";
}

std::optional<ThermalRule> thermal_rule_from_string(const std::string& s) {
  if (s == "auto") return ThermalRule::kAuto;
  if (s == "matsubara") return ThermalRule::kMatsubara;
  if (s == "pade") return ThermalRule::kPade;
  if (s == "integral-tail") return ThermalRule::kIntegralTail;
  return std::nullopt;
}

std::string FrequencyRuleOptions::validate() const {
  if (!std::isfinite(temperature_K) || temperature_K < 0.0)
    return fmt::format("temperature_K = {} must be finite and >= 0 (kelvin)", temperature_K);
  // Below ~1e-14 the round-off of the sums themselves dominates.
  if (!std::isfinite(rel_tol) || rel_tol < 1e-14 || rel_tol > 0.1)
    return fmt::format("rel_tol = {} must lie in [1e-14, 0.1]", rel_tol);
  if (max_matsubara_terms < 1)
    return fmt::format("max_matsubara_terms = {} must be >= 1", max_matsubara_terms);
  if (temperature_K == 0.0 && thermal_rule != ThermalRule::kAuto)
    return fmt::format("frequency_rule = {} needs T > 0 (at T = 0 the frequency integral is used)",
                       to_string(thermal_rule));
  return {};
}

namespace {

double component(const Spectral& s, int c) { return c == 0 ? s.value : (c == 1 ? s.d1 : s.d2); }

Spectral abs(const Spectral& s) { return {std::abs(s.value), std::abs(s.d1), std::abs(s.d2)}; }

// |x| <= tol |ref| for every component.
bool negligible(const Spectral& x, const Spectral& ref, double tol) {
  for (int c = 0; c < 3; ++c)
    if (!(std::abs(component(x, c)) <= tol * std::abs(component(ref, c)))) return false;
  return true;
}

bool all_finite(const Spectral& s) {
  return std::isfinite(s.value) && std::isfinite(s.d1) && std::isfinite(s.d2);
}

// Neumaier's compensated sum (Z. Angew. Math. Mech. 54, 39 (1974)) per component, so that
// sums of ~1e5 Matsubara terms keep ~1e-16 relative accuracy.
class CompensatedSum {
 public:
  void add(const Spectral& x) {
    add(sum_.value, c_.value, x.value);
    add(sum_.d1, c_.d1, x.d1);
    add(sum_.d2, c_.d2, x.d2);
  }
  Spectral value() const { return {sum_.value + c_.value, sum_.d1 + c_.d1, sum_.d2 + c_.d2}; }

 private:
  static void add(double& sum, double& c, double x) {
    const double t = sum + x;
    c += std::abs(sum) >= std::abs(x) ? (sum - t) + x : (x - t) + sum;
    sum = t;
  }
  Spectral sum_, c_;
};

// Total, error and status of a T = 0 quadrature (both DE rules): `last_change` is the change of
// the value between the last two levels (J), reported when the rule did not converge.
void finish_zero_temperature(FrequencySum& out, const Spectral& total, double abs_error,
                             double last_change, bool converged, double rel_tol,
                             std::size_t nodes) {
  out.total = total;
  out.abs_error = abs_error;
  out.converged = converged && all_finite(out.total);
  if (!converged)
    out.message = fmt::format(
        "T = 0 frequency quadrature did not reach rel_tol = {} with {} nodes (last change {:.3g} "
        "of the energy)",
        rel_tol, nodes, std::abs(last_change / out.total.value));
  else if (!all_finite(out.total))
    out.message = "T = 0 frequency quadrature produced a non-finite value";
}

struct DeNode {
  double t = 0.0;
  double xi = 0.0;
  double jac = 0.0;  // dxi/dt
  Spectral s;
  bool probe = false;       // evaluated to check the left end only: weight 0, never refined next to
  bool skip_right = false;  // the interval to the next node is not refined (far tail)
};

// exp-sinh map: xi = xi_scale exp((pi/2) sinh t), dxi/dt = xi (pi/2) cosh t.
DeNode make_node(double t, double xi_scale, const SpectralFunction& f) {
  DeNode n;
  n.t = t;
  n.xi = xi_scale * std::exp(0.5 * kPi * std::sinh(t));
  n.jac = n.xi * 0.5 * kPi * std::cosh(t);
  n.s = f(n.xi);
  return n;
}

Spectral level_sum(const std::vector<DeNode>& nodes, double h) {
  Spectral sum;
  for (const auto& n : nodes)
    if (!n.probe) sum += n.s * (n.jac * h);
  return sum;
}

Spectral level_abs_sum(const std::vector<DeNode>& nodes, double h) {
  Spectral sum;
  for (const auto& n : nodes)
    if (!n.probe) sum += abs(n.s) * (n.jac * h);
  return sum;
}

FrequencySum zero_temperature_exp_sinh(const SpectralFunction& f, double xi_scale,
                                       const FrequencyRuleOptions& opts) {
  // Left end (a node of every level): u = 2.4e-19 at t = -4; the omitted [0, u] adds ~u s(0),
  // below any rel_tol >= 1e-14 even if xi_scale overestimates the decay scale 1e4-fold.
  constexpr double kTLeft = -4.0;
  // Right end: u = exp(pi/2 sinh 5.5) ~ 1e84, far beyond any exponential decay; normally the
  // march stops much earlier, once the nodes are negligible.
  constexpr double kTRightMax = 5.5;
  constexpr double kH0 = 0.5;
  // Nodes beyond the right end must be negligible compared with the running sum.
  const double tail_tol = 1e-4 * opts.rel_tol;
  // The first levels can agree by accident on a structured integrand: compare h <= 1/8 at least.
  constexpr int kMinLevel = 2;
  constexpr int kMaxLevel = 8;  // h = 1/512, ~3000 nodes

  FrequencySum out;
  out.rule = FrequencyRuleKind::kZeroTemperatureQuadrature;
  std::vector<DeNode> nodes;
  for (int j = static_cast<int>(std::ceil(kTLeft / kH0)); j * kH0 <= 0.0; ++j)
    nodes.push_back(make_node(j * kH0, xi_scale, f));
  Spectral running = level_abs_sum(nodes, kH0);
  int small_in_row = 0;
  for (int j = 1; j * kH0 <= kTRightMax; ++j) {
    DeNode n = make_node(j * kH0, xi_scale, f);
    const Spectral contrib = n.s * (n.jac * kH0);
    running += abs(contrib);
    nodes.push_back(n);
    small_in_row = negligible(contrib, running, tail_tol) ? small_in_row + 1 : 0;
    if (small_in_row >= 2) break;
  }
  double h = kH0;
  Spectral previous = level_sum(nodes, h);
  bool converged = false;
  double error_estimate = 0.0;  // of the value, in units of the unscaled level sums
  Spectral diff;
  for (int level = 1; level <= kMaxLevel; ++level) {
    std::vector<DeNode> refined;
    refined.reserve(2 * nodes.size());
    for (std::size_t i = 0; i < nodes.size(); ++i) {
      refined.push_back(nodes[i]);
      if (i + 1 < nodes.size()) refined.push_back(make_node(nodes[i].t + 0.5 * h, xi_scale, f));
    }
    nodes = std::move(refined);
    h *= 0.5;
    const Spectral current = level_sum(nodes, h);
    const Spectral l1 = level_abs_sum(nodes, h);
    diff = {current.value - previous.value, current.d1 - previous.d1, current.d2 - previous.d2};
    // Per component: r = |change| / \int |s|; accept when r <= rel_tol for all. (Accepting
    // earlier on an error model, e.g. the error squaring per halving, was tried and rejected:
    // lucky early drops made it accept errors 1e4 times the target.)
    bool ok = true;
    double est = 0.0;
    for (int c = 0; c < 3; ++c) {
      const double scale = component(l1, c);
      const double r = scale > 0.0 ? std::abs(component(diff, c)) / scale : 0.0;
      if (!(r <= opts.rel_tol)) ok = false;
      if (c == 0) est = r * scale;
    }
    previous = current;
    error_estimate = est;
    if (level >= kMinLevel && ok) {
      converged = true;
      break;
    }
  }
  const double prefactor = kHbar / (2.0 * kPi);
  out.terms.reserve(nodes.size());
  CompensatedSum total;
  for (const auto& n : nodes) {
    FrequencyTerm term{n.xi, prefactor * n.jac * h, n.s};
    total.add(term.s * term.weight);
    out.terms.push_back(term);
  }
  finish_zero_temperature(out, total.value(), prefactor * error_estimate, prefactor * diff.value,
                          converged, opts.rel_tol, nodes.size());
  return out;
}

// exp-exp map: xi = xi_scale exp(t - e^-t), dxi/dt = xi (1 + e^-t).
DeNode make_exp_exp_node(double t, double xi_scale, const SpectralFunction& f) {
  DeNode n;
  n.t = t;
  const double e = std::exp(-t);
  n.xi = xi_scale * std::exp(t - e);
  n.jac = n.xi * (1.0 + e);
  n.s = f(n.xi);
  return n;
}

// The t at which t - e^-t = log_u (the map is increasing): bisection on [-10, 10].
double exp_exp_t_of(double log_u) {
  double lo = -10.0, hi = 10.0;
  for (int i = 0; i < 200 && hi - lo > 1e-14; ++i) {
    const double mid = 0.5 * (lo + hi);
    (mid - std::exp(-mid) < log_u ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

// |a| and |b| agree within frac of the larger, per component.
bool flat(const Spectral& a, const Spectral& b, double frac) {
  for (int c = 0; c < 3; ++c) {
    const double x = std::abs(component(a, c)), y = std::abs(component(b, c));
    if (!(std::abs(x - y) <= frac * std::max(x, y))) return false;
  }
  return true;
}

FrequencySum zero_temperature(const SpectralFunction& f, double xi_scale,
                              const FrequencyRuleOptions& opts) {
  // Left end: u_L = kLeftFraction rel_tol. The trapezoidal nodes left of it are added with
  // s(xi_L) for s, which holds when |s| is flat there (it is for every spectrum with a finite
  // xi -> 0 limit and no structure below u_L); the bound kPlateau xi_L |s| is then ~ 1e-3 rel_tol
  // of \int |s| (>= ~0.9 |s(0)| xi_scale for the mirror models). Flatness is checked on the two
  // leftmost nodes; if they differ by more than kPlateau (a structure near xi = 0, e.g. the
  // Drude TE drop at xi ~ gamma c^2 / (omega_p L)^2), probes move the left end (below), at most
  // to kTLeftMin (u = 3.5e-26).
  constexpr double kLeftFraction = 0.02;
  constexpr double kPlateau = 0.05;
  constexpr double kTLeftMin = -4.0;
  // Right end: march at h0 until a node past u = 1 is negligible (|w s| <= kTailFraction
  // rel_tol of the running \int |s|, every component); beyond it the integrand falls double
  // exponentially in t. kTRightMax (u = 8100) leaves room for a decay scale 100 times xi_scale.
  constexpr double kTailFraction = 1e-3;
  // A falling tail node this small next to a negligible one is not refined towards it.
  constexpr double kSkipFraction = 1e-2;
  constexpr double kTRightMax = 9.0;
  constexpr double kH0 = 1.0;
  // Accept the change between h = 1/2 and 1/4 at the earliest (h = 1 is too coarse to agree
  // by anything but accident).
  constexpr int kMinLevel = 2;
  constexpr int kMaxLevel = 9;  // h = 1/512
  const double tail_tol = kTailFraction * opts.rel_tol;

  FrequencySum out;
  out.rule = FrequencyRuleKind::kZeroTemperatureQuadrature;
  const double t_left = std::max(kTLeftMin, exp_exp_t_of(std::log(kLeftFraction * opts.rel_tol)));
  std::vector<DeNode> nodes;  // ascending in t
  nodes.push_back(make_exp_exp_node(t_left, xi_scale, f));
  Spectral running = abs(nodes[0].s * (nodes[0].jac * kH0));
  for (int j = 1; t_left + j * kH0 <= kTRightMax; ++j) {
    DeNode n = make_exp_exp_node(t_left + j * kH0, xi_scale, f);
    const Spectral contrib = n.s * (n.jac * kH0);
    running += abs(contrib);
    nodes.push_back(n);
    if (!all_finite(n.s)) break;
    if (n.xi > xi_scale && negligible(contrib, running, tail_tol)) break;
  }
  // Left end: if the two leftmost nodes differ by more than kPlateau, probe h0 further left;
  // a probe that agrees with the left end shows |s| flat there (it gets weight 0 and is not
  // refined next to), one that does not becomes the left end and the next probe follows.
  if (nodes.size() >= 2 && all_finite(nodes[0].s) && !flat(nodes[0].s, nodes[1].s, kPlateau)) {
    while (nodes[0].t - kH0 >= kTLeftMin - 1e-12) {
      DeNode probe = make_exp_exp_node(nodes[0].t - kH0, xi_scale, f);
      const bool agrees = all_finite(probe.s) && flat(probe.s, nodes[0].s, kPlateau);
      probe.probe = agrees;
      if (!agrees) running += abs(probe.s * (probe.jac * kH0));
      nodes.insert(nodes.begin(), probe);
      if (agrees || !all_finite(probe.s)) break;
    }
  }
  // The left gap: the trapezoidal nodes left of xi_L (at every level h), with s(xi_L) for s
  // (s is flat there, as checked): s(xi_L) sum_{j>=1} h dxi/dt(t_L - j h). Its error is bounded
  // by kPlateau xi_L |s| (with the probe's |s| if larger). The right truncation is
  // bounded by the last node's weight at h0 times |s|. Both in units of the level sums
  // (\int dxi).
  const bool probed = nodes.front().probe;
  const DeNode first = nodes[probed ? 1 : 0];
  Spectral left_s = abs(first.s);
  if (probed) {
    const Spectral p = abs(nodes.front().s);
    left_s = {std::max(left_s.value, p.value), std::max(left_s.d1, p.d1),
              std::max(left_s.d2, p.d2)};
  }
  const Spectral left = left_s * (first.xi * kPlateau);
  const double first_xi = first.xi;
  const auto gap_weight = [&](double h) {  // sum_{j>=1} h dxi/dt(t_L - j h)
    double w = 0.0;
    for (int j = 1; j < 1000; ++j) {
      const double t = first.t - j * h, e = std::exp(-t);
      const double x = xi_scale * std::exp(t - e) * (1.0 + e) * h;
      w += x;
      if (!(x > 1e-18 * w)) break;
    }
    return w;
  };
  const auto with_gap = [&](Spectral sum, double h, bool absolute) {
    sum += (absolute ? abs(first.s) : first.s) * gap_weight(h);
    return sum;
  };
  const Spectral right = abs(nodes.back().s) * (nodes.back().jac * kH0);
  Spectral truncation = left;
  truncation += right;

  double h = kH0;
  Spectral previous = with_gap(level_sum(nodes, h), h, false);
  bool converged = false;
  double error_estimate = 0.0;  // of the value, in units of the unscaled level sums
  Spectral diff;
  for (int level = 1; level <= kMaxLevel; ++level) {
    const Spectral l1_coarse = level_abs_sum(nodes, h);
    std::vector<DeNode> refined;
    refined.reserve(2 * nodes.size());
    const auto contrib = [&](const DeNode& n) { return abs(n.s) * (n.jac * h); };
    for (std::size_t i = 0; i < nodes.size(); ++i) {
      refined.push_back(nodes[i]);
      if (i + 1 == nodes.size() || nodes[i].probe || nodes[i].skip_right) continue;
      // The far tail is not refined: between two negligible nodes, and between a small node
      // (kSkipFraction rel_tol, past u = 1, with |w s| falling from its left neighbour) and a
      // negligible one. The interval's bound (below) is added to the truncation bound.
      const Spectral ci = contrib(nodes[i]), next = contrib(nodes[i + 1]);
      bool skip = negligible(next, l1_coarse, tail_tol) && negligible(ci, l1_coarse, tail_tol);
      if (!skip && i >= 1 && nodes[i].xi > xi_scale && negligible(next, l1_coarse, tail_tol) &&
          negligible(ci, l1_coarse, kSkipFraction * opts.rel_tol)) {
        const Spectral before = contrib(nodes[i - 1]);
        skip = before.value >= ci.value && before.d1 >= ci.d1 && before.d2 >= ci.d2;
      }
      if (skip) {
        // |w s| is monotone between the two (rising on the left, falling on the right): the
        // larger end times the interval bounds what is left out.
        refined.back().skip_right = true;
        const double dt_over_h = (nodes[i + 1].t - nodes[i].t) / h;
        truncation += Spectral{std::max(ci.value, next.value), std::max(ci.d1, next.d1),
                               std::max(ci.d2, next.d2)} *
                      dt_over_h;
        continue;
      }
      refined.push_back(make_exp_exp_node(0.5 * (nodes[i].t + nodes[i + 1].t), xi_scale, f));
    }
    nodes = std::move(refined);
    h *= 0.5;
    const Spectral current = with_gap(level_sum(nodes, h), h, false);
    const Spectral l1 = with_gap(level_abs_sum(nodes, h), h, true);
    diff = {current.value - previous.value, current.d1 - previous.d1, current.d2 - previous.d2};
    // Per component, with d = |change| / \int |s| and tau = truncation / \int |s|: accept when
    // d + tau <= rel_tol (the change bounds the error of the coarser level, hence, the error
    // falling with h, of this one). An extrapolation of the error from the drop of d per
    // halving (d^2 / d_prev, which would accept h = 1/4 at rel_tol 1e-7) was tried and
    // rejected: on a PEC sphere-plate at R/L = 50 the h = 1/4 level was off by 4e-9 where it
    // predicted 1e-10 (the structure at xi ~ c/R slows the convergence).
    bool ok = true;
    double est = 0.0;
    for (int c = 0; c < 3; ++c) {
      const double scale = component(l1, c);
      if (!(scale > 0.0)) continue;
      const double e = std::abs(component(diff, c)) + component(truncation, c);
      if (!(e <= opts.rel_tol * scale)) ok = false;
      if (c == 0) est = e;
    }
    previous = current;
    error_estimate = est;
    if (!all_finite(current)) break;
    if (level >= kMinLevel && ok) {
      converged = true;
      break;
    }
  }
  const double prefactor = kHbar / (2.0 * kPi);
  out.terms.reserve(nodes.size());
  CompensatedSum total;
  for (const auto& n : nodes) {
    double w = n.probe ? 0.0 : n.jac * h;
    if (n.xi == first_xi && !n.probe) w += gap_weight(h);  // the left gap
    FrequencyTerm term{n.xi, prefactor * w, n.s};
    total.add(term.s * term.weight);
    out.terms.push_back(term);
  }
  finish_zero_temperature(out, total.value(), prefactor * error_estimate, prefactor * diff.value,
                          converged, opts.rel_tol, nodes.size());
  return out;
}

FrequencySum matsubara(const SpectralFunction& f, const FrequencyRuleOptions& opts) {
  // Stop after this many consecutive terms below rel_tol |sum| whose geometric tail is also below.
  constexpr int kSmallInRow = 3;
  const double kT = kBoltzmann * opts.temperature_K;
  FrequencySum out;
  out.rule = FrequencyRuleKind::kMatsubara;
  int small_in_row = 0;
  Spectral last;
  double tail = 0.0;
  bool converged = false;
  CompensatedSum total;
  Spectral abs_total;  // sum of |terms|: the scale for "negligible"
  for (int n = 0; n < opts.max_matsubara_terms; ++n) {
    const double xi = matsubara_frequency(n, opts.temperature_K);
    FrequencyTerm term{xi, n == 0 ? 0.5 * kT : kT, f(xi)};
    const Spectral contrib = term.s * term.weight;
    total.add(contrib);
    abs_total += abs(contrib);
    out.total = total.value();
    out.terms.push_back(term);
    if (!all_finite(contrib)) break;
    // Geometric tail from the ratio of the last two terms (all components); infinite when the
    // terms do not (yet) fall.
    bool tail_ok = n >= 2;
    double tail_value = std::numeric_limits<double>::infinity();
    for (int c = 0; c < 3; ++c) {
      const double a = std::abs(component(contrib, c));
      const double b = std::abs(component(last, c));
      double est = 0.0;
      if (a > 0.0) {
        const double ratio = a / b;
        est = ratio < 1.0 ? a * ratio / (1.0 - ratio) : std::numeric_limits<double>::infinity();
      }
      if (!(est <= opts.rel_tol * component(abs_total, c))) tail_ok = false;
      if (c == 0) tail_value = est;
    }
    last = contrib;
    small_in_row =
        (n >= 1 && negligible(contrib, abs_total, opts.rel_tol) && tail_ok) ? small_in_row + 1 : 0;
    tail = tail_value;
    if (small_in_row >= kSmallInRow) {
      converged = true;
      break;
    }
  }
  out.abs_error = tail;
  out.converged = converged && all_finite(out.total);
  if (!all_finite(out.total))
    out.message =
        fmt::format("Matsubara sum produced a non-finite value at n = {}", out.terms.size() - 1);
  else if (!converged)
    out.message = fmt::format(
        "Matsubara sum not converged to rel_tol = {} after max_matsubara_terms = {} terms",
        opts.rel_tol, opts.max_matsubara_terms);
  return out;
}

// Gregory's coefficients |G_1| .. |G_8| (1/2, 1/12, 1/24, 19/720, 3/160, 863/60480, 275/24192,
// 33953/3628800; standard, e.g. Phillips, Proc. Edinburgh Math. Soc. 18, 133 (1972); checked in
// tests/frequency against exactly summable series).
constexpr double kGregory[] = {1.0 / 2.0,   1.0 / 12.0,      1.0 / 24.0,      19.0 / 720.0,
                               3.0 / 160.0, 863.0 / 60480.0, 275.0 / 24192.0, 33953.0 / 3628800.0};

// Weights of f_N .. f_{N+K} in Gregory's end correction with forward differences up to Delta^K:
//   sum_{n>=N} f_n = \int_N^inf f dn + sum_{k=0}^K (-1)^k |G_{k+1}| Delta^k f_N + ...,
// Delta^k f_N = sum_j (-1)^(k-j) C(k, j) f_{N+j}, so f_{N+j} carries
// (-1)^j sum_{k>=j} |G_{k+1}| C(k, j).
std::vector<double> gregory_weights(int order) {
  std::vector<double> w(order + 1, 0.0);
  for (int k = 0; k <= order; ++k) {
    double binom = 1.0;  // C(k, j)
    for (int j = 0; j <= k; ++j) {
      w[j] += (j % 2 == 0 ? 1.0 : -1.0) * kGregory[k] * binom;
      binom = binom * (k - j) / (j + 1);
    }
  }
  return w;
}

Spectral forward_difference(const std::vector<Spectral>& f, int order) {
  Spectral d;
  double binom = 1.0;
  for (int j = 0; j <= order; ++j) {
    d += f[j] * (((order - j) % 2 == 0 ? 1.0 : -1.0) * binom);
    binom = binom * (order - j) / (j + 1);
  }
  return d;
}

}  // namespace

GregoryCorrection gregory_tail_correction(const std::vector<Spectral>& f) {
  GregoryCorrection g;
  const int order = static_cast<int>(f.size()) - 1;
  if (order < 0 || order >= static_cast<int>(std::size(kGregory)))
    throw std::invalid_argument("gregory_tail_correction: 1 to 8 values");
  for (int k = 0; k <= order; ++k) {
    g.last = forward_difference(f, k) * ((k % 2 == 0 ? 1.0 : -1.0) * kGregory[k]);
    g.value += g.last;
  }
  return g;
}

namespace {

// Low temperature (frequency_rule.h, "Matsubara terms with an integral tail"): n < N explicit,
// Gregory's correction from f_N .. f_{N+K}, and the T = 0 rule on [xi_N, inf).
FrequencySum low_temperature(const SpectralFunction& f, double xi_scale,
                             const FrequencyRuleOptions& opts) {
  const double kT = kBoltzmann * opts.temperature_K;
  const double step = matsubara_frequency(1, opts.temperature_K);  // h = 2 pi k_B T / hbar
  const std::vector<double> gw = gregory_weights(kGregoryDifferences);
  // Values s(xi_n), computed once each (N grows by doubling when the check fails).
  std::vector<Spectral> values;
  const auto value = [&](int n) -> const Spectral& {
    while (static_cast<int>(values.size()) <= n)
      values.push_back(f(matsubara_frequency(static_cast<int>(values.size()), opts.temperature_K)));
    return values[n];
  };
  // The integral's budget: (1 - kGregoryFraction) rel_tol; Gregory's: kGregoryFraction rel_tol.
  FrequencyRuleOptions integral_opts = opts;
  integral_opts.temperature_K = 0.0;
  integral_opts.thermal_rule = ThermalRule::kAuto;
  integral_opts.rel_tol = std::max(1e-14, (1.0 - kGregoryFraction) * opts.rel_tol);
  FrequencySum out;
  out.rule = FrequencyRuleKind::kMatsubaraIntegralTail;
  std::string why;
  for (int N = kLowTemperatureFirstTerms; N <= kLowTemperatureMaxTerms; N *= 4) {
    // Explicit terms n = 0 .. N-1 (n = 0: exact static term, weight 1/2).
    CompensatedSum explicit_sum;
    Spectral explicit_abs;
    for (int n = 0; n < N; ++n) {
      const Spectral c = value(n) * (n == 0 ? 0.5 * kT : kT);
      explicit_sum.add(c);
      explicit_abs += abs(c);
    }
    std::vector<Spectral> tail_values;
    for (int j = 0; j <= kGregoryDifferences; ++j) tail_values.push_back(value(N + j));
    const GregoryCorrection g = gregory_tail_correction(tail_values);
    bool finite = all_finite(explicit_sum.value()) && all_finite(g.value);
    // (hbar / 2 pi) \int_{xi_N}^inf s dxi = k_B T \int_N^inf f dn.
    const double xi_n = N * step;
    FrequencySum integral = zero_temperature([&](double x) { return f(xi_n + x); },
                                             std::max(xi_scale, 1e-300), integral_opts);
    if (!integral.converged || !finite) {
      out = std::move(integral);
      out.rule = FrequencyRuleKind::kMatsubaraIntegralTail;
      out.converged = false;
      out.message = finite ? "Matsubara terms with an integral tail: " + out.message
                           : "Matsubara terms with an integral tail: a non-finite term";
      return out;
    }
    CompensatedSum total;
    total.add(explicit_sum.value());
    total.add(g.value * kT);
    total.add(integral.total);
    const Spectral e = total.value();
    // Gregory's error: the last difference term used, which must be small against |E| in every
    // component and smaller than the one before it (asymptotic regime).
    Spectral scale = explicit_abs;
    for (const auto& t : integral.terms) scale += abs(t.s * t.weight);
    const Spectral gregory_error = abs(g.last * kT);
    if (negligible(gregory_error, scale, kGregoryFraction * opts.rel_tol)) {
      out.total = e;
      out.abs_error = integral.abs_error + gregory_error.value;
      out.converged = true;
      out.matsubara_explicit = N;
      out.terms.clear();
      for (int n = 0; n < N + kGregoryDifferences + 1; ++n) {
        double w = n < N ? (n == 0 ? 0.5 * kT : kT) : 0.0;
        if (n >= N) w += kT * gw[n - N];
        out.terms.push_back({matsubara_frequency(n, opts.temperature_K), w, values[n]});
      }
      for (auto t : integral.terms) {
        t.xi += xi_n;
        out.terms.push_back(t);
      }
      std::stable_sort(out.terms.begin(), out.terms.end(),
                       [](const FrequencyTerm& a, const FrequencyTerm& b) { return a.xi < b.xi; });
      return out;
    }
    why = fmt::format("Gregory's end correction at N = {} is {:.3g} of the energy", N,
                      gregory_error.value / std::abs(e.value));
  }
  out.converged = false;
  out.message = fmt::format(
      "Matsubara terms with an integral tail did not reach rel_tol = {} with up to {} explicit "
      "terms ({})",
      opts.rel_tol, kLowTemperatureMaxTerms, why);
  return out;
}

// Perfect-mirror plate-plate spectrum at unit gap with its gap derivatives (see frequency_rule.h):
// s = -G/(4 pi), ds/dL = -(a G' - 2 G)/(4 pi), d2s/dL2 = -(6 G - 4 a G' + a^2 G'')/(4 pi),
// G' = a ln(1 - e^-a), G'' = ln(1 - e^-a) + a/(e^a - 1); a G' and a^2 G'' vanish at a = 0.
Spectral mirror_model(double a) {
  constexpr double k = -1.0 / (4.0 * kPi);
  if (a == 0.0) return {k * kZeta3, -2.0 * k * kZeta3, 6.0 * k * kZeta3};
  const double x = std::exp(-a);
  const double g = a * special::dilog(x) + special::trilog(x);
  const double l = std::log(-std::expm1(-a));  // ln(1 - e^-a), also for a < 1e-16 (x = 1)
  const double g1 = a * l;
  const double g2 = l + a / std::expm1(a);
  return {k * g, k * (a * g1 - 2.0 * g), k * (6.0 * g - 4.0 * a * g1 + a * a * g2)};
}

// PSD of the model with n poles; tau = 2 k_B T / (hbar xi_scale), so a_j = tau y_j.
Spectral pade_model_sum(int n, double tau) {
  const PadePoles p = pade_spectrum_poles(n);
  CompensatedSum sum;
  sum.add(mirror_model(0.0) * 0.5);
  for (int j = 0; j < n; ++j) sum.add(mirror_model(tau * p.y[j]) * p.eta[j]);
  return sum.value();
}

double relative_gap(const Spectral& x, const Spectral& ref) {
  double worst = 0.0;
  for (int c = 0; c < 3; ++c) {
    const double r = std::abs(component(x, c) - component(ref, c)) / std::abs(component(ref, c));
    worst = std::max(worst, std::isfinite(r) ? r : std::numeric_limits<double>::infinity());
  }
  return worst;
}

// Model error of n poles, estimated against 2n poles (the PSD error falls much faster than
// 1/2 per doubling once the poles cover the spectrum's decay scale).
double pade_model_error(int n, double tau) {
  return relative_gap(pade_model_sum(n, tau), pade_model_sum(2 * n, tau));
}

// Share of a contribution in a total: the worst of value and derivatives (infinite if the total
// vanishes in a component where the contribution does not).
double share(const Spectral& part, const Spectral& total) {
  double worst = 0.0;
  for (int c = 0; c < 3; ++c) {
    const double p = std::abs(component(part, c)), t = std::abs(component(total, c));
    if (p == 0.0) continue;
    worst = std::max(worst, t > 0.0 ? p / t : std::numeric_limits<double>::infinity());
  }
  return worst;
}

// Accuracy for a term with this share of the total among k terms (frequency_rule.h).
double term_tolerance(double share_j, int k, double rel_tol) {
  const double relaxed = share_j > 0.0 ? 0.5 * rel_tol / (k * share_j) : kMaxTermRelTol;
  return std::clamp(relaxed, 0.5 * rel_tol, std::max(0.5 * rel_tol, kMaxTermRelTol));
}

// The Pade rule's frequencies, weights and first per-term accuracies (before any recompute).
struct PadePlan {
  std::vector<FrequencyTerm> terms;  // xi, weight, rel_tol
  bool split = false;                // the split budget's accuracies (else rel_tol for all)
};

PadePlan pade_plan(double xi_scale, const ThermalRuleChoice& choice,
                   const FrequencyRuleOptions& opts) {
  const double kT = kBoltzmann * opts.temperature_K;
  const PadePoles p = pade_spectrum_poles(choice.pade_poles);
  const int k = choice.pade_poles + 1;
  PadePlan plan;
  std::vector<FrequencyTerm>& terms = plan.terms;
  terms.resize(k);
  for (int j = 0; j < k; ++j) {
    terms[j].xi = j == 0 ? 0.0 : 2.0 * p.y[j - 1] * kT / kHbar;
    terms[j].weight = j == 0 ? 0.5 * kT : kT * p.eta[j - 1];
  }
  // Model shares: the mirror spectrum at the same frequencies and weights.
  std::vector<Spectral> model(k);
  Spectral model_total;
  for (int j = 0; j < k; ++j) {
    model[j] = mirror_model(terms[j].xi / xi_scale) * terms[j].weight;
    model_total += model[j];
  }
  // Split budget (frequency_rule.h) or every term at rel_tol, whichever is cheaper by the cost
  // model of multipole geometries: work ~ l_max^2 ~ ln(20/eps)^2 per term (sphere_plate.cc's
  // l_max ~ ln(B/eps), B ~ 20). When the sum is spread over many comparable terms, halving
  // their accuracy costs more than the few small ones save.
  std::vector<double> eps(k);
  double split_cost = 0.0;
  for (int j = 0; j < k; ++j) {
    eps[j] = term_tolerance(share(model[j], model_total), k, opts.rel_tol);
    split_cost += std::pow(std::log(20.0 / eps[j]), 2);
  }
  plan.split = split_cost < k * std::pow(std::log(20.0 / opts.rel_tol), 2);
  for (int j = 0; j < k; ++j) terms[j].rel_tol = plan.split ? eps[j] : opts.rel_tol;
  return plan;
}

FrequencySum pade_spectrum(const TolerantSpectralFunction& f, double xi_scale,
                           const ThermalRuleChoice& choice, const FrequencyRuleOptions& opts) {
  const int k = choice.pade_poles + 1;
  FrequencySum out;
  out.rule = FrequencyRuleKind::kPadeSpectrum;
  out.pade_poles = choice.pade_poles;
  PadePlan plan = pade_plan(xi_scale, choice, opts);
  std::vector<FrequencyTerm>& terms = plan.terms;
  const bool split = plan.split;
  CompensatedSum total;
  for (int j = 0; j < k; ++j) {
    FrequencyTerm& term = terms[j];
    term.s = f(term.xi, term.rel_tol);
    if (split && all_finite(term.s) && term.rel_tol > 0.5 * opts.rel_tol) {
      // The computed share, against the sum so far (terms ascend in xi and fall off, so this
      // overstates the share): recompute if the term needed more accuracy than it got.
      Spectral so_far = total.value();
      so_far += term.s * term.weight;
      const double needed = term_tolerance(share(term.s * term.weight, so_far), k, opts.rel_tol);
      if (needed < term.rel_tol) {
        term.rel_tol = needed;
        term.s = f(term.xi, term.rel_tol);
      }
    }
    total.add(term.s * term.weight);
    out.terms.push_back(term);
    if (!all_finite(term.s)) break;
  }
  out.total = total.value();
  out.abs_error = choice.pade_model_error * std::abs(out.total.value);
  const bool model_ok = choice.pade_model_error <= kPadeModelFraction * opts.rel_tol;
  out.converged = all_finite(out.total) && model_ok;
  if (!all_finite(out.total))
    out.message = fmt::format("Pade spectrum sum produced a non-finite value at xi = {} rad/s",
                              out.terms.back().xi);
  else if (!model_ok)
    out.message = fmt::format(
        "Pade spectrum decomposition with {} poles (the most supported) misses rel_tol = {} on "
        "the model spectrum (error {:.3g}); use frequency_rule = \"matsubara\"",
        choice.pade_poles, opts.rel_tol, choice.pade_model_error);
  return out;
}

}  // namespace

ThermalRuleChoice choose_thermal_rule(double xi_scale, const FrequencyRuleOptions& opts) {
  if (const std::string err = opts.validate(); !err.empty())
    throw std::invalid_argument("frequency rule: " + err);
  ThermalRuleChoice c;
  if (opts.temperature_K == 0.0) {
    c.rule = FrequencyRuleKind::kZeroTemperatureQuadrature;
    return c;
  }
  if (!std::isfinite(xi_scale) || !(xi_scale > 0.0))
    throw std::invalid_argument(
        fmt::format("frequency rule: xi_scale = {} rad/s must be finite and > 0", xi_scale));
  const double tau = 2.0 * kBoltzmann * opts.temperature_K / (kHbar * xi_scale);
  const auto model = [&](double xi) { return mirror_model(xi / xi_scale); };
  // Matsubara terms the model needs: by the Matsubara rule itself, unless its decay law
  // (terms until a e^-a ~ rel_tol pi tau at a = xi/xi_scale, spacing pi tau) says there are more
  // than kModelRunTerms; then that estimate (never run: at 1e-9 K it would be ~1e13 terms).
  constexpr double kModelRunTerms = 20000.0;
  const double decay_terms =
      (-std::log(opts.rel_tol) - std::log(kPi * tau) + 3.0) / (kPi * tau) + 1.0;
  if (decay_terms > kModelRunTerms) {
    c.matsubara_estimated = true;
    c.matsubara_terms = static_cast<int>(
        std::min(decay_terms, static_cast<double>(std::numeric_limits<int>::max())));
  } else {
    const FrequencySum m = matsubara(model, opts);
    c.matsubara_terms =
        m.converged ? static_cast<int>(m.terms.size()) : std::numeric_limits<int>::max();
  }
  c.rule = FrequencyRuleKind::kMatsubara;
  if (opts.thermal_rule == ThermalRule::kMatsubara) return c;
  // Matsubara terms with an integral tail, when the plain sum is long.
  int tail = std::numeric_limits<int>::max();
  const bool forced_tail = opts.thermal_rule == ThermalRule::kIntegralTail;
  if (forced_tail ||
      (opts.thermal_rule == ThermalRule::kAuto && c.matsubara_terms > kTailRuleFromTerms)) {
    const FrequencySum t = low_temperature(model, xi_scale, opts);
    c.tail_rule_terms = static_cast<int>(t.terms.size());
    c.tail_rule_converged = t.converged;
    if (t.converged) tail = c.tail_rule_terms;
  }
  if (forced_tail) {
    c.rule = FrequencyRuleKind::kMatsubaraIntegralTail;
    return c;
  }
  // Fewest poles: doubling to a bracket, then bisection (the error falls monotonically in n on
  // the model, checked in tests/frequency). Not beyond the integral-tail rule's count (auto).
  const double target = kPadeModelFraction * opts.rel_tol;
  int hi = 1;
  double hi_err = pade_model_error(hi, tau);
  while (!(hi_err <= target) && 4 * hi <= kMaxPadePoles && hi < tail) {
    hi *= 2;
    hi_err = pade_model_error(hi, tau);
  }
  if (hi_err <= target) {
    int lo = hi / 2;  // fails (or 0)
    while (hi - lo > 1) {
      const int mid = (lo + hi) / 2;
      const double e = pade_model_error(mid, tau);
      if (e <= target)
        hi = mid, hi_err = e;
      else
        lo = mid;
    }
  }
  const bool pade_ok = hi_err <= target;
  const int pade_terms = pade_ok ? hi + 1 : std::numeric_limits<int>::max();
  if (opts.thermal_rule == ThermalRule::kPade ||
      (pade_ok && pade_terms < c.matsubara_terms && pade_terms <= tail)) {
    c.rule = FrequencyRuleKind::kPadeSpectrum;
    c.pade_poles = hi;
    c.pade_model_error = hi_err;
  } else if (tail < c.matsubara_terms) {
    c.rule = FrequencyRuleKind::kMatsubaraIntegralTail;
  }
  return c;
}

std::vector<std::pair<double, double>> planned_frequency_terms(double xi_scale,
                                                               const FrequencyRuleOptions& opts) {
  std::vector<std::pair<double, double>> out;
  if (opts.temperature_K == 0.0) return out;
  const ThermalRuleChoice c = choose_thermal_rule(xi_scale, opts);
  if (c.rule != FrequencyRuleKind::kPadeSpectrum) return out;
  for (const FrequencyTerm& t : pade_plan(xi_scale, c, opts).terms)
    out.emplace_back(t.xi, t.rel_tol);
  return out;
}

std::string frequency_rule_problem(double xi_scale, const FrequencyRuleOptions& opts) {
  if (opts.temperature_K == 0.0) return {};
  const ThermalRuleChoice c = choose_thermal_rule(xi_scale, opts);
  switch (c.rule) {
    case FrequencyRuleKind::kMatsubara:
      if (c.matsubara_terms > opts.max_matsubara_terms)
        return fmt::format(
            "the Matsubara sum needs about {:.2g} terms here (perfect-mirror model), more than "
            "the cap of {}; it would stop unconverged (exit 3){}",
            static_cast<double>(c.matsubara_terms), opts.max_matsubara_terms,
            opts.thermal_rule == ThermalRule::kMatsubara
                ? "; frequency_rule = \"auto\" would use a shorter rule"
                : "");
      return {};
    case FrequencyRuleKind::kPadeSpectrum:
      if (!(c.pade_model_error <= kPadeModelFraction * opts.rel_tol))
        return fmt::format(
            "the Pade spectrum decomposition with {} poles (the most supported) misses rel_tol on "
            "the perfect-mirror model (error {:.3g}); it would stop unconverged (exit 3){}",
            c.pade_poles, c.pade_model_error,
            opts.thermal_rule == ThermalRule::kPade
                ? "; frequency_rule = \"auto\" would use another rule"
                : "");
      return {};
    case FrequencyRuleKind::kMatsubaraIntegralTail:
      if (!c.tail_rule_converged)
        return fmt::format(
            "the Matsubara terms with an integral tail miss rel_tol on the perfect-mirror model "
            "(more than {} explicit terms needed); it would stop unconverged (exit 3)",
            kLowTemperatureMaxTerms);
      return {};
    case FrequencyRuleKind::kZeroTemperatureQuadrature:
      return {};
  }
  return {};
}

FrequencySum sum_over_frequencies(const TolerantSpectralFunction& s, double xi_scale,
                                  const FrequencyRuleOptions& opts) {
  if (const std::string err = opts.validate(); !err.empty())
    throw std::invalid_argument("frequency rule: " + err);
  const auto at_tol = [&](double xi) { return s(xi, opts.rel_tol); };
  FrequencySum out;
  if (opts.temperature_K > 0.0) {
    const ThermalRuleChoice c = choose_thermal_rule(xi_scale, opts);
    if (c.rule == FrequencyRuleKind::kPadeSpectrum) return pade_spectrum(s, xi_scale, c, opts);
    if (c.rule == FrequencyRuleKind::kMatsubaraIntegralTail)
      out = low_temperature(at_tol, xi_scale, opts);
    else
      out = matsubara(at_tol, opts);
  } else {
    if (!std::isfinite(xi_scale) || !(xi_scale > 0.0))
      throw std::invalid_argument(
          fmt::format("frequency rule: xi_scale = {} rad/s must be finite and > 0", xi_scale));
    out = zero_temperature(at_tol, xi_scale, opts);
  }
  for (auto& t : out.terms) t.rel_tol = opts.rel_tol;
  return out;
}

FrequencySum zero_temperature_exp_sinh_rule(const SpectralFunction& s, double xi_scale,
                                            const FrequencyRuleOptions& opts) {
  if (const std::string err = opts.validate(); !err.empty())
    throw std::invalid_argument("frequency rule: " + err);
  if (opts.temperature_K != 0.0)
    throw std::invalid_argument("frequency rule: the exp-sinh rule is for T = 0 only");
  FrequencySum out = zero_temperature_exp_sinh(s, xi_scale, opts);
  for (auto& t : out.terms) t.rel_tol = opts.rel_tol;
  return out;
}

FrequencySum sum_over_frequencies(const SpectralFunction& s, double xi_scale,
                                  const FrequencyRuleOptions& opts) {
  return sum_over_frequencies(TolerantSpectralFunction([&](double xi, double) { return s(xi); }),
                              xi_scale, opts);
}

}  // namespace roundtrip
