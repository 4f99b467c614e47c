// Grating-plate round trip per unit area (formulas, conventions and sources in grating_plate.h).
#include "solver/geometries/grating_plate.h"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <exception>
#include <map>
#include <memory>
#include <stdexcept>
#include <utility>
#include <vector>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/plate_plate.h"
#include "solver/guards.h"
#include "solver/materials/models.h"
#include "solver/parallel_for.h"
#include "solver/planar/layered.h"

namespace roundtrip {
namespace {

using Eigen::MatrixXd;
using Eigen::VectorXd;
using Triple = std::array<double, 3>;

constexpr int kMaxXLevel = 5;  // n_x = 4 * 3^5 = 972 midpoints on [0, G/2]
constexpr int kMaxTLevel = 7;  // h = 0.5 / 2^7
constexpr int kX0 = 4;
constexpr double kH0 = 0.5;

thread_local int g_last_nodes = 0;

// One material for the PFA's columns: the same object, or two perfect conductors (a film of a
// perfect conductor on a perfect conductor is the perfect conductor).
bool same_material(const MaterialPtr& a, const MaterialPtr& b) {
  return a == b || (a->is_perfect_conductor() && b->is_perfect_conductor());
}

long pow3(int a) {
  long p = 1;
  for (int i = 0; i < a; ++i) p *= 3;
  return p;
}

// The orders that reach the plate: M = R_g D R_p D has the factor D = e^{-kappa L} on the right,
// so an order whose round-trip decay e^{-2 kappa_n L} is below e^{-kDroppedDecay} of the least
// decaying order's gives M a column of zeros to that precision, and 1 - M is block triangular:
// ln det(1 - M) and its L-derivatives (which keep the right factor D) are those of the block of
// the other orders (derived). kappa_n is convex in n, so that block is one run lo..hi of order
// indices. e^-60 = 9e-27 leaves 1e10 to the double rounding for any reflection elements up to
// 1e5 (the tangential-E basis' R_xy ~ k_y k_n/gamma^2; R_D, R_N themselves are contractions).
constexpr double kDroppedDecay = 60.0;

std::pair<int, int> reaching_orders(const VectorXd& kap, int m, double gap) {
  double kmin = kap[0];
  for (int i = 1; i < m; ++i) kmin = std::min(kmin, kap[i]);
  int lo = 0, hi = m - 1;
  while (lo < hi && 2.0 * (kap[lo] - kmin) * gap > kDroppedDecay) ++lo;
  while (hi > lo && 2.0 * (kap[hi] - kmin) * gap > kDroppedDecay) --hi;
  return {lo, hi};
}

// The block of order indices lo..hi of each component of a basis of orders 0..m-1 per component.
MatrixXd order_block(const MatrixXd& full, int m, int lo, int hi) {
  if (lo == 0 && hi == m - 1) return full;
  const int na = hi - lo + 1, nb = static_cast<int>(full.rows()) / m;
  MatrixXd r(nb * na, nb * na);
  for (int a = 0; a < nb; ++a)
    for (int b = 0; b < nb; ++b)
      r.block(a * na, b * na, na, na) = full.block(a * m + lo, b * m + lo, na, na);
  return r;
}

VectorXd order_block(const VectorXd& full, int m, int lo, int hi) {
  if (lo == 0 && hi == m - 1) return full;
  const int na = hi - lo + 1, nb = static_cast<int>(full.size()) / m;
  VectorXd r(nb * na);
  for (int a = 0; a < nb; ++a) r.segment(a * na, na) = full.segment(a * m + lo, na);
  return r;
}

// ln det(1 - M), d/dL, d2/dL2 at one Bloch vector (header).
Triple round_trip(const MatrixXd& rg, const MatrixXd& rp, const VectorXd& kap, double gap, int n) {
  const VectorXd d = (-kap * gap).array().exp();
  const MatrixXd bm = rp * d.asDiagonal();  // R_p D
  const MatrixXd a = rg * d.asDiagonal();   // R_g D
  const MatrixXd m = a * bm;
  const int dim = static_cast<int>(m.rows());
  const MatrixXd one_m = MatrixXd::Identity(dim, dim) - m;
  const auto lu = one_m.partialPivLu();
  const double det = lu.determinant();
  if (!(det > 0.0) || !std::isfinite(det))
    throw std::runtime_error(
        fmt::format("grating-plate: det(1 - M) = {} is not positive at a Bloch vector", det));
  // ln det(1 - M) = -sum_k Tr(M^k)/k (standard) when M is small: ln(det) would keep only the
  // rounding of 1 - |M| (high frequencies, large gaps).
  Triple out{0.0, 0.0, 0.0};
  const double norm = m.norm();
  if (norm < 0.1) {
    MatrixXd pk = m;
    for (int k = 1; k < 200; ++k) {
      const double term = pk.trace() / k;
      out[0] -= term;
      if (std::pow(norm, k + 1) / (k + 1) <= 1e-17 * std::abs(out[0])) break;
      pk = pk * m;
    }
  } else {
    out[0] = std::log(det);
  }
  if (n < 2) return out;
  const MatrixXd rgk = rg * kap.asDiagonal();  // R_g K
  const MatrixXd m1 = -(rgk * d.asDiagonal() * bm + m * kap.asDiagonal());
  const MatrixXd x1 = lu.solve(m1);
  out[1] = -x1.trace();
  if (n < 3) return out;
  const VectorXd k2 = kap.array().square();
  const MatrixXd m2 = rg * k2.asDiagonal() * d.asDiagonal() * bm +
                      2.0 * rgk * d.asDiagonal() * rp * kap.asDiagonal() * d.asDiagonal() +
                      m * k2.asDiagonal();
  out[2] = -lu.solve(m2).trace() - (x1 * x1).trace();
  return out;
}

}  // namespace

GratingPlate::GratingPlate(LamellarGrating grating, PlanarPtr plate, MaterialPtr medium,
                           GratingPlateOptions opts)
    : g_(std::move(grating)),
      plate_(std::move(plate)),
      medium_(medium ? std::move(medium) : make_vacuum()),
      opts_(opts) {
  if (!plate_) throw std::invalid_argument("grating-plate: the plate must be given");
  if (!(g_.period > 0.0) || !std::isfinite(g_.period))
    throw std::invalid_argument(fmt::format("grating-plate: period = {} m must be > 0", g_.period));
  if (!(g_.filling >= 0.0 && g_.filling <= 1.0))
    throw std::invalid_argument(
        fmt::format("grating-plate: filling = {} must lie in [0, 1]", g_.filling));
  if (!(g_.depth >= 0.0) || !std::isfinite(g_.depth))
    throw std::invalid_argument(fmt::format("grating-plate: depth = {} m must be >= 0", g_.depth));
  if (!g_.ridge || !g_.substrate)
    throw std::invalid_argument("grating-plate: ridge and substrate materials must be given");
  if (medium_->static_limit().is_conductor())
    throw std::invalid_argument("grating-plate: the gap medium must be a dielectric");
  if (opts_.orders < 0 || opts_.orders > 500)
    throw std::invalid_argument(
        fmt::format("grating-plate: orders = {} must lie in 0..500", opts_.orders));
  if (!(opts_.sphere_radius >= 0.0) || !std::isfinite(opts_.sphere_radius))
    throw std::invalid_argument(
        fmt::format("grating-plate: sphere radius = {} m must be >= 0", opts_.sphere_radius));
  if (!(opts_.bloch_rel_tol >= 1e-12 && opts_.bloch_rel_tol <= 1e-2))
    throw std::invalid_argument(fmt::format(
        "grating-plate: bloch_rel_tol = {} must lie in [1e-12, 1e-2]", opts_.bloch_rel_tol));
}

int GratingPlate::model_orders(double gap) const {
  // The orders |n| G > ln(1e6)/(2L) are damped by e^{-2 kappa_n L} < 1e-6 on the round trip; at
  // least 8 for the grating's own (algebraic, Li 1996) convergence; at most 100.
  const double G = 2.0 * kPi / g_.period;
  const double n = std::ceil(std::log(1e6) / (2.0 * G * gap));
  return static_cast<int>(std::clamp(n, 8.0, 100.0));
}

int GratingPlate::orders_at(double gap) const { return study(gap).orders; }

GratingStudy GratingPlate::study(double gap) const {
  if (opts_.orders > 0 && (g_.profile == GratingProfile::kLamellar || g_.slices > 0)) {
    GratingStudy st;
    st.orders = opts_.orders;
    st.slices = g_.profile == GratingProfile::kLamellar ? 0 : g_.slices;
    return st;
  }
  std::lock_guard<std::mutex> lock(mu_);
  const auto it = studies_.find(gap);
  if (it != studies_.end()) return it->second;
  GratingStudy st = run_study(gap);
  studies_.emplace(gap, st);
  return st;
}

namespace {

// Observed algebraic rate p from three levels n1 < n2 < n3 with s(n) = s_inf + a n^-p:
// (s2 - s1)/(s3 - s2) = (n1^-p - n2^-p)/(n2^-p - n3^-p), solved by bisection on [0.1, 8]
// (the right side grows monotonically with p for n1 < n2 < n3); 0 when the differences do not
// shrink with the same sign or p falls outside.
double observed_rate(double n1, double n2, double n3, double d_prev, double d) {
  if (!(d_prev * d > 0.0) || !(std::abs(d) < std::abs(d_prev))) return 0.0;
  const double target = d_prev / d;
  const auto ratio = [&](double p) {
    return (std::pow(n1, -p) - std::pow(n2, -p)) / (std::pow(n2, -p) - std::pow(n3, -p));
  };
  double lo = 0.1, hi = 8.0;
  if (!(ratio(lo) < target && ratio(hi) > target)) return 0.0;
  for (int i = 0; i < 100; ++i) {
    const double mid = 0.5 * (lo + hi);
    (ratio(mid) < target ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

// The order sequence of the study: N_0 and then factors ~sqrt(2) (4, 6, 8, 11, 16, 23, 32, 45,
// 64, ...), so that three successive levels cost little more than the last.
int next_orders(int n) {
  return std::max(n + 1, static_cast<int>(std::lround(n * std::sqrt(2.0))));
}

}  // namespace

GratingStudy GratingPlate::run_study(double gap) const {
  GratingStudy st;
  const double xi = frequency_scale(gap);
  const double tau = opts_.rel_tol;
  // Bloch nodes of the study: tight, so that its noise (<= tol |s|) is far below the
  // differences it measures; each step evaluates its pair of levels on the same nodes.
  const double tol = std::clamp(0.01 * tau, 1e-10, 1e-4);
  const auto pair_at = [&](Level lo, Level hi) {
    const auto v = levels_at(xi, gap, DerivativeOrder::kEnergy, tol, {lo, hi}, {0.0, 1.0});
    return std::pair{v[1].value, v[2].value};
  };
  // Slices first, at N = 4.
  if (g_.profile != GratingProfile::kLamellar) {
    if (opts_.orders > 0 && g_.slices > 0) {
      st.slices = g_.slices;
    } else {
      const int n_s = 4;
      double d_prev = 0.0;
      for (int S = 4;; S *= 2) {
        const auto [lo, hi] = pair_at({n_s, S / 2}, {n_s, S});
        const double d = hi - lo, p = observed_rate(S / 4, S / 2, S, d_prev, d);
        st.slices = S;
        if (p > 0.0) {
          st.slice_rate = p;
          st.slice_error = 1.25 * std::abs(d) / (std::pow(2.0, p) - 1.0) / std::abs(hi);
          if (st.slice_error <= 0.2 * tau) break;
        } else {
          st.slice_error = std::abs(d / hi);  // no rate yet: the last change
        }
        if (2 * S > opts_.max_slices) break;
        d_prev = d;
      }
    }
  }
  const int S = st.slices;
  if (opts_.orders > 0) {
    st.orders = opts_.orders;
    st.verified = false;
    return st;
  }
  // Orders: N_0 = max(4, a quarter of the damping model), then factors ~sqrt(2).
  int n0 = 4;
  while (4 * n0 < model_orders(gap) && n0 < 32) n0 *= 2;
  double d_prev = 0.0, p_prev = 0.0, r_prev = 0.0;
  int n_prev = 0, n_prev2 = 0;
  bool have_r = false;
  for (int N = n0;; N = next_orders(N)) {
    if (N == n0) {
      const double s = levels_at(xi, gap, DerivativeOrder::kEnergy, tol, {{N, S}}, {1.0})[0].value;
      st.levels.emplace_back(N, s);
      st.orders = N;
      st.error = 1.0;
      n_prev = N;
      continue;
    }
    const auto [lo, hi] = pair_at({n_prev, S}, {N, S});
    const double s = hi;
    st.levels.emplace_back(N, s);
    st.orders = N;
    const double d = hi - lo;
    const double p = n_prev2 > 0 ? observed_rate(n_prev2, n_prev, N, d_prev, d) : 0.0;
    if (p > 0.0) {
      // Richardson with the level ratio r = N/N_prev: R = s + d/(r^p - 1).
      const double c = 1.0 / (std::pow(static_cast<double>(N) / n_prev, p) - 1.0);
      const double plain = 1.25 * std::abs(d) * c / std::abs(s);
      const double r = s + d * c;
      st.rate = p;
      if (plain <= 0.3 * tau) {
        st.error = plain;
        st.orders_low = 0;
        st.verified = st.slice_error <= 0.2 * tau;
        return st;
      }
      if (have_r && std::abs(p - p_prev) <= 0.5 &&
          std::abs(r - r_prev) <= 0.3 * tau * std::abs(r)) {
        st.error = std::abs(r - r_prev) / std::abs(r);
        st.orders_low = n_prev;
        st.verified = st.slice_error <= 0.2 * tau;
        return st;
      }
      st.error = plain;
      r_prev = r;
      have_r = true;
      p_prev = p;
    } else {
      st.error = std::abs(d / s);
      have_r = false;
    }
    if (next_orders(N) > opts_.max_orders) break;
    d_prev = d;
    n_prev2 = n_prev;
    n_prev = N;
  }
  st.orders_low = 0;
  st.verified = false;
  return st;
}

std::string GratingPlate::unverified_truncation(double gap) const {
  const GratingStudy st = study(gap);
  if (st.verified) return {};
  if (opts_.orders > 0)
    return fmt::format(
        "diffraction orders -{0}..{0} as set (numerics.orders), not a convergence test: the "
        "truncation error is not verified against rel_tol (lamellar profiles converge like "
        "N^-1.7; leave orders unset for the automatic test)",
        st.orders);
  return fmt::format(
      "the convergence test in diffraction orders stopped at N = {} (numerics limit {}) with an "
      "estimated relative error {:.2g} (observed rate N^-{:.2g}){}, above its share of rel_tol",
      st.orders, opts_.max_orders, st.error, st.rate,
      st.slices > 0
          ? fmt::format("; staircase slices {} with error {:.2g}", st.slices, st.slice_error)
          : std::string());
}

int GratingPlate::last_node_count() { return g_last_nodes; }

Spectral GratingPlate::at_frequency(double xi, double gap, DerivativeOrder order) const {
  return compute(xi, gap, order, opts_.bloch_rel_tol);
}

Spectral GratingPlate::at_frequency_within(double xi, double gap, DerivativeOrder order,
                                           double rel_tol) const {
  return compute(xi, gap, order, std::max(opts_.bloch_rel_tol, 0.3 * rel_tol));
}

Spectral GratingPlate::compute(double xi, double gap, DerivativeOrder order, double tol) const {
  const GratingStudy st = study(gap);
  if (st.orders_low > 0) {
    // Richardson in N with the observed rate (GratingStudy).
    const double c =
        1.0 / (std::pow(static_cast<double>(st.orders) / st.orders_low, st.rate) - 1.0);
    return levels_at(xi, gap, order, tol, {{st.orders_low, st.slices}, {st.orders, st.slices}},
                     {-c, 1.0 + c})[0];
  }
  return levels_at(xi, gap, order, tol, {{st.orders, st.slices}}, {1.0})[0];
}

std::vector<Spectral> GratingPlate::levels_at(double xi, double gap, DerivativeOrder order,
                                              double tol, const std::vector<Level>& levels,
                                              const std::vector<double>& weights) const {
  if (!(gap > 0.0) || !std::isfinite(gap))
    throw std::invalid_argument(fmt::format("grating-plate: gap = {} m must be > 0", gap));
  if (!(xi >= 0.0) || !std::isfinite(xi))
    throw std::invalid_argument(fmt::format("grating-plate: xi = {} rad/s must be >= 0", xi));
  if (levels.empty() || levels.size() != weights.size())
    throw std::invalid_argument("grating-plate: levels and weights must match");
  const int n_comp = 1 + static_cast<int>(order);
  const int nl = static_cast<int>(levels.size());
  std::vector<GratingAtFrequency> gfs;
  for (const Level& lv : levels) {
    LamellarGrating g = g_;
    g.slices = lv.slices;
    gfs.emplace_back(g, xi, *medium_, lv.orders);
  }
  const auto pat = plate_->at(xi, *medium_);
  const double eps_m = xi > 0.0 ? medium_->epsilon(xi) : medium_->static_limit().static_eps;
  const double G = 2.0 * kPi / g_.period;
  const double half_bz = 0.5 * G;
  // k_y = sinh(t)/(2L) up to y = 2 L k_y where e^{-y} < 1e-3 tol (every order decays at least
  // as fast as e^{-2 k_y L}).
  const double y_max = std::log(1e3 / tol) + 10.0;
  const double q2 = eps_m * (xi / kSpeedOfLight) * (xi / kSpeedOfLight);
  const long x_fine = pow3(kMaxXLevel);
  const long t_fine = 1L << kMaxTLevel;

  // Node values: the weighted sum first, then each level.
  using Values = std::vector<Triple>;
  std::map<std::pair<long, long>, Values> memo;
  const double nfine = kX0 * static_cast<double>(x_fine);
  // Layer modes per k_x line and level (GratingAtFrequency::Line: the conical decoupling), kept
  // only for the lines of the batch being evaluated.
  using Lines = std::vector<GratingAtFrequency::Line>;
  auto kx_of_p = [&](long p) {
    const double u = static_cast<double>(p) / (2.0 * nfine);
    return half_bz * (u - std::sin(2.0 * kPi * u) / (2.0 * kPi));
  };
  auto node = [&](long p, long q, const Lines& lines) {
    // k_x = (G/2) w(u), w(u) = u - sin(2 pi u)/(2 pi), u = p/(2 n_fine) (Sidi's sin^2
    // transformation, Sidi, Numer. Math. 9 (1993), from memory): w' vanishes at both ends, so the
    // kink of the n = 0 order at k = 0 (xi = 0: |k|) is pushed to high order in u.
    const double u = static_cast<double>(p) / (2.0 * nfine);
    const double kx = half_bz * (u - std::sin(2.0 * kPi * u) / (2.0 * kPi));
    const double wu = half_bz * (1.0 - std::cos(2.0 * kPi * u));
    // k_y = a sinh(t), a = min(1/(2L), sqrt(k_x^2 + eps_m q0^2)): the n = 0 branch points
    // k_y = +-i sqrt(k_x^2 + eps_m q0^2) stay a fixed distance from the real t axis.
    const double a = std::min(0.5 / gap, std::sqrt(kx * kx + q2));
    const double t = q * (kH0 / t_fine);
    const double ky = a * std::sinh(t);
    const double jac = a * std::cosh(t) * wu;
    Values out(nl + 1, Triple{0.0, 0.0, 0.0});
    for (int l = 0; l < nl; ++l) {
      const int N = levels[l].orders;
      const bool pair = gfs[l].static_pair();
      const VectorXd kap_all = orders_decay(xi, eps_m, g_.period, N, kx, ky, pair);
      const auto [lo, hi] = reaching_orders(kap_all, 2 * N + 1, gap);
      const MatrixXd rg = gfs[l].reflect(lines[l], ky, lo, hi);
      const MatrixXd rp = order_block(
          planar_reflection_in_orders(*pat, xi, g_.period, N, kx, ky, pair), 2 * N + 1, lo, hi);
      const VectorXd kap = order_block(kap_all, 2 * N + 1, lo, hi);
      Triple v = round_trip(rg, rp, kap, gap, n_comp);
      for (int c = 0; c < 3; ++c) {
        v[c] *= jac;
        out[l + 1][c] = v[c];
        out[0][c] += weights[l] * v[c];
      }
    }
    return out;
  };
  auto keys_of = [&](int a, int b) {
    std::vector<std::pair<long, long>> keys;
    const long nx = kX0 * pow3(a);
    const long xs = pow3(kMaxXLevel - a);
    const long ts = 1L << (kMaxTLevel - b);
    const double h = kH0 / (1 << b);
    for (long i = 0; i < nx; ++i) {
      const long p = (2 * i + 1) * xs;
      const double u = static_cast<double>(p) / (2.0 * nfine);
      const double kx = half_bz * (u - std::sin(2.0 * kPi * u) / (2.0 * kPi));
      const double a = std::min(0.5 / gap, std::sqrt(kx * kx + q2));
      const double t_max = std::asinh(y_max / (2.0 * gap * a));
      const long J = static_cast<long>(std::ceil(t_max / h));
      for (long j = 0; j <= J; ++j) keys.emplace_back(p, j * ts);
    }
    return keys;
  };
  auto ensure = [&](const std::vector<std::pair<long, long>>& keys) {
    std::vector<std::pair<long, long>> todo;
    for (const auto& k : keys)
      if (!memo.count(k)) todo.push_back(k);
    std::sort(todo.begin(), todo.end());
    std::vector<Values> vals(todo.size());
    // Batches of whole k_x lines (up to kLinesPerBatch): first the lines' layer modes (one task
    // per line and level), then their nodes; every node's value is independent of the batching.
    constexpr std::size_t kLinesPerBatch = 8;
    std::size_t b0 = 0;
    while (b0 < todo.size()) {
      throw_if_cancelled();
      std::vector<long> ps;
      std::size_t b1 = b0;
      while (b1 < todo.size()) {
        if (ps.empty() || ps.back() != todo[b1].first) {
          if (ps.size() == kLinesPerBatch) break;
          ps.push_back(todo[b1].first);
        }
        ++b1;
      }
      std::vector<Lines> lines(ps.size(), Lines(nl));
      const long n_line_tasks = static_cast<long>(ps.size()) * nl;
      parallel_for(0, static_cast<long>(n_line_tasks),
                   [&](long t) { lines[t / nl][t % nl] = gfs[t % nl].line(kx_of_p(ps[t / nl])); });
      parallel_for(static_cast<long>(b0), static_cast<long>(b1), [&](long i) {
        const std::size_t li = std::lower_bound(ps.begin(), ps.end(), todo[i].first) - ps.begin();
        vals[i] = node(todo[i].first, todo[i].second, lines[li]);
      });
      b0 = b1;
    }
    for (std::size_t i = 0; i < todo.size(); ++i) memo[todo[i]] = vals[i];
  };
  // S(a, b) per component of each value set and \int |f| on the same grid; 4 = both halves in
  // k_x and k_y; 1/(2 pi)^2.
  auto sum = [&](int a, int b, Values& absum) {
    const auto keys = keys_of(a, b);
    ensure(keys);
    const long nx = kX0 * pow3(a);
    const double wx = 1.0 / nx;  // du; the k_x Jacobian is in the node
    const double h = kH0 / (1 << b);
    const double pref = 4.0 / (4.0 * kPi * kPi);
    Values s(nl + 1, Triple{0.0, 0.0, 0.0}), ab(nl + 1, Triple{0.0, 0.0, 0.0});
    for (const auto& k : keys) {
      const double w = wx * h * (k.second == 0 ? 0.5 : 1.0) * pref;
      const Values& v = memo.at(k);
      for (int l = 0; l <= nl; ++l)
        for (int c = 0; c < 3; ++c) {
          s[l][c] += w * v[l][c];
          ab[l][c] += w * std::abs(v[l][c]);
        }
    }
    absum = ab;
    return s;
  };
  int a = 0, b = 0;
  for (;;) {
    Values ab0, abx, aby;
    const Values s0 = sum(a, b, ab0), sx = sum(a + 1, b, abx), sy = sum(a, b + 1, aby);
    // Absolute floor: 1e-10 tol / L^2 (per L^c for derivative c) is 1e-10 tol of the perfect-
    // mirror scale 1/(8 pi L^2) x 8 pi; a term below it (far beyond the frequency scale, where s
    // falls like e^{-2 xi L/c} and the FMM's rounding dominates) is negligible in any sum whose
    // reflection coefficients are above ~1e-4. The test is on the weighted sum (index 0).
    bool ok_x = true, ok_y = true;
    for (int c = 0; c < n_comp; ++c) {
      const double floor = 1e-10 * tol / (gap * gap * std::pow(gap, c));
      if (!(std::abs(sx[0][c] - s0[0][c]) <= std::max(tol * abx[0][c], floor))) ok_x = false;
      if (!(std::abs(sy[0][c] - s0[0][c]) <= std::max(tol * aby[0][c], floor))) ok_y = false;
    }
    if (ok_x && ok_y) {
      g_last_nodes = static_cast<int>(memo.size());
      // The two refinements' corrections are independent (product rule): add both.
      std::vector<Spectral> out;
      for (int l = 0; l <= nl; ++l)
        out.push_back({sx[l][0] + sy[l][0] - s0[l][0], sx[l][1] + sy[l][1] - s0[l][1],
                       sx[l][2] + sy[l][2] - s0[l][2]});
      return out;
    }
    if (!ok_x) ++a;
    if (!ok_y) ++b;
    if (a + 1 > kMaxXLevel || b + 1 > kMaxTLevel)
      throw std::runtime_error(fmt::format(
          "grating-plate: the Bloch integral did not reach {:g} at xi = {:g} rad/s, L = {:g} m "
          "({} nodes)",
          tol, xi, gap, memo.size()));
  }
}

double GratingPlate::frequency_scale(double gap) const {
  const StaticLimit m = medium_->static_limit();
  const double eps0 = m.static_eps >= 1.0 ? m.static_eps : 1.0;
  return kSpeedOfLight / (2.0 * gap * std::sqrt(eps0));
}

std::string GratingPlate::describe() const {
  return fmt::format("grating-plate: {} facing {} across {}", g_.describe(), plate_->describe(),
                     medium_->name());
}

std::optional<PfaValues> GratingPlate::pfa(double gap, const FrequencyRuleOptions& opts) const {
  // Grating PFA (Bao et al., PRL 105, 250402 (2010)), per area: E = (1/Lambda) \int dx
  // E_pp(L + H - h(x)), each column a film of the ridge material of thickness h(x) on the
  // substrate (lamellar: f E_pp(L; ridge film of depth h on the substrate) + (1 - f)
  // E_pp(L + h; substrate)). Non-lamellar profiles: midpoint rule in x over half a period
  // (even profile) with kPfaColumns columns; the PFA is a comparison value, not a result.
  constexpr int kPfaColumns = 64;
  const double H = g_.height();
  std::vector<std::pair<double, double>> cols;  // (weight, column height)
  if (g_.profile == GratingProfile::kLamellar) {
    cols = {{g_.filling, H}, {1.0 - g_.filling, 0.0}};
  } else {
    for (int i = 0; i < kPfaColumns; ++i)
      cols.push_back({1.0 / kPfaColumns, g_.height_at((i + 0.5) / kPfaColumns * 0.5 * g_.period)});
  }
  std::vector<std::pair<double, std::unique_ptr<PlatePlate>>> pp;
  for (const auto& [w, hx] : cols) {
    if (w == 0.0) continue;
    PlanarPtr body = hx > 0.0 && !same_material(g_.ridge, g_.substrate)
                         ? make_layered({{g_.ridge, hx}}, g_.substrate)
                         : make_half_space(hx > 0.0 ? g_.ridge : g_.substrate);
    pp.emplace_back(w, std::make_unique<PlatePlate>(body, plate_, medium_));
  }
  std::vector<double> dz;
  for (const auto& [w, hx] : cols)
    if (w != 0.0) dz.push_back(H - hx);
  const FrequencySum s = sum_over_frequencies(
      [&](double xi) {
        Spectral v;
        for (std::size_t i = 0; i < pp.size(); ++i)
          v +=
              pp[i].second->at_frequency(xi, gap + dz[i], DerivativeOrder::kGradient) * pp[i].first;
        return v;
      },
      frequency_scale(gap), opts);
  return PfaValues{s.total.value, -s.total.d1, -s.total.d2};
}

double GratingPlate::flat_energy(double gap, const FrequencyRuleOptions& opts) const {
  // The sample filled to the ridge tops: a film of the ridge material of the profile's height on
  // the substrate (a half-space when they are one material or the height is 0), facing the
  // plate at L (Lifshitz (1956) through PlatePlate).
  const double H = g_.height();
  PlanarPtr body = H > 0.0 && !same_material(g_.ridge, g_.substrate)
                       ? make_layered({{g_.ridge, H}}, g_.substrate)
                       : make_half_space(H > 0.0 ? g_.ridge : g_.substrate);
  const PlatePlate pp(body, plate_, medium_);
  return sum_over_frequencies(
             [&](double xi) { return pp.at_frequency(xi, gap, DerivativeOrder::kEnergy); },
             frequency_scale(gap), opts)
      .total.value;
}

std::vector<ExtraQuantity> GratingPlate::extra_quantities_of(double gap,
                                                             const FrequencyRuleOptions& opts,
                                                             double energy,
                                                             double energy_error) const {
  const double R = opts_.sphere_radius;
  if (!(R > 0.0)) return {};
  // PFA for the sphere (Derjaguin 1934; GratingPlateOptions): F(L) = 2 pi R E(L), E per area.
  const double two_pi_r = 2.0 * kPi * R;
  ExtraQuantity f;
  f.name = "sphere_force";
  f.column = "F_sphere";
  f.units = "N";
  f.description =
      "force on a sphere of radius R (pfa_sphere.radius) in place of the plate, PFA on the exact "
      "grating-plate energy: 2 pi R E(L) (< 0 attractive)";
  f.value = two_pi_r * energy;
  f.abs_error = two_pi_r * energy_error;
  ExtraQuantity fp;
  fp.name = "sphere_force_grating_pfa";
  fp.column = "F_sphere,PFA";
  fp.units = "N";
  fp.description =
      "the same with the grating PFA energy (the E_PFA column): 2 pi R E_PFA(L) (< 0 "
      "attractive)";
  fp.value = two_pi_r * pfa(gap, opts)->energy;
  ExtraQuantity ff;
  ff.name = "sphere_force_flat";
  ff.column = "F_sphere,flat";
  ff.units = "N";
  ff.description =
      "the same for the sample without grooves (ridge material filled to the ridge tops): "
      "2 pi R E_flat(L) (< 0 attractive)";
  ff.value = two_pi_r * flat_energy(gap, opts);
  return {f, fp, ff};
}

std::map<std::string, double> GratingPlate::truncation(double gap) const {
  GratingStudy st;
  bool known = opts_.orders > 0 && (g_.profile == GratingProfile::kLamellar || g_.slices > 0);
  if (known) {
    st = study(gap);
  } else {
    std::lock_guard<std::mutex> lock(mu_);
    if (const auto it = studies_.find(gap); it != studies_.end()) {
      st = it->second;
      known = true;
    }
  }
  if (!known) {  // before the study (plans, `check`): the model's N
    return {{"orders", static_cast<double>(model_orders(gap))},
            {"bloch_rel_tol", opts_.bloch_rel_tol}};
  }
  std::map<std::string, double> t{{"orders", static_cast<double>(st.orders)},
                                  {"orders_low", static_cast<double>(st.orders_low)},
                                  {"order_rate", st.rate},
                                  {"order_error", st.error},
                                  {"bloch_rel_tol", opts_.bloch_rel_tol}};
  if (g_.profile != GratingProfile::kLamellar) {
    t["slices"] = st.slices;
    t["slice_rate"] = st.slice_rate;
    t["slice_error"] = st.slice_error;
  }
  return t;
}

FrequencyCost GratingPlate::cost(double gap, DerivativeOrder order, double /*rel_tol*/) const {
  // Per Bloch node and level (N, S), n = 2(2N + 1): S admittance steps (two LUs and products,
  // ~5 n^3) and the round trip (LU and products, ~4 n^3; +2 n^3 per derivative); the layer
  // modes are solved once per k_x line (conical decoupling: two symmetric eigenproblems of
  // dimension n/2 with vectors and the products forming them, ~4 n^3 per layer), shared by the
  // ~20 nodes of a line: ~0.2 S n^3 per node. Nodes: ~500 (measured 200-900 at the case-file
  // tolerances). Model of gemm-equivalent flops (geometry.h), not calibrated per
  // kind; the study of each gap (a few extra evaluations at xi*) is not included.
  const auto t = truncation(gap);
  const double N = t.at("orders");
  const double n_low = t.count("orders_low") ? t.at("orders_low") : 0.0;
  const double S = g_.profile == GratingProfile::kLamellar
                       ? 1.0
                       : std::max(1.0, t.count("slices") ? t.at("slices") : 16.0);
  const double extra = 2.0 * static_cast<int>(order);
  double per_node = 0.0;
  for (double n_ord : {N, n_low}) {
    if (n_ord <= 0.0) continue;
    const double n = 2.0 * (2.0 * n_ord + 1.0);
    per_node += (5.2 * S + 4.0 + extra) * n * n * n;
  }
  constexpr double kNodes = 500.0;
  FrequencyCost c;
  c.blocks = 1.0;  // one work item per frequency (its nodes run in parallel inside)
  c.block_flops.assign(1, kNodes * per_node);
  const double n = 2.0 * (2.0 * N + 1.0);
  c.memory_bytes = 8.0 * n * n * (12.0 + 2.0 * S);
  return c;
}

}  // namespace roundtrip
