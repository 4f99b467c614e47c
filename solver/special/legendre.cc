#include "solver/special/legendre.h"

#include <Eigen/Core>
#include <algorithm>
#include <cassert>
#include <cmath>
#include <limits>

namespace roundtrip::special {

double log_double_factorial_odd(int m) {
  // (2m-1)!! = (2m)! / (2^m m!)
  return std::lgamma(2.0 * m + 1.0) - m * std::log(2.0) - std::lgamma(m + 1.0);
}

void legendre_log(double x, int m, int lmax, std::vector<double>& out) {
  assert(x >= 1.0 && m >= 0);
  out.assign(lmax + 1, -std::numeric_limits<double>::infinity());
  if (lmax < m) return;
  const double s2 = (x - 1.0) * (x + 1.0);
  if (m > 0 && s2 <= 0.0) return;
  const double logp = log_double_factorial_odd(m) + (m > 0 ? 0.5 * m * std::log(s2) : 0.0);
  out[m] = logp;
  if (lmax == m) return;
  // Ratios q_{l+1} = Pt_{l+1}/Pt_l by the recurrence, then their logs in one vectorised pass
  // (Eigen's SIMD log) and a prefix sum.
  double q = (2.0 * m + 1.0) * x;  // Pt_{m+1}/Pt_m
  out[m + 1] = q;
  for (int l = m + 1; l < lmax; ++l) {
    q = ((2.0 * l + 1.0) * x - (l + m) / q) / (l - m + 1.0);
    out[l + 1] = q;
  }
  // Into an aligned array first: Eigen would peel an unaligned destination with scalar logs,
  // making the last bits depend on the buffer's address (and so on the thread).
  Eigen::ArrayXd logq = Eigen::Map<const Eigen::ArrayXd>(out.data() + m + 1, lmax - m).log();
  Eigen::Map<Eigen::ArrayXd>(out.data() + m + 1, lmax - m) = logq;
  out[m + 1] += logp;
  for (int l = m + 2; l <= lmax; ++l) out[l] += out[l - 1];
}

void legendre_log_many(const Eigen::ArrayXd& x, int m, int lmax, Eigen::ArrayXXd& out) {
  const Eigen::Index n = x.size();
  out.resize(lmax + 1, n);
  out.setConstant(-std::numeric_limits<double>::infinity());
  if (lmax < m) return;
  const Eigen::ArrayXd s2 = (x - 1.0) * (x + 1.0);
  Eigen::ArrayXd logp = Eigen::ArrayXd::Constant(n, log_double_factorial_odd(m));
  if (m > 0) logp += 0.5 * m * s2.log();
  out.row(m) = logp.transpose();
  if (lmax == m) return;
  Eigen::ArrayXd q = (2.0 * m + 1.0) * x;  // ratios Pt_{l+1}/Pt_l, one per node
  out.row(m + 1) = q.transpose();
  for (int l = m + 1; l < lmax; ++l) {
    q = ((2.0 * l + 1.0) * x - (l + m) / q) / (l - m + 1.0);
    out.row(l + 1) = q.transpose();
  }
  // logs of the ratio rows (aligned, Eigen-owned block: vectorised and address-independent)
  Eigen::ArrayXXd logq = out.bottomRows(lmax - m).log();
  out.bottomRows(lmax - m) = logq;
  out.row(m + 1) += logp.transpose();
  for (int l = m + 2; l <= lmax; ++l) out.row(l) += out.row(l - 1);
}

}  // namespace roundtrip::special

