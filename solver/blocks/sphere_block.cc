// Sphere columns of the plane-wave round trip: the W blocks of sphere_block.h.
// Moved unchanged from sphere_plate.cc (the physics is documented there and in DEVELOPERS.md,
// "Sphere-plate round trip"); the only parameters added are the field kind and, for xi = 0, the
// sphere radius and the path length of the round trip.
#include "solver/blocks/sphere_block.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

#include "solver/guards.h"
#include "solver/special/legendre.h"

namespace roundtrip::blocks {
namespace {

/// The band search on the saddle-point estimate of Pt (error O(1/l) in the log) takes rows down
/// to this much below the negligible level; the exact values then confirm the ends.
constexpr double kEstimateMargin = 4.0;
/// Blocks with at most this many rows per group are computed over all rows.
constexpr int kWholeBlockRows = 64;

/// Row data of block m shared by both builders: signs S, and per row the log of the factor
/// a_l sqrt|T_l| for TE (hte) and TM (htm).
void dynamic_rows(FieldKind field, int m, int lmax, const MieLog& mie, LowRankBlock& b,
                  Eigen::ArrayXd& hte, Eigen::ArrayXd& htm) {
  const bool em = field == FieldKind::kElectromagnetic;
  const int lmin = em ? std::max(1, m) : m;
  const int nl = lmax - lmin + 1;
  hte.resize(nl);
  htm.resize(nl);
  for (int l = lmin; l <= lmax; ++l) {
    double la = std::log(2.0 * l + 1.0) + std::lgamma(l - m + 1.0) - std::lgamma(l + m + 1.0);
    if (em) la -= std::log(double(l) * (l + 1.0));
    const int i = l - lmin;
    hte[i] = 0.5 * la + 0.5 * mie.log_abs_te[l];
    if (em) {
      htm[i] = 0.5 * la + 0.5 * mie.log_abs_tm[l];
      b.s[i] = mie.sign_te[l];
      b.s[nl + i] = -mie.sign_tm[l];
    } else {
      b.s[i] = mie.sign_te[l];
    }
  }
}

/// Rows [lo, hi) (0 <= lo < hi <= n, hi - lo >= 4 if n >= 4) around the maximum of the
/// estimate f over 0..n-1 where f > level, found by golden-section search for the maximum
/// and bisection for the edges (f assumed unimodal); a few rows around the maximum if f is
/// below the level everywhere.
template <class F>
void estimated_band(const F& f, int n, double level, int& lo, int& hi) {
  int a = 0, c = n - 1;
  // golden-section search on integers for the maximum
  while (c - a > 3) {
    const int p = a + static_cast<int>(0.381966 * (c - a));
    const int q = c - static_cast<int>(0.381966 * (c - a));
    if (f(p) < f(q))
      a = p;
    else
      c = q;
  }
  int peak = a;
  double fpeak = f(a);
  for (int i = a + 1; i <= c; ++i) {
    const double v = f(i);
    if (v > fpeak) fpeak = v, peak = i;
  }
  if (!(fpeak > level)) {
    lo = peak;
    hi = peak + 1;
  } else {
    // lowest row above the level: f(lo) > level, f(lo - 1) <= level
    int below = -1, above = peak;  // f(below) <= level (or out of range), f(above) > level
    while (above - below > 1) {
      const int mid = (below + above) / 2;
      (f(mid) > level ? above : below) = mid;
    }
    lo = above;
    int in = peak, out = n;
    while (out - in > 1) {
      const int mid = (in + out) / 2;
      (f(mid) > level ? in : out) = mid;
    }
    hi = out;
  }
  // at least 4 rows, so that both ends can be checked
  while (hi - lo < std::min(4, n)) {
    if (lo > 0) --lo;
    if (hi - lo < std::min(4, n) && hi < n) ++hi;
  }
}

}  // namespace

/// Empty if a and r have the same recorded bands, the same zero entries and entries within
/// 1e-9 relative, else what differs first. Entries are exponentials of sums of logs of size up
/// to ~1e4: the recurrence from l = m (dynamic_block_full_range) carries up to ~4e-11 of
/// log Pt at l ~ 8000 (tests/special/legendre_band_test.cc), and the two paths differ by up
/// to 1e-10 (R/L = 200) and 1e-9 (R/L = 1000, measured).
std::string compare_sphere_blocks(const LowRankBlock& a, const LowRankBlock& r, int m) {
  constexpr double kEntryTol = 1e-9;
  if (a.W.rows() != r.W.rows() || a.W.cols() != r.W.cols() || a.group_start != r.group_start)
    return fmt::format("m = {}: block shapes differ", m);
  const int groups = static_cast<int>(a.group_start.size()) - 1;
  for (Eigen::Index c = 0; c < a.W.cols(); ++c)
    for (int g = 0; g < groups; ++g) {
      const std::size_t k = c * groups + g;
      const bool ea = a.col_hi[k] <= a.col_lo[k], er = r.col_hi[k] <= r.col_lo[k];
      if (ea != er || (!ea && (a.col_lo[k] != r.col_lo[k] || a.col_hi[k] != r.col_hi[k])))
        return fmt::format("m = {}, column {}, group {}: band [{}, {}) but [{}, {}) over all l", m,
                           c, g, a.col_lo[k], a.col_hi[k], r.col_lo[k], r.col_hi[k]);
    }
  for (Eigen::Index c = 0; c < a.W.cols(); ++c)
    for (Eigen::Index i = 0; i < a.W.rows(); ++i) {
      const double x = a.W(i, c), y = r.W(i, c);
      if ((x == 0.0) != (y == 0.0) || !(std::abs(x - y) <= kEntryTol * std::abs(y)))
        return fmt::format("m = {}, W({}, {}) = {:.17g} but {:.17g} over all l", m, i, c, x, y);
    }
  if (a.s != r.s || a.c != r.c || a.f1 != r.f1 || a.f2 != r.f2)
    return fmt::format("m = {}: signs or node factors differ", m);
  return {};
}

/// W of block m, column by column over the band of rows where the column is not negligible
/// (BandedWriter), at a cost ~ (nodes) x (band width) instead of (nodes) x l_max (the band is
/// ~20 % of the rows at R/L = 1000; the zeros outside it are still written). Nodes are taken by
/// increasing x; the rows tried for a node are the previous node's band with a margin (for the
/// first node, the rows where the saddle-point estimate legendre_log_estimate is within
/// kEstimateMargin of the negligible level). They are computed exactly by the recurrence
/// started at their lower edge (legendre_log_range_pair) and accepted only if every column is
/// below the negligible level at both ends and falls off outwards there; otherwise the rows
/// are extended and computed again. This assumes each column's log is unimodal in l (Pt grows
/// geometrically, a_l sqrt|T_l| falls ever faster once l > kappa R); the cross-check
/// WBuild::kBandCheckedAgainstFullRange (tests/sphere_plate/banded_w_test.cc) finds the same
/// recorded bands and zeros as dynamic_block_full_range, and entries within rounding.
/// write_zeros = false leaves W unset outside the recorded bands (no n x q zero fill; the
/// node-space log det reads only the bands, low_rank.h).
LowRankBlock sphere_dynamic_block(FieldKind field, int m, int lmax, const NodeSet& nodes,
                                  const MieLog& mie, bool write_zeros) {
  const NodeSet* n1[1] = {&nodes};
  const MieLog* m1[1] = {&mie};
  return std::move(sphere_dynamic_blocks(field, m, lmax, n1, m1, write_zeros).front());
}

/// Several spheres on the same nodes (same x_j and weights; materials and reflections differ):
/// one Legendre recurrence per node over the union of the rows the spheres need, then each
/// sphere's columns from it. With one sphere this is the path above.
std::vector<LowRankBlock> sphere_dynamic_blocks(FieldKind field, int m, int lmax,
                                                std::span<const NodeSet* const> node_sets,
                                                std::span<const MieLog* const> mies,
                                                bool write_zeros) {
  const bool em = field == FieldKind::kElectromagnetic;
  const int lmin = em ? std::max(1, m) : m;
  const int nl = lmax - lmin + 1;
  const int K = static_cast<int>(mies.size());
  const NodeSet& nodes = *node_sets[0];  // x, half_log_w shared by all
  const int N = static_cast<int>(nodes.x.size());
  std::vector<LowRankBlock> blocks(K);
  thread_local std::vector<Eigen::ArrayXd> hte_k, htm_k;
  thread_local Eigen::ArrayXd hmax, pm, pm1, lt, lp, col;
  if (static_cast<int>(hte_k.size()) < K) hte_k.resize(K), htm_k.resize(K);
  std::vector<BandedWriter> writers;
  writers.reserve(K);
  for (int k = 0; k < K; ++k) {
    blocks[k].resize(em ? 2 * nl : nl, em ? 2 * N : N);
    dynamic_rows(field, m, lmax, *mies[k], blocks[k], hte_k[k], htm_k[k]);
    const Eigen::ArrayXd hk = em ? hte_k[k].max(htm_k[k]).eval() : hte_k[k];
    hmax = k == 0 ? hk : hmax.max(hk).eval();
    writers.emplace_back(blocks[k], em ? std::vector<int>{0, nl, 2 * nl} : std::vector<int>{0, nl},
                         write_zeros);
  }
  const double log_m = m > 0 ? std::log(double(m)) : 0.0;
  // Nodes by increasing x (the rule lists them panel by panel), so that each band is close
  // to the previous one.
  std::vector<int> order(N);
  for (int j = 0; j < N; ++j) order[j] = j;
  std::stable_sort(order.begin(), order.end(),
                   [&](int a, int c) { return nodes.x[a] < nodes.x[c]; });
  int prev_lo = 0, prev_hi = 0;            // band of the previous node (empty: none yet)
  int prev_rows_lo = 0, prev_rows_hi = 0;  // rows computed for it
  for (const int j : order) {
    throw_if_cancelled();  // guards.h: honoured within a column; changes no number
    const double x = nodes.x[j];
    const double hw = nodes.half_log_w[j];
    const double log_s = 0.5 * std::log((x - 1.0) * (x + 1.0));
    const double log_mx_s = log_m + std::log(x) - log_s;
    // Estimated log of the largest entry of row i over the node's columns (t >= p).
    auto estimate = [&](int i) {
      const int l = lmin + i;
      if (!em) return hmax[i] + hw + special::legendre_log_estimate(x, m, l);
      const double e1 = special::legendre_log_estimate(x, m + 1, l);
      if (m == 0) return hmax[i] + hw + e1;
      const double e0 = log_mx_s + special::legendre_log_estimate(x, m, l);
      const double big = std::max(e0, e1), small = std::min(e0, e1);
      return hmax[i] + hw + big + std::log1p(std::exp(small - big));
    };
    // Rows to compute: around the previous node's band (bands move little from node to node),
    // or the rows that showed the previous node negligible; for the first node from the
    // estimate; small blocks whole.
    int lo = 0, hi = nl;
    if (nl > kWholeBlockRows) {
      if (prev_hi > prev_lo) {
        const int margin = std::max(8, (prev_hi - prev_lo) / 8);
        lo = std::max(0, prev_lo - margin);
        hi = std::min(nl, prev_hi + margin);
        if (hi - lo < 4) lo = std::max(0, hi - 4), hi = std::min(nl, lo + 4);
      } else if (prev_rows_hi > prev_rows_lo) {
        lo = prev_rows_lo;
        hi = prev_rows_hi;
      } else {
        estimated_band(estimate, nl, kLogNegligible - kEstimateMargin, lo, hi);
      }
    }
    for (;;) {
      const int n = hi - lo;
      if (pm.size() < n) {
        for (auto* a : {&pm, &pm1, &lt, &lp, &col}) a->resize(n);
      }
      special::legendre_log_range_pair(x, m, lmin + lo, n, pm.data(), pm1.data());
      auto P = pm.head(n);
      auto P1 = pm1.head(n);
      auto LT = lt.head(n), LP = lp.head(n);
      // The band check reads only the two rows at each end; the angular logs of the rows in
      // between are needed for m = 0 only (m > 0 puts the entries from P and P1 directly).
      if (em && (m == 0 || n < 4)) {
        angular_logs(m, x, log_s, P, P1, LT, LP);
      } else if (em) {
        angular_logs(m, x, log_s, P.head(2), P1.head(2), lt.head(2), lp.head(2));
        angular_logs(m, x, log_s, P.segment(n - 2, 2), P1.segment(n - 2, 2), lt.segment(n - 2, 2),
                     lp.segment(n - 2, 2));
      }
      // Are all columns negligible and falling outwards at both ends of the rows?
      bool ok_lo = true, ok_hi = true;
      auto check = [&](const Eigen::ArrayXd& h0, const auto& f) {
        if (lo > 0) {
          const double a = h0[lo] + f[0], c = h0[lo + 1] + f[1];
          ok_lo = ok_lo && a + hw < kLogNegligible && a < c;
        }
        if (hi < nl) {
          const double a = h0[hi - 1] + f[n - 1], c = h0[hi - 2] + f[n - 2];
          ok_hi = ok_hi && a + hw < kLogNegligible && a < c;
        }
      };
      for (int k = 0; k < K; ++k) {
        const Eigen::ArrayXd &hte = hte_k[k], &htm = htm_k[k];
        if (!em) {
          check(hte, P);
        } else {
          check(hte, LT);
          check(htm, LT);
          if (m > 0) {
            check(hte, LP);
            check(htm, LP);
          }
        }
      }
      if (ok_lo && ok_hi) break;
      const int grow = std::max(32, n / 2);
      if (!ok_lo) lo = std::max(0, lo - grow);
      if (!ok_hi) hi = std::min(nl, hi + grow);
    }
    const int n = hi - lo;
    for (int k = 0; k < K; ++k) {
      LowRankBlock& b = blocks[k];
      BandedWriter& w = writers[k];
      const Eigen::ArrayXd &hte = hte_k[k], &htm = htm_k[k];
      auto put = [&](int c, int group, const Eigen::ArrayXd& h0, const auto& f) {
        const int row0 = group == 0 ? 0 : nl;
        auto dst = b.W.col(c).segment(row0, nl);
        if (write_zeros) {
          dst.head(lo).setZero();
          dst.tail(nl - hi).setZero();
        }
        col.head(n) = h0.segment(lo, n) + hw + f;
        w.put_column(c, row0 + lo, group, col.head(n));
      };
      // m > 0 from the values: with rho = Pt^{m+1}/Pt^m, p = (m/s) Pt^m and t = (m x/s + rho) Pt^m,
      // the four columns are E_TE (m x/s + rho), E_TM m/s, E_TE m/s, E_TM (m x/s + rho) with
      // E = a_l sqrt|T_l| sqrt(Omega_j) Pt^m: three exponentials per row instead of an exp and a
      // log for t and four exponentials (the same entries up to rounding; E stays in range:
      // entries above e^-41 need E > e^-41 / (m x/s + rho), and rho is at most ~ l^2).
      auto put_values = [&](int c, int group, const Eigen::ArrayXd& v) {
        const int row0 = group == 0 ? 0 : nl;
        auto dst = b.W.col(c).segment(row0, nl);
        if (write_zeros) {
          dst.head(lo).setZero();
          dst.tail(nl - hi).setZero();
        }
        w.put_values(c, row0 + lo, group, v);
      };
      if (!em) {
        put(j, 0, hte, pm.head(n));
      } else if (m > 0 && n >= 4) {
        const double inv_s = std::exp(-log_s), pf = m * inv_s, tf = m * x * inv_s;
        thread_local Eigen::ArrayXd ete, etm, rho, v;
        for (auto* a : {&ete, &etm, &rho, &v}) a->resize(n);
        ete = (hte.segment(lo, n) + hw + pm.head(n)).exp();
        etm = (htm.segment(lo, n) + hw + pm.head(n)).exp();
        rho = (pm1.head(n) - pm.head(n)).exp() + tf;  // m x/s + rho
        v = ete * rho;
        put_values(j, 0, v);  // u_j, TE rows
        v = etm * pf;
        put_values(j, 1, v);  // u_j, TM rows
        v = ete * pf;
        put_values(N + j, 0, v);  // v_j, TE rows
        v = etm * rho;
        put_values(N + j, 1, v);  // v_j, TM rows
      } else {
        put(j, 0, hte, lt.head(n));      // u_j, TE rows
        put(j, 1, htm, lp.head(n));      // u_j, TM rows
        put(N + j, 0, hte, lp.head(n));  // v_j, TE rows
        put(N + j, 1, htm, lt.head(n));  // v_j, TM rows
      }
    }
    // this node's band (union over its columns), the next node's first guess
    prev_rows_lo = lo;
    prev_rows_hi = hi;
    prev_lo = nl;
    prev_hi = 0;
    for (int k = 0; k < K; ++k) {
      const LowRankBlock& b = blocks[k];
      for (int c : {j, N + j}) {
        if (c >= b.W.cols()) continue;
        for (int g = 0; g < (em ? 2 : 1); ++g) {
          const int clo = b.col_lo[c * (em ? 2 : 1) + g], chi = b.col_hi[c * (em ? 2 : 1) + g];
          if (chi <= clo) continue;
          prev_lo = std::min(prev_lo, clo - g * nl);
          prev_hi = std::max(prev_hi, chi - g * nl);
        }
      }
      set_node_coefficients(*node_sets[k], j, em, blocks[k]);
    }
  }
  return blocks;
}

LowRankBlock sphere_dynamic_block_full_range(FieldKind field, int m, int lmax, const NodeSet& nodes,
                                             const MieLog& mie) {
  const bool em = field == FieldKind::kElectromagnetic;
  const int lmin = em ? std::max(1, m) : m;
  const int nl = lmax - lmin + 1;
  const int N = static_cast<int>(nodes.x.size());
  LowRankBlock b;
  const int dim = em ? 2 * nl : nl;
  const int q = em ? 2 * N : N;
  b.resize(dim, q);
  std::vector<double> log_a(nl);
  for (int l = lmin; l <= lmax; ++l) {
    double la = std::log(2.0 * l + 1.0) + std::lgamma(l - m + 1.0) - std::lgamma(l + m + 1.0);
    if (em) la -= std::log(double(l) * (l + 1.0));
    log_a[l - lmin] = 0.5 * la;
    if (em) {
      b.s[l - lmin] = mie.sign_te[l];
      b.s[nl + l - lmin] = -mie.sign_tm[l];
    } else {
      b.s[l - lmin] = mie.sign_te[l];
    }
  }
  BandedWriter w(b, em ? std::vector<int>{0, nl, 2 * nl} : std::vector<int>{0, nl});
  // Reference path (WBuild::kFullRange): per node, the whole column in log form
  // from the recurrences over all l, then the band of entries above the negligible level.
  Eigen::ArrayXd hte0(nl), htm0(nl);
  for (int i = 0; i < nl; ++i) {
    hte0[i] = log_a[i] + 0.5 * mie.log_abs_te[lmin + i];
    htm0[i] = log_a[i] + 0.5 * mie.log_abs_tm[lmin + i];
  }
  const Eigen::Map<const Eigen::ArrayXd> xs(nodes.x.data(), N);
  Eigen::ArrayXXd pm, pm1;
  special::legendre_log_many(xs, m, lmax, pm);
  if (em) special::legendre_log_many(xs, m + 1, lmax, pm1);
  Eigen::ArrayXd lt(nl), lp(nl), col(nl);
  for (int j = 0; j < N; ++j) {
    throw_if_cancelled();
    const double x = nodes.x[j];
    const double hw = nodes.half_log_w[j];
    const Eigen::Map<const Eigen::ArrayXd> P(&pm(lmin, j), nl);
    if (!em) {
      col = hte0 + hw + P;
      w.put_column(j, 0, 0, col);
      set_node_coefficients(nodes, j, em, b);
      continue;
    }
    const Eigen::Map<const Eigen::ArrayXd> P1(&pm1(lmin, j), nl);
    const double log_s = 0.5 * std::log((x - 1.0) * (x + 1.0));
    angular_logs(m, x, log_s, P, P1, lt, lp);
    col = hte0 + hw + lt;
    w.put_column(j, 0, 0, col);  // u_j, TE rows
    col = htm0 + hw + lp;
    w.put_column(j, nl, 1, col);  // u_j, TM rows
    col = hte0 + hw + lp;
    w.put_column(N + j, 0, 0, col);  // v_j, TE rows
    col = htm0 + hw + lt;
    w.put_column(N + j, nl, 1, col);  // v_j, TM rows
    set_node_coefficients(nodes, j, em, b);
  }
  return b;
}

/// with_tm = false: the TE channel alone (electromagnetic field; TE and TM decouple at xi = 0).
LowRankBlock sphere_static_block(FieldKind field, int m, double radius, double path, int lmax,
                                 const NodeSet& nodes, const StaticSphere& st, bool with_tm) {
  const bool em = field == FieldKind::kElectromagnetic && with_tm;
  const bool em_field = field == FieldKind::kElectromagnetic;
  const int lmin = em_field ? std::max(1, m) : m;
  const int nl = lmax - lmin + 1;
  const int N = static_cast<int>(nodes.x.size());
  const int dim = em ? 2 * nl : nl;
  const int q = em ? 2 * N : N;
  LowRankBlock b;
  b.resize(dim, q);
  b.W.setZero();  // TE rows x TM columns and TM rows x TE columns stay zero
  const double log_ratio = std::log(radius / path);
  std::vector<double> row_log(dim, kNegInf);
  for (int l = lmin; l <= lmax; ++l) {
    const int i = l - lmin;
    const double common =
        (l + 0.5) * log_ratio - 0.5 * (std::lgamma(l - m + 1.0) + std::lgamma(l + m + 1.0));
    const double g2te = st.g2_te[l], g2tm = st.g2_tm[l];
    b.s[i] = g2te > 0 ? 1.0 : (g2te < 0 ? -1.0 : 0.0);
    if (g2te != 0.0) row_log[i] = common + 0.5 * std::log(std::abs(g2te));
    if (em) {
      b.s[nl + i] = g2tm > 0 ? 1.0 : (g2tm < 0 ? -1.0 : 0.0);
      if (g2tm != 0.0) row_log[nl + i] = common + 0.5 * std::log(std::abs(g2tm));
    }
  }
  BandedWriter w(b, em ? std::vector<int>{0, nl, 2 * nl} : std::vector<int>{0, nl});
  const Eigen::Map<const Eigen::ArrayXd> log_te(row_log.data(), nl);
  const Eigen::ArrayXd ls = Eigen::ArrayXd::LinSpaced(nl, lmin, lmax);
  Eigen::ArrayXd col(nl);
  for (int j = 0; j < N; ++j) {
    throw_if_cancelled();
    const double log_t = std::log(nodes.x[j]), hw = nodes.half_log_w[j];
    col = log_te + hw + ls * log_t;
    w.put_column(j, 0, 0, col);
    if (em) {
      col = Eigen::Map<const Eigen::ArrayXd>(row_log.data() + nl, nl) + hw + ls * log_t;
      w.put_column(N + j, nl, 1, col);
    }
    set_node_coefficients(nodes, j, em, b);
  }
  return b;
}

}  // namespace roundtrip::blocks
