#include "solver/special/legendre.h"

#include <Eigen/Core>
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