namespace roundtrip::special {
namespace {

constexpr double kPi = 3.14159265358979323846;
/// Values are kept below 2^kScaleBits by exact rescaling with powers of two.
constexpr int kScaleBits = 600;
const double kBig = std::ldexp(1.0, kScaleBits), kSmall = std::ldexp(1.0, -kScaleBits);
const double kLogScale = kScaleBits * std::log(2.0);
/// Below this many steps above l = m the recurrence starts at l = m (closed form): one
/// legendre_log_start costs about as much as ~250 steps (measured).
constexpr int kDirectSteps = 250;

/// The saddle point of l log(x + s cos phi) + i m phi on the imaginary axis, phi = i beta:
/// l s sinh beta = m (x + s cosh beta), i.e. sinh(beta - beta0) = m x / (s sqrt(l^2 - m^2)),
/// tanh beta0 = m / l.
struct Saddle {
  double s, cb, sb, beta, d0, g2;  // g2 = -(d^2/dtheta^2) log|integrand| at theta = 0
  double log_d0;                   // log d0 = log1p((x - 1) + s cosh beta): l multiplies it
};
Saddle saddle(double x, int m, int l) {
  Saddle p;
  p.s = std::sqrt((x - 1.0) * (x + 1.0));
  p.beta = 0.0;
  if (m > 0)
    p.beta = std::atanh(double(m) / l) +
             std::asinh(m * x / (p.s * std::sqrt((double(l) - m) * (double(l) + m))));
  p.cb = std::cosh(p.beta);
  p.sb = std::sinh(p.beta);
  p.d0 = x + p.s * p.cb;
  p.log_d0 = std::log1p((x - 1.0) + p.s * p.cb);
  p.g2 = l * p.s * (x * p.cb + p.s) / (p.d0 * p.d0);
  return p;
}

struct Start {
  double log_p, ratio;  // log Pt_l^m, Pt_{l+1}^m / Pt_l^m
};

Start laplace_start(double x, int m, int l) {
  assert(l > m && x > 1.0);
  const Saddle p = saddle(x, m, l);
  // Trapezoid rule with n points on the line theta + i beta. Step h = half the Gaussian width
  // sigma = 1/sqrt(g2) near the peak (error ~ exp(-2 pi^2 sigma^2/h^2) = e^-79); at least 32
  // points for broad integrands, like e^{z cos theta} with z = g2 <~ 5, whose n-th Fourier
  // coefficient I_n(z)/I_0(z) is then < 1e-24 (checked with mpmath); never more points than
  // make the rule exact for the trigonometric polynomial of degree l + 1 + m.
  const long n_exact = long(l) + m + 2;
  const long n =
      std::min(n_exact, std::max<long>(32, long(std::ceil(4.0 * kPi * std::sqrt(p.g2)))));
  const double h = 2.0 * kPi / n;
  // |w|^2 = 1 - c1 sin^2(theta/2) - c2 sin^2(theta), w = (x + s cos(theta + i beta)) / d0: no
  // cancellation in 1 - |w|^2 (both terms are positive), which l multiplies.
  const double c1 = 4.0 * x * p.s * p.cb / (p.d0 * p.d0);
  const double c2 = (x - 1.0) * (x + 1.0) / (p.d0 * p.d0);
  double s0 = 0.0, s1 = 0.0;
  for (long k = 0; 2 * k <= n; ++k) {
    const double th = h * k;
    const double sn = std::sin(th), cs = std::cos(th), sh = std::sin(0.5 * th);
    const double la = 0.5 * l * std::log1p(-(c1 * sh * sh + c2 * sn * sn));
    if (!(la > -45.0)) break;  // |integrand| decreases along the line: the rest is < e^-45
    const double re = (x + p.s * cs * p.cb) / p.d0, im = -p.s * sn * p.sb / p.d0;
    const double phase = l * std::atan2(im, re) + m * th;
    const double mag = (k == 0 || 2 * k == n ? 1.0 : 2.0) * std::exp(la);
    const double cp = std::cos(phase), sp = std::sin(phase);
    s0 += mag * cp;                   // Re w^l e^{i m theta}
    s1 += mag * (cp * re - sp * im);  // Re w^{l+1} e^{i m theta}
  }
  Start st;
  st.log_p = log_rising_factorial(l, m) + l * p.log_d0 - m * p.beta + std::log(s0 / n);
  st.ratio = (double(l) + 1.0 + m) / (double(l) + 1.0) * p.d0 * (s1 / s0);
  return st;
}

/// One recurrence in l at fixed order mm: cur = Pt_l / scale, prev = Pt_{l-1} / scale, scale =
/// e^offset 2^(kScaleBits k).
struct Chain {
  double x, mm, prev, cur, offset;
  int l, k = 0;
  Chain(double x_, int mm_, int lfirst) : x(x_), mm(mm_) {
    if (lfirst - mm_ <= kDirectSteps) {
      // closed form at l = mm, Pt_{mm-1}^{mm} = 0
      l = mm_;
      prev = 0.0;
      cur = 1.0;
      offset = log_double_factorial_odd(mm_) +
               (mm_ > 0 ? 0.5 * mm_ * std::log((x - 1.0) * (x + 1.0)) : 0.0);
    } else {
      const Start st = laplace_start(x, mm_, lfirst - 1);
      l = lfirst;
      prev = 1.0;
      cur = st.ratio;
      offset = st.log_p;
    }
  }
  void step() {
    // DLMF 14.10.3; the division is off the dependency chain
    const double inv = 1.0 / (l - mm + 1.0);
    const double next = ((2.0 * l + 1.0) * x * cur - (l + mm) * prev) * inv;
    prev = cur;
    cur = next;
    ++l;
    if (cur > kBig) {
      cur *= kSmall;
      prev *= kSmall;
      ++k;
    }
  }
};

}  // namespace

double log_rising_factorial(int l, int m) {
  assert(l >= 0 && m >= 0);
  if (l < 32 || m < 8) {
    double sum = 0.0;
    for (int k = 1; k <= m; ++k) sum += std::log(double(l) + k);
    return sum;
  }
  // log Gamma(w) - log Gamma(z), z = l + 1, w = z + m, by Stirling's series (DLMF 5.11.1) with
  // the large terms combined: (w - 1/2) log w - (z - 1/2) log z = (z - 1/2) log1p(m/z) + m log w.
  // Truncated after 1/z^7: the next term is below 1e-16 for z >= 32.
  const double z = l + 1.0, w = z + m;
  auto tail = [](double v) {
    const double v2 = 1.0 / (v * v);
    return (1.0 / v) * (1.0 / 12.0 - v2 * (1.0 / 360.0 - v2 * (1.0 / 1260.0 - v2 / 1680.0)));
  };
  return (z - 0.5) * std::log1p(m / z) + m * std::log(w) - m + (tail(w) - tail(z));
}

void legendre_log_start(double x, int m, int l, double& log_p, double& log_ratio) {
  const Start st = laplace_start(x, m, l);
  log_p = st.log_p;
  log_ratio = std::log(st.ratio);
}

double legendre_log_estimate(double x, int m, int l) {
  if (l < m) return -std::numeric_limits<double>::infinity();
  const double s2 = (x - 1.0) * (x + 1.0);
  if (l == m) return log_double_factorial_odd(m) + (m > 0 ? 0.5 * m * std::log(s2) : 0.0);
  const Saddle p = saddle(x, m, l);
  // (l+m)!/l! d0^l e^{-m beta} times the Gaussian integral 1/sqrt(2 pi g2), at most 1
  return std::lgamma(l + m + 1.0) - std::lgamma(l + 1.0) + l * p.log_d0 - m * p.beta +
         std::min(0.0, -0.5 * std::log(2.0 * kPi * p.g2));
}

void legendre_log_range_pair(double x, int m, int l0, int n, double* pm, double* pm1) {
  assert(x > 1.0 && m >= 0 && l0 >= 0 && n >= 0);
  if (n == 0) return;
  thread_local Eigen::ArrayXd v0, v1, g0, g1;
  thread_local Eigen::ArrayXi k0, k1;
  if (v0.size() < n) {
    for (auto* v : {&v0, &v1, &g0, &g1}) v->resize(n);
    k0.resize(n);
    k1.resize(n);
  }
  Chain a(x, m, std::max(l0, m)), b(x, m + 1, std::max(l0, m + 1));
  // Both recurrences in one loop: two independent dependency chains overlap in the CPU.
  for (int i = 0; i < n; ++i) {
    const int l = l0 + i;
    if (l >= m) {
      while (a.l < l) a.step();
      v0[i] = a.cur;
      k0[i] = a.k;
    } else {
      v0[i] = 0.0;
      k0[i] = 0;
    }
    if (l >= m + 1) {
      while (b.l < l) b.step();
      v1[i] = b.cur;
      k1[i] = b.k;
    } else {
      v1[i] = 0.0;
      k1[i] = 0;
    }
  }
  // logs in aligned buffers (vectorised, independent of the callers' addresses)
  g0.head(n) = v0.head(n).log();
  g1.head(n) = v1.head(n).log();
  for (int i = 0; i < n; ++i) {
    pm[i] = g0[i] + (a.offset + k0[i] * kLogScale);
    pm1[i] = g1[i] + (b.offset + k1[i] * kLogScale);
  }
}

}  // namespace roundtrip::special
