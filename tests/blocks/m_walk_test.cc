// The sampled walk over m (solver/blocks/m_walk.h) against the plain sum of every block.
// Checks: design (the error control of m_walk.h: each panel's interpolation within
// kPanelBudget rel_tol of the sum, the tail cut within 0.1 rel_tol), so the walk's sum must lie
// within 0.1 rel_tol of the sum of every block; the synthetic terms have the shapes measured on
// gold sphere-plate (a |m| kink at m = 0, e^{-beta m} near it, Gaussian further out; README
// "Performance"); the sphere-plate check compares with every block of the same frequency
// (SpherePlate::probe), the value the dense sum converges to.
#include <gtest/gtest.h>
#include <omp.h>

#include <cmath>
#include <set>
#include <string>
#include <vector>

#include "solver/blocks/m_sum.h"
#include "solver/constants.h"
#include "solver/geometries/sphere_plate.h"
#include "solver/geometries/sphere_sphere.h"
#include "solver/materials/library.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

using Terms = std::function<Spectral(int)>;

// The sum of every block m = 0 .. mlimit (m > 0 twice), in order.
Spectral plain_sum(const Terms& f, int mlimit) {
  Spectral s;
  for (int m = 0; m <= mlimit; ++m) s += f(m) * (m == 0 ? 1.0 : 2.0);
  return s;
}

struct Walked {
  Spectral total;
  std::set<int> computed;
};

Walked walk(const Terms& f, int mlimit, bool fixed, double tol,
            DerivativeOrder order = DerivativeOrder::kGradient) {
  Walked w;
  const auto block = [&](int m) {
    LogDetResult r;
    r.s = f(m);
#pragma omp critical
    w.computed.insert(m);
    return r;
  };
  const auto fail = [](int, const LogDetResult&) { return std::string("failed"); };
  w.total = blocks::sum_over_m(mlimit, fixed, order, tol, block, fail);
  return w;
}

void expect_equal(const Spectral& got, const Spectral& ref) {
  EXPECT_EQ(got.value, ref.value);
  EXPECT_EQ(got.d1, ref.d1);
  EXPECT_EQ(got.d2, ref.d2);
}

void expect_within(const Spectral& got, const Spectral& ref, double rel) {
  EXPECT_LE(std::abs(got.value - ref.value), rel * std::abs(ref.value));
  EXPECT_LE(std::abs(got.d1 - ref.d1), rel * std::abs(ref.d1));
  EXPECT_LE(std::abs(got.d2 - ref.d2), rel * std::abs(ref.d2));
}

// The shape of gold sphere-plate terms at R/L = 1000 (measured, n = 5 at 300 K): s_0 off the
// curve of m >= 1, then e^{-beta m - gamma m^2}; the derivatives fall more slowly near m = 0.
Spectral sphere_like(int m) {
  if (m == 0) return {-3.28, 4.04e7, -5.88e14};
  const double x = m;
  return {-3.50 * std::exp(-0.065 * x - 1.5e-4 * x * x),
          4.26e7 * std::exp(-0.052 * x - 1.8e-4 * x * x),
          -6.0e14 * std::exp(-0.036 * x - 2.0e-4 * x * x)};
}

TEST(MWalk, SampledSumOfSphereLikeTermsIsWithinATenthOfTheTolerance) {
  const int mlimit = 5000;
  const Spectral all = plain_sum(sphere_like, mlimit);
  for (const double tol : {1e-3, 1e-4, 1e-5, 1e-6}) {
    SCOPED_TRACE(tol);
    const Walked w = walk(sphere_like, mlimit, false, tol);
    expect_within(w.total, all, 0.1 * tol);
    // The dense sum needs ~200-300 blocks here; the walk a fraction of them.
    EXPECT_LT(w.computed.size(), 60u);
  }
}

TEST(MWalk, ASignChangeInsideTheCurveIsSummedBlockByBlockThere) {
  // d1 changes sign at m = 40.5: panels across it fail and are refined to single blocks.
  const auto f = [](int m) {
    Spectral s = sphere_like(m);
    if (m > 0) s.d1 *= (40.5 - m) / 40.5;
    return s;
  };
  const Spectral all = plain_sum(f, 3000);
  const Walked w = walk(f, 3000, false, 1e-5);
  expect_within(w.total, all, 1e-6);
  EXPECT_TRUE(w.computed.count(40) && w.computed.count(41));
}

TEST(MWalk, FastFallOffStopsInTheFirstBatchAsTheDenseSum) {
  // Small R/L: the tail test of the first batch (m = 0 .. 7) ends the sum, added in order.
  const auto f = [](int m) {
    return Spectral{-std::exp(-2.0 * m), 0.5 * std::exp(-2.1 * m), -0.2 * std::exp(-1.9 * m)};
  };
  const Walked w = walk(f, 400, false, 1e-4);
  EXPECT_EQ(w.computed.size(), 8u);
  expect_equal(w.total, plain_sum(f, 7));
}

