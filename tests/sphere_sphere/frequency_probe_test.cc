// Geometry::probe of two spheres (the frequency split into set-up and m blocks that `check`
// times by parts, solver/plan_timing.h) computes the same work as the run: with a fixed m_max
// the m sum s = sum_m (2 - delta_m0) log det(1 - M_m) of the probe's blocks equals
// at_frequency_within, on the mirror path (equal spheres) and the general path (unequal), at
// xi > 0 and xi = 0. Derived (the same formulas, sphere_sphere.cc); the weight 2 - delta_m0 is
// the +m/-m symmetry (common practice).
#include <gtest/gtest.h>

#include <cmath>
#include <string>

#include "solver/geometries/sphere_sphere.h"
#include "solver/materials/models.h"

namespace roundtrip {
namespace {

// The same blocks summed in the same order up to the parallel batches: rounding only.
constexpr double kRoundingTol = 1e-12;

TEST(SphereSphereProbe, BlocksSumToTheFrequencyOfTheRun) {
  // Dielectrics of invented constant permittivity (eps = 4 and 2.5).
  const MaterialPtr a = make_constant("eps4", 4.0), b = make_constant("eps2.5", 2.5);
  for (const bool equal : {true, false}) {
    SphereSphereOptions o;
    o.radius1 = 2e-6;
    o.radius2 = equal ? 2e-6 : 3e-6;
    o.sphere1 = a;
    o.sphere2 = equal ? a : b;
    o.rel_tol = 1e-4;
    o.m_max = 5;
    const auto g = make_sphere_sphere(o);
    const double gap = 4e-7;
    for (const double xi : {0.0, g->frequency_scale(gap)}) {
      const auto p = g->probe(xi, gap, DerivativeOrder::kGradient, o.rel_tol);
      ASSERT_NE(p, nullptr) << "xi = " << xi;
      ASSERT_EQ(p->blocks(), o.m_max + 1);
      Spectral sum;
      for (int mm = 0; mm < p->blocks(); ++mm) sum += p->block(mm) * (mm == 0 ? 1.0 : 2.0);
      const Spectral run = g->at_frequency_within(xi, gap, DerivativeOrder::kGradient, o.rel_tol);
      const std::string where =
          std::string(equal ? "equal spheres" : "unequal spheres") + ", xi = " + std::to_string(xi);
      EXPECT_NEAR(sum.value, run.value, kRoundingTol * std::abs(run.value)) << where;
      EXPECT_NEAR(sum.d1, run.d1, kRoundingTol * std::abs(run.d1)) << where;
      EXPECT_NEAR(sum.d2, run.d2, kRoundingTol * std::abs(run.d2)) << where;
    }
  }
}

}  // namespace
}  // namespace roundtrip
