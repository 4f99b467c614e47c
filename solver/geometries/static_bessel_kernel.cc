#include "solver/geometries/static_bessel_kernel.h"

#include <omp.h>

#include <cmath>

#include "solver/special/bessel_i_log.h"

namespace roundtrip {
namespace {
/// Entries below e^-45 (~3e-20, |K| <= 1) are left out of the band, as in sphere_plate.cc.
constexpr double kLogNegligible = -45.0;
}  // namespace

StaticBesselKernel::StaticBesselKernel(const std::vector<double>& t,
                                       const std::vector<double>& log_w, double R, double D,
                                       double rho, bool skip_monopole, int m_cap)
    : n_(t.size()), m_cap_(m_cap) {
  const int n = static_cast<int>(n_);
  const double log_pre = std::log(rho) + std::log(R / (2.0 * D));
  // Band: the m = 0 (or, without the monopole, m = 0 and 1) entry is the largest over m, and
  // in j >= i it falls once j is past the peak; keep j while it is above the negligible level.
  auto log_k0 = [&](int i, int j) {
    const double z = R * std::sqrt(t[i] * t[j]) / D;
    const double li =
        skip_monopole ? special::log_bessel_i0_minus_one(z) : special::log_bessel_i0(z);
    return log_pre + 0.5 * (log_w[i] + log_w[j]) + li;
  };
  len_.assign(n, 0);
  first_pair_.assign(n + 1, 0);
  for (int i = 0; i < n; ++i) {
    int j = i;
    double best = -1e300;
    while (j < n) {
      const double v = log_k0(i, j);
      best = std::max(best, v);
      if (v < kLogNegligible && v < best) break;
      ++j;
    }
    len_[i] = j - i;
    first_pair_[i + 1] = first_pair_[i] + len_[i];
  }
  const std::size_t pairs = first_pair_[n];
  log_k_.assign(pairs * (m_cap + 1), -1e300);
#pragma omp parallel
  {
    std::vector<double> out, scratch;
#pragma omp for schedule(dynamic, 8)
    for (int i = 0; i < n; ++i)
      for (int d = 0; d < len_[i]; ++d) {
        const int j = i + d;
        const double z = R * std::sqrt(t[i] * t[j]) / D;
        special::log_bessel_i_even(z, m_cap, out, scratch);
        if (skip_monopole) out[0] = special::log_bessel_i0_minus_one(z);
        double* dst = &log_k_[(first_pair_[i] + d) * std::size_t(m_cap + 1)];
        const double common = log_pre + 0.5 * (log_w[i] + log_w[j]);
        for (int m = 0; m <= m_cap; ++m) dst[m] = common + out[m];
      }
  }
}

Eigen::MatrixXd StaticBesselKernel::one_minus(int m) const {
  const int n = static_cast<int>(n_);
  Eigen::MatrixXd A = Eigen::MatrixXd::Identity(n, n);
  for (int i = 0; i < n; ++i)
    for (int d = 0; d < len_[i]; ++d) {
      const double lk = log_k_[(first_pair_[i] + d) * std::size_t(m_cap_ + 1) + m];
      if (lk < kLogNegligible) continue;
      const double k = std::exp(lk);
      A(i + d, i) -= k;
      if (d > 0) A(i, i + d) -= k;
    }
  return A;
}

int static_m_cap(double radius, double gap, double tol) {
  const double mu = std::acosh(1.0 + gap / radius);
  // Z^{2m} <= tol / 100, with 20 % and 10 blocks of margin (the loop in sphere_plate.cc stops
  // earlier from the measured decay).
  return static_cast<int>(std::ceil(1.2 * std::log(100.0 / tol) / (2.0 * mu))) + 10;
}

}  // namespace roundtrip
