// Complete Fermi-Dirac integrals F_{1/2}, F_{-1/2} (fermi_dirac.h).
#include "solver/special/fermi_dirac.h"

#include <boost/math/quadrature/exp_sinh.hpp>
#include <boost/math/quadrature/tanh_sinh.hpp>
#include <boost/math/special_functions/zeta.hpp>
#include <boost/math/tools/roots.hpp>
#include <cmath>
#include <cstdint>
#include <limits>

#include "solver/constants.h"

namespace roundtrip::special {
namespace {

constexpr double kSommerfeldFrom = 40.0;
constexpr double kTol = 1e-14;

// (1/Gamma(j+1)) * 2 int u^{2j+1} f(u) du with f the Fermi factor; scaled by e^{-eta} for eta <= 0.
double quadrature(bool half, double eta) {
  const double norm = half ? 2.0 / (0.5 * std::sqrt(kPi)) : 2.0 / std::sqrt(kPi);
  const auto power = [half](double u) { return half ? u * u : 1.0; };
  if (eta <= 0.0) {
    // e^{-eta}/(1 + e^{u^2 - eta}) = e^{-u^2}/(1 + e^{eta - u^2}).
    const auto f = [&](double u) {
      const double e = std::exp(-u * u);
      return power(u) * e / (1.0 + std::exp(eta) * e);
    };
    thread_local boost::math::quadrature::exp_sinh<double> right;
    return norm * right.integrate(f, 0.0, std::numeric_limits<double>::infinity(), kTol);
  }
  const double u0 = std::sqrt(eta);
  const auto f = [&](double u) {
    const double x = u * u - eta;
    return x > 0.0 ? power(u) * std::exp(-x) / (1.0 + std::exp(-x))
                   : power(u) / (1.0 + std::exp(x));
  };
  thread_local boost::math::quadrature::tanh_sinh<double> inner;
  thread_local boost::math::quadrature::exp_sinh<double> outer;
  return norm * (inner.integrate(f, 0.0, u0, kTol) +
                 outer.integrate(f, u0, std::numeric_limits<double>::infinity(), kTol));
}

double sommerfeld(bool half, double eta) {
  const double j = half ? 0.5 : -0.5;
  double sum = 1.0, falling = 1.0, inv2 = 1.0 / (eta * eta), p = 1.0;
  for (int k = 1; k <= 8; ++k) {
    falling *= (j + 1.0 - (2 * k - 2)) * (j + 1.0 - (2 * k - 1));
    p *= inv2;
    sum += 2.0 * (1.0 - std::ldexp(1.0, 1 - 2 * k)) * boost::math::zeta(2.0 * k) * falling * p;
  }
  return std::pow(eta, j + 1.0) / std::tgamma(j + 2.0) * sum;
}

double value(bool half, double eta) {
  return eta > kSommerfeldFrom ? sommerfeld(half, eta) : quadrature(half, eta);
}

}  // namespace

double fermi_dirac_half(double eta) { return value(true, eta); }
double fermi_dirac_minus_half(double eta) { return value(false, eta); }

double log_fermi_dirac(bool half, double eta) {
  const double v = value(half, eta);
  return eta <= 0.0 ? eta + std::log(v) : std::log(v);
}

double fermi_dirac_ratio(double eta) { return value(false, eta) / value(true, eta); }

double fermi_dirac_half_inverse(double ratio) {
  // F_{1/2}(eta) <= e^eta, and F_{1/2}(eta) >= eta^{3/2}/Gamma(5/2) for eta > 0 (derived: the
  // Fermi step's excess above eta outweighs its deficit below): a bracket [ln r, (Gamma(5/2)
  // r)^{2/3}].
  const double target = std::log(ratio);
  double lo = target, hi = std::pow(0.75 * std::sqrt(kPi) * ratio, 2.0 / 3.0);
  if (hi < lo) hi = lo;
  const auto g = [&](double eta) { return log_fermi_dirac(true, eta) - target; };
  const double glo = g(lo), ghi = g(hi);
  if (glo >= 0.0) return lo;
  if (ghi <= 0.0) return hi;
  std::uintmax_t iters = 200;
  const auto r = boost::math::tools::toms748_solve(
      g, lo, hi, glo, ghi, boost::math::tools::eps_tolerance<double>(50), iters);
  return 0.5 * (r.first + r.second);
}

}  // namespace roundtrip::special
