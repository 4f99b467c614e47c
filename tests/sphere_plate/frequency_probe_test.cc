// Geometry::probe (the frequency split into set-up and m blocks that `check` times by parts,
// solver/plan_timing.h) computes the same work as the run: with a fixed m_max the m sum
// s = sum_m (2 - delta_m0) log det(1 - M_m) of the probe's blocks equals at_frequency_within
// at xi > 0 and at xi = 0 (multipole path of a dielectric sphere). Derived (the same formulas,
// sphere_plate.cc); the weight 2 - delta_m0 is the +m/-m symmetry (common practice).
#include <gtest/gtest.h>

#include <cmath>

#include "solver/constants.h"
#include "solver/geometries/sphere_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

// The same blocks summed in the same order up to the parallel batches: rounding only.
constexpr double kRoundingTol = 1e-12;

TEST(FrequencyProbe, BlocksSumToTheFrequencyOfTheRun) {
  SpherePlateOptions o;
  o.radius = 2e-6;
  // Dielectric (eps = 4, invented): its static sphere factor is not 1, so xi = 0 takes the
  // multipole path, which the probe splits too.
  const MaterialPtr m = make_constant("eps4", 4.0);
  o.sphere = m;
  o.plate = make_half_space(m);
  o.rel_tol = 1e-4;
  o.m_max = 6;
  const auto g = make_sphere_plate(o);
  const double gap = 2e-7;
  for (const double xi : {0.0, g->frequency_scale(gap)}) {
    const auto p = g->probe(xi, gap, DerivativeOrder::kGradient, o.rel_tol);
    ASSERT_NE(p, nullptr) << "xi = " << xi;
    ASSERT_EQ(p->blocks(), o.m_max + 1);
    Spectral sum;
    for (int mm = 0; mm < p->blocks(); ++mm) sum += p->block(mm) * (mm == 0 ? 1.0 : 2.0);
    const Spectral run = g->at_frequency_within(xi, gap, DerivativeOrder::kGradient, o.rel_tol);
    EXPECT_NEAR(sum.value, run.value, kRoundingTol * std::abs(run.value)) << "xi = " << xi;
    EXPECT_NEAR(sum.d1, run.d1, kRoundingTol * std::abs(run.d1)) << "xi = " << xi;
    EXPECT_NEAR(sum.d2, run.d2, kRoundingTol * std::abs(run.d2)) << "xi = " << xi;
  }
}

TEST(FrequencyProbe, StaticClosedFormAndPlatesAreNotSplit) {
  // A Drude sphere's xi = 0 term is the closed form (Bimonte & Emig, PRL 109, 160403 (2012)):
  // one Bessel-kernel matrix per m, timed whole.
  const double wp = 9.0 * kRadPerSecondPerEv, gamma = 0.035 * kRadPerSecondPerEv;
  SpherePlateOptions o;
  o.radius = 2e-6;
  o.sphere = make_drude("gold-drude", wp, gamma);
  o.plate = make_half_space(o.sphere);
  o.rel_tol = 1e-4;
  const auto g = make_sphere_plate(o);
  EXPECT_EQ(g->probe(0.0, 2e-7, DerivativeOrder::kEnergy, 1e-4), nullptr);
  EXPECT_NE(g->probe(g->frequency_scale(2e-7), 2e-7, DerivativeOrder::kEnergy, 1e-4), nullptr);
}

}  // namespace
}  // namespace roundtrip
