// Legendre functions started away from l = m (solver/special/legendre.h): Laplace's integral on
// the saddle-point line and the rescaled recurrence from a band edge, against mpmath and against
// the recurrence from l = m (legendre_log, an independent path).
// mpmath 1.2.1 reference values, 40 digits (run with /usr/bin/python3):
//   import mpmath as mp; mp.mp.dps = 40
//   mp.log(mp.legenp(l, m, mp.mpf(x), type=3, maxprec=200000, maxterms=10**6))
//   mp.log(mp.rf(l + 1, m))                                            # log((l+m)!/l!)
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <vector>

#include "solver/special/legendre.h"

namespace roundtrip::special {
namespace {

// A log of size |v| is known to a few ulps, ~2e-16 |v| (logs reach 1e4: the value itself then
// carries ~1e-12 relative rounding, in any log-form path), plus 1e-13 relative in the value.
double log_tol(double v) { return 1e-13 + 1e-15 * std::abs(v); }
// The recurrence from l = m (the reference path) sums ~l logs: up to ~sqrt(l) ulps of log Pt,
// ~1e-14 |log Pt| at l ~ 8000; and near x = 1, where the two solutions of the recurrence grow
// alike, each step's rounding is carried along (~1e-16 l relative): 5.7e-12 (measured against
// mpmath at l = 8000, x - 1 = 1e-7).
double recurrence_tol(double v) { return 1e-11 + 1e-14 * std::abs(v); }

struct Ref {
  int l, m;
  double x, log_value;
};
// The (l, m, x) range of the sphere-plate blocks at R/L <= 1000 (x - 1 = t / (2 kappa D) down to
// ~1e-7, l up to ~8000, m up to ~300).
constexpr Ref kRefs[] = {
    {1000, 0, 1.0000001, 0.0494373289426235791096}, {3000, 1, 1.00001, 19.17884147211281026666},
    {2500, 7, 1.001, 163.089574171993172044},       {1200, 150, 1.01, 1165.835217223830367506},
    {5000, 300, 1.0001, 2213.704710592760153888},   {8000, 50, 1.5, 8143.555093241936933501},
    {2000, 300, 20.0, 9628.741154537309578983},     {7400, 250, 1.000002, 1593.790216815231092697},
    {4000, 100, 3.0, 7874.365455633650361282},      {8000, 0, 1.0000001, 2.064235306072753464686},
};

TEST(LegendreStart, LaplaceIntegralMatchesMpmath) {
  for (const auto& r : kRefs) {
    double lp, lr;
    legendre_log_start(r.x, r.m, r.l, lp, lr);
    EXPECT_NEAR(lp, r.log_value, log_tol(r.log_value))
        << "l = " << r.l << ", m = " << r.m << ", x = " << r.x;
  }
}

TEST(LegendreStart, RangeFromABandEdgeMatchesMpmath) {
  // The value at l reached by 200 steps of the recurrence from a start below it. Near x = 1 each
  // step's rounding is carried along (see recurrence_tol): 2.3e-13 measured at l = 1000,
  // x - 1 = 1e-7; 5e-13 allows for it.
  std::vector<double> a(201), b(201);
  for (const auto& r : kRefs) {
    legendre_log_range_pair(r.x, r.m, r.l - 200, 201, a.data(), b.data());
    EXPECT_NEAR(a[200], r.log_value, 4e-13 + log_tol(r.log_value))
        << "l = " << r.l << ", m = " << r.m << ", x = " << r.x;
  }
}

TEST(LegendreStart, LaplaceIntegralMatchesTheRecurrenceFromLEqualsM) {
  // Over the used range, l - m >= 100 (the band builder starts there only beyond l - m = 250),
  // to the reference's own error (recurrence_tol; at l = 1000, x - 1 = 1e-7 the recurrence is
  // 1.3e-12 off mpmath, Laplace's integral 8e-14).
  std::vector<double> ref;
  for (double x : {1.0 + 1e-7, 1.0 + 1e-5, 1.0 + 1e-3, 1.01, 1.1, 1.5, 3.0, 20.0, 60.0})
    for (int m : {0, 1, 2, 7, 50, 150, 300, 700})
      for (int dl : {100, 401, 1000, 3000, 8000}) {
        const int l = m + dl;
        legendre_log(x, m, l + 1, ref);
        double lp, lr;
        legendre_log_start(x, m, l, lp, lr);
        const double tol = recurrence_tol(ref[l]);
        EXPECT_NEAR(lp, ref[l], tol) << "x - 1 = " << x - 1 << ", m = " << m << ", l = " << l;
        EXPECT_NEAR(lr, ref[l + 1] - ref[l], tol + recurrence_tol(ref[l + 1]))
            << "x - 1 = " << x - 1 << ", m = " << m << ", l = " << l;
        // The saddle-point estimate that locates the bands: within a few units of the log
        // (sphere_plate.cc keeps a margin of 4 below the negligible level, and verifies).
        EXPECT_NEAR(legendre_log_estimate(x, m, l), ref[l], 1.0)
            << "x - 1 = " << x - 1 << ", m = " << m << ", l = " << l;
      }
}

TEST(LegendreStart, RangePairMatchesTheRecurrenceFromLEqualsM) {
  // Windows that start at l = m (closed form), just above it, and far above it (Laplace start).
  std::vector<double> r0, r1, a, b;
  for (double x : {1.0 + 1e-6, 1.003, 1.2, 7.0})
    for (int m : {0, 3, 120})
      for (int l0 : {0, m, m + 5, m + 450, m + 2500}) {
        const int n = 700;
        legendre_log(x, m, l0 + n, r0);
        legendre_log(x, m + 1, l0 + n, r1);
        a.assign(n, 0.0);
        b.assign(n, 0.0);
        legendre_log_range_pair(x, m, l0, n, a.data(), b.data());
        for (int i = 0; i < n; ++i) {
          const int l = l0 + i;
          if (l < m) {
            EXPECT_EQ(a[i], -INFINITY);
          } else {
            EXPECT_NEAR(a[i], r0[l], recurrence_tol(r0[l])) << x << " " << m << " " << l;
          }
          if (l < m + 1) {
            EXPECT_EQ(b[i], -INFINITY);
          } else {
            EXPECT_NEAR(b[i], r1[l], recurrence_tol(r1[l])) << x << " " << m << " " << l;
          }
        }
      }
}

TEST(LegendreStart, LogRisingFactorialMatchesMpmath) {
  // mpmath: log(rf(l + 1, m))
  struct R {
    int l, m;
    double v;
  };
  constexpr R kR[] = {{0, 5, 4.787491742782045994248},      {40, 7, 26.48208292256897304059},
                      {7400, 300, 2678.790984084511190055}, {31, 30, 114.6468237345295918046},
                      {32, 30, 115.3082222167749568129},    {100000, 1, 11.51293546492022875342}};
  for (const auto& r : kR)
    EXPECT_NEAR(log_rising_factorial(r.l, r.m), r.v, 4e-16 * std::max(1.0, r.v))
        << r.l << " " << r.m;
}

}  // namespace
}  // namespace roundtrip::special