TEST(MWalk, FixedMMaxAddsEveryBlockInOrder) {
  const Walked w = walk(sphere_like, 150, true, 1e-4);
  EXPECT_EQ(w.computed.size(), 151u);
  expect_equal(w.total, plain_sum(sphere_like, 150));
}

TEST(MWalk, ShortLimitsAndEnergyOnly) {
  for (const int mlimit : {0, 3, 7, 8, 12, 20, 45}) {
    SCOPED_TRACE(mlimit);
    const Walked w = walk(sphere_like, mlimit, false, 1e-4, DerivativeOrder::kEnergy);
    EXPECT_LE(std::abs(w.total.value - plain_sum(sphere_like, mlimit).value),
              1e-5 * std::abs(plain_sum(sphere_like, mlimit).value));
    for (int m : w.computed) EXPECT_LE(m, mlimit);
  }
}

TEST(MWalk, SameNumbersOnOneAndTwoThreads) {
  const int threads = omp_get_max_threads();
  omp_set_num_threads(1);
  const Walked one = walk(sphere_like, 5000, false, 1e-5);
  omp_set_num_threads(2);
  const Walked two = walk(sphere_like, 5000, false, 1e-5);
  omp_set_num_threads(threads);
  expect_equal(one.total, two.total);
  EXPECT_EQ(one.computed, two.computed);
}

// Gold (Drude) sphere over gold, R/L = 200, the first Matsubara frequency at 300 K: the
// sampled sum against every block up to 1e-13 of the sum, E, dE/dL, d2E/dL2.
TEST(MWalk, SpherePlateFrequencyAgreesWithEveryBlockSummed) {
  SpherePlateOptions o;
  o.radius = 20e-6;
  o.sphere = builtin_material("gold-drude");
  o.plate = make_half_space(o.sphere);
  o.rel_tol = 1e-4;
  const auto g = make_sphere_plate(o);
  const double gap = 100e-9;
  const double xi = 2.0 * kPi * kBoltzmann * 300.0 / kHbar;  // Matsubara n = 1 (common practice)
  const Spectral sampled = g->at_frequency(xi, gap, DerivativeOrder::kGradient);
  const auto probe = g->probe(xi, gap, DerivativeOrder::kGradient, o.rel_tol);
  ASSERT_TRUE(probe);
  Spectral all;
  for (int m = 0; m < probe->blocks(); ++m) {
    const Spectral s = probe->block(m);
    all += s * (m == 0 ? 1.0 : 2.0);
    if (std::abs(s.value) < 1e-13 * std::abs(all.value) &&
        std::abs(s.d2) < 1e-13 * std::abs(all.d2))
      break;
  }
  expect_within(sampled, all, 0.1 * o.rel_tol);
}

}  // namespace
}  // namespace roundtrip

namespace roundtrip {
namespace {

// The walk against the dense m sum of the same frequency (a fixed m_max far beyond the tail:
// every block up to it added), for spheres of every static class over gold and for two spheres:
// Drude and plasma gold, a perfect conductor, silica (dielectric), at xi = 0 (closed form or
// multipole path), 0.5 and 6 c/2L; equal and unequal gold spheres. R/L = 50, R_eff/L = 50 and
// 29, rel_tol 1e-4.
// Measured with R/L = 100 ... 2000 (18 sphere-plate cases, 6 sphere-sphere): at most 5.6e-6.
TEST(MWalk, SpheresOfEveryKindAgreeWithTheDenseSum) {
  const double tol = 1e-4, gap = 100e-9;
  const auto within = [&](const Geometry& walk, const Geometry& dense, double u) {
    SCOPED_TRACE(u);
    const double xi = u * kSpeedOfLight / (2.0 * gap);
    expect_within(walk.at_frequency(xi, gap, DerivativeOrder::kGradient),
                  dense.at_frequency(xi, gap, DerivativeOrder::kGradient), 0.1 * tol);
  };
  for (const char* m : {"gold-drude", "gold-plasma", "perfect-conductor", "silica"}) {
    SCOPED_TRACE(m);
    SpherePlateOptions o;
    o.radius = 5e-6;
    o.sphere = builtin_material(m);
    o.plate = make_half_space(builtin_material("gold-drude"));
    o.rel_tol = tol;
    SpherePlateOptions d = o;
    d.m_max = 150;  // the terms fall below 1e-12 of the sum by m ~ 100 here
    const auto g = make_sphere_plate(o), gd = make_sphere_plate(d);
    for (double u : {0.0, 0.5, 6.0}) within(*g, *gd, u);
  }
  for (const double r2 : {10e-6, 4e-6}) {
    SCOPED_TRACE(r2);
    SphereSphereOptions o;
    o.radius1 = 10e-6;
    o.radius2 = r2;
    o.sphere1 = o.sphere2 = builtin_material("gold-drude");
    o.rel_tol = tol;
    SphereSphereOptions d = o;
    d.m_max = 150;
    const auto g = make_sphere_sphere(o), gd = make_sphere_sphere(d);
    for (double u : {0.0, 0.5}) within(*g, *gd, u);
  }
}

}  // namespace
}  // namespace roundtrip
