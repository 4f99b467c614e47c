// Special functions behind the sphere round trip, against mpmath 1.x at 40 digits.
// Reference values made with (run with /usr/bin/python3):
//   import mpmath as mp; mp.mp.dps = 40
//   mp.log(mp.legenp(l, m, x, type=3))                               # Pt_l^m(x), x > 1
//   mp.log(mp.sqrt(mp.pi/(2*x))*mp.besseli(l+0.5, x))                # i_l(x)
//   mp.log(mp.sqrt(2/(mp.pi*x))*mp.besselk(l+0.5, x))                # k_l(x)
#include <gtest/gtest.h>

#include <boost/math/special_functions/bessel.hpp>
#include <cmath>

#include "solver/constants.h"
#include "solver/special/bessel.h"
#include "solver/special/gauss_laguerre.h"
#include "solver/special/legendre.h"
#include "solver/special/momentum_rule.h"

namespace roundtrip::special {
namespace {

// log values reach 1e4; double rounding of the recurrences costs ~l ulps of the log.
constexpr double kLogAbsTol = 1e-12;

struct LegendreRef {
  int l, m;
  double x, log_value;
};
// mpmath legenp(l, m, x, type=3) = (x^2-1)^{m/2} d^m P_l/dx^m.
constexpr LegendreRef kLegendre[] = {
    {1, 0, 1.5, 0.40546510810816438198},      {5, 3, 1.2, 5.2109100900153179881},
    {30, 0, 1.0001, 0.045969214627955280376}, {40, 7, 3.0, 93.333626063951698374},
    {200, 50, 1.001, 190.90493513197514222},  {600, 10, 20.0, 2273.0753886776459865},
    {1500, 700, 1.05, 5071.0074982618319937},
};

TEST(Legendre, OffCutValuesMatchMpmath) {
  std::vector<double> out;
  for (const auto& r : kLegendre) {
    legendre_log(r.x, r.m, r.l, out);
    EXPECT_NEAR(out[r.l], r.log_value, kLogAbsTol * std::max(1.0, std::abs(r.log_value)))
        << "l = " << r.l << ", m = " << r.m << ", x = " << r.x;
  }
}

TEST(Legendre, SatisfiesDerivativeIdentity) {
  // (x^2-1) dPt_l^m/dx = l x Pt_l^m - (l+m) Pt_{l-1}^m (DLMF 14.10.5), checked by a central
  // difference in x (step 1e-6: truncation ~1e-12, rounding ~1e-10 relative).
  const double x = 1.7, h = 1e-6;
  const int m = 3, l = 25;
  std::vector<double> a, b, c;
  legendre_log(x - h, m, l, a);
  legendre_log(x + h, m, l, b);
  legendre_log(x, m, l, c);
  const double deriv = (std::exp(b[l]) - std::exp(a[l])) / (2 * h);
  const double rhs = l * x * std::exp(c[l]) - (l + m) * std::exp(c[l - 1]);
  EXPECT_NEAR((x * x - 1) * deriv / rhs, 1.0, 1e-8);
}

struct BesselRef {
  int l;
  double x, log_i, log_k;
};
constexpr BesselRef kBessel[] = {
    {0, 1e-3, 1.6666666111111147078e-7, 6.9067552789821370312},
    {1, 0.5, -1.7668480994676241848, 1.2917594692280550008},
    {10, 3.0, -12.16398180077038653, 7.9813240418557256581},
    {50, 0.01, -415.47787890660212846, 415.46792855613534889},
    {300, 700.0, 629.15330758568771254, -643.0331855214165212},
    {1000, 0.05, -9604.5826667302088654, 9599.9769966679303707},
    {2500, 40.0, -9579.4883944015374621, 9567.2819938435369266},
    {20, 1e4, 9990.0755114047110526, -10009.189341429218985},
};

TEST(SphericalBessel, LogValuesMatchMpmathAtExtremeOrdersAndArguments) {
  for (const auto& r : kBessel) {
    const auto b = spherical_bessel_log(r.x, r.l);
    // log i_0 near 0 is tiny: compare absolutely there.
    EXPECT_NEAR(b.log_i[r.l], r.log_i, kLogAbsTol * std::max(1.0, std::abs(r.log_i)))
        << "i_" << r.l << "(" << r.x << ")";
    EXPECT_NEAR(b.log_k[r.l], r.log_k, kLogAbsTol * std::max(1.0, std::abs(r.log_k)))
        << "k_" << r.l << "(" << r.x << ")";
  }
}

TEST(SphericalBessel, MatchesBoostMathAtModerateOrders) {
  // Boost.Math cyl_bessel_i/k at half-integer order (independent implementation).
  for (double x : {0.1, 1.0, 7.5, 40.0}) {
    const auto b = spherical_bessel_log(x, 30);
    for (int l = 0; l <= 30; l += 3) {
      const double i = std::sqrt(kPi / (2 * x)) * boost::math::cyl_bessel_i(l + 0.5, x);
      const double k = std::sqrt(2 / (kPi * x)) * boost::math::cyl_bessel_k(l + 0.5, x);
      EXPECT_NEAR(std::exp(b.log_i[l]) / i, 1.0, 1e-12) << "l = " << l << ", x = " << x;
      EXPECT_NEAR(std::exp(b.log_k[l]) / k, 1.0, 1e-12) << "l = " << l << ", x = " << x;
    }
  }
}

double log_sum_t_power(const GaussLaguerreRule& r, int p) {
  double m = -1e300;
  std::vector<double> e(r.nodes.size());
  for (std::size_t j = 0; j < r.nodes.size(); ++j) {
    e[j] = r.log_weights[j] + p * std::log(r.nodes[j]);
    m = std::max(m, e[j]);
  }
  double s = 0;
  for (double v : e) s += std::exp(v - m);
  return m + std::log(s);
}

TEST(GaussLaguerre, IntegratesPolynomialsExactly) {
  // \int_0^inf t^p e^{-t} dt = p!, exact for p <= 2N-1 (Abramowitz & Stegun 25.4.45).
  for (int n : {5, 60, 400}) {
    const auto& r = gauss_laguerre(n);
    for (int p = 0; p <= 2 * n - 1; p += std::max(1, n / 7))
      // Rounding: each of the N weights and nodes carries a few ulps -> ~1e-14 N relative.
      EXPECT_NEAR(log_sum_t_power(r, p), std::lgamma(p + 1.0),
                  1e-14 * n * (1 + std::lgamma(p + 1.0)))
          << "N = " << n << ", p = " << p;
  }
}

TEST(MomentumRule, IntegratesHighPowersWithFewNodes) {
  // Composite rule in sqrt(t): measured worst error 1.4e-8 (4 nodes/unit) and 7e-12 (6/unit) in
  // log(\int t^p e^{-t}) for p <= 4000; the test bounds them with a factor ~2 margin.
  for (auto [npu, tol] : {std::pair{4, 3e-8}, std::pair{6, 2e-11}}) {
    const auto& r = momentum_rule(4000, npu);
    EXPECT_LT(r.nodes.size(), 450u);  // vs 2001 Gauss-Laguerre nodes for exactness
    for (int p = 0; p <= 4000; p += 250)
      EXPECT_NEAR(log_sum_t_power(r, p), std::lgamma(p + 1.0), tol) << "p = " << p;
  }
}

}  // namespace
}  // namespace roundtrip::special
