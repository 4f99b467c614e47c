// Real dilogarithm and trilogarithm (methods and sources in polylog.h).
#include "solver/special/polylog.h"

#include <fmt/format.h>

#include <cmath>
#include <stdexcept>

#include "solver/constants.h"

namespace roundtrip::special {
namespace {

constexpr double kPi2Over6 = kPi * kPi / 6.0;

// Li_2(x) = sum_{n>=0} B_n u^{n+1}/(n+1)!, u = -ln(1-x) (Lewin eq. 1.16); used for |u| <= ln 2,
// where the terms fall like (u/2pi)^{2n}.
double dilog_bernoulli(double x) {
  // B_{2n} / (2n+1)! for n = 1..10.
  static constexpr double kC[] = {
      1.0 / 36.0,
      -1.0 / 3600.0,
      1.0 / 211680.0,
      -1.0 / 10886400.0,
      1.0 / 526901760.0,
      -4.064761645144225524e-11,
      8.921691020456452555e-13,
      -1.993929586072107569e-14,
      4.518980029619918192e-16,
      -1.035651761218124702e-17,
  };
  const double u = -std::log1p(-x);
  const double u2 = u * u;
  double sum = 0.0, p = u * u2;
  for (double c : kC) {
    sum += c * p;
    p *= u2;
  }
  return u - 0.25 * u2 + sum;
}

}  // namespace

double dilog(double x) {
  if (!(x <= 1.0)) throw std::domain_error(fmt::format("dilog: x = {} must be <= 1", x));
  if (x == 1.0) return kPi2Over6;
  if (x < -1.0) {
    // Inversion: Li2(x) = -pi^2/6 - ln^2(-x)/2 - Li2(1/x).
    const double l = std::log(-x);
    return -kPi2Over6 - 0.5 * l * l - dilog(1.0 / x);
  }
  if (x > 0.5) {
    // Reflection: Li2(x) = pi^2/6 - ln x ln(1-x) - Li2(1-x).
    return kPi2Over6 - std::log(x) * std::log1p(-x) - dilog_bernoulli(1.0 - x);
  }
  return dilog_bernoulli(x);
}

double trilog(double x) {
  if (!(x >= -1.0 && x <= 1.0))
    throw std::domain_error(fmt::format("trilog: x = {} must lie in [-1, 1]", x));
  if (x == 1.0) return kZeta3;
  if (x < -0.5) {
    // Duplication: Li3(x) + Li3(-x) = Li3(x^2)/4.
    return 0.25 * trilog(x * x) - trilog(-x);
  }
  if (x <= 0.5) {
    // Power series; |x| <= 1/2 needs at most ~50 terms.
    double sum = 0.0, p = x;
    for (int n = 1; n < 200; ++n) {
      const double term = p / (double(n) * n * n);
      sum += term;
      if (std::abs(term) < 1e-17 * std::abs(sum)) break;
      p *= x;
    }
    return sum;
  }
  // 0.5 < x < 1: Li3(e^m) = zeta(3) + zeta(2) m + (3/2 - ln(-m)) m^2/2 + sum_{k>=3} zeta(3-k)
  // m^k/k! (Lewin eq. 6.7), m = ln x in (-ln 2, 0). zeta(3-k) = 0 for odd k > 3, so beyond k = 3
  // only even k remain: zeta(-1) = -1/12, zeta(-3) = 1/120, zeta(-5) = -1/252, zeta(-7) = 1/240,
  // zeta(-9) = -1/132, zeta(-11) = 691/32760, zeta(-13) = -1/12.
  const double m = std::log(x);
  const double m2 = m * m;
  double sum = kZeta3 + kPi2Over6 * m + (1.5 - std::log(-m)) * 0.5 * m2 - m2 * m / 12.0;
  static constexpr double kEven[] = {
      -1.0 / 12.0 / 24.0,               // k = 4
      1.0 / 120.0 / 720.0,              // k = 6
      -1.0 / 252.0 / 40320.0,           // k = 8
      1.0 / 240.0 / 3628800.0,          // k = 10
      -1.0 / 132.0 / 479001600.0,       // k = 12
      691.0 / 32760.0 / 87178291200.0,  // k = 14
      -1.0 / 12.0 / 20922789888000.0,   // k = 16
  };
  double p = m2 * m2;
  for (double c : kEven) {
    sum += c * p;
    p *= m2;
  }
  return sum;
}

}  // namespace roundtrip::special
