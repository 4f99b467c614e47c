#include "solver/special/bessel_i_log.h"

#include <boost/math/special_functions/bessel.hpp>
#include <cmath>
#include <numbers>

namespace roundtrip::special {

double log_bessel_i0(double z) {
  if (z <= 700.0) return std::log(boost::math::cyl_bessel_i(0, z));
  // DLMF 10.40.1 with a_k(0) = [(2k-1)!!]^2 / (k! 8^k); at z > 700 the terms fall by
  // (2k+1)^2 / (8 (k+1) z) < 1e-2 each: 12 terms leave < 1e-20.
  double term = 1.0, sum = 1.0;
  for (int k = 0; k < 12; ++k) {
    term *= (2.0 * k + 1.0) * (2.0 * k + 1.0) / (8.0 * (k + 1.0) * z);
    sum += term;
  }
  return z - 0.5 * std::log(2.0 * std::numbers::pi * z) + std::log(sum);
}

double log_bessel_i0_minus_one(double z) {
  if (z < 1.0) {
    // I_0(z) - 1 = sum_{p>=1} (z^2/4)^p / (p!)^2 (DLMF 10.25.2); 12 terms reach 1e-25 at z = 1.
    const double y = 0.25 * z * z;
    double term = 1.0, sum = 0.0;
    for (int p = 1; p <= 12; ++p) {
      term *= y / (double(p) * p);
      sum += term;
    }
    return std::log(sum);
  }
  const double l0 = log_bessel_i0(z);
  return l0 + std::log1p(-std::exp(-l0));
}

void log_bessel_i_even(double z, int m_cap, std::vector<double>& out,
                       std::vector<double>& scratch) {
  out.resize(m_cap + 1);
  const int top = 2 * m_cap;  // highest ratio index needed: r_{2 m_cap - 1}
  scratch.resize(top + 1);
  const int start = top + 20 + static_cast<int>(6.0 * std::sqrt(z));
  // Start value: the leading uniform-asymptotic ratio (DLMF 10.41.3), error O(1/nu).
  const double nu = start + 1.0;
  double r = z / (nu + std::sqrt(nu * nu + z * z));
  for (int k = start - 1; k >= 0; --k) {
    r = 1.0 / (2.0 * (k + 1.0) / z + r);
    if (k <= top) scratch[k] = r;
  }
  const double l0 = log_bessel_i0(z);
  out[0] = l0;
  double acc = l0, prod = 1.0;
  for (int m = 1; m <= m_cap; ++m) {
    prod *= scratch[2 * m - 2] * scratch[2 * m - 1];
    if (prod < 1e-280) {
      acc += std::log(prod);
      prod = 1.0;
    }
    out[m] = acc + std::log(prod);
  }
}

}  // namespace roundtrip::special
