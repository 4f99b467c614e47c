// The xi > 0 round trip with W built over each column's band of non-negligible rows
// (solver/geometries/sphere_plate.cc, dynamic_block) against the reference path that builds
// every column over all l from the recurrence at l = m (WBuild::kFullRange): an
// independent computation of the same matrix (Laplace's integral and a recurrence started at
// the band edge versus the recurrence from l = m).
#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>

#include "solver/constants.h"
#include "solver/geometries/sphere_plate.h"
#include "solver/materials/models.h"

namespace roundtrip {
namespace {

// Both paths carry W entries in log form with logs up to ~1e4 (l acosh x, log T_l); single
// entries differ by up to 1e-10 at R/L = 200 (mostly the reference's running sum of logs), but
// the entries that carry s and its derivatives much less: their differences stay below 1e-13
// (measured, 8e-14 at most). 1e-12 is the acceptance target of the band builder.
constexpr double kRelTol = 1e-12;

void expect_same(SpherePlateOptions o, double ratio, double u, const char* what) {
  const double gap = o.radius / ratio, xi = u * kSpeedOfLight / (2.0 * gap);
  // The band build cross-checked block by block: same recorded bands and zeros (what the banded
  // Gram in solver/logdet/low_rank.cc relies on), entries within 1e-9 (at_frequency throws
  // otherwise).
  o.w_build = WBuild::kBandCheckedAgainstFullRange;
  const auto band = make_sphere_plate(o);
  o.w_build = WBuild::kFullRange;
  const auto full = make_sphere_plate(o);
  Spectral a;
  ASSERT_NO_THROW(a = band->at_frequency(xi, gap, DerivativeOrder::kGradient)) << what;
  const Spectral b = full->at_frequency(xi, gap, DerivativeOrder::kGradient);
  ASSERT_TRUE(std::isfinite(a.value) && std::isfinite(a.d1) && std::isfinite(a.d2)) << what;
  const double ev = std::abs(a.value / b.value - 1.0), e1 = std::abs(a.d1 / b.d1 - 1.0),
               e2 = std::abs(a.d2 / b.d2 - 1.0);
  std::printf("%-10s R/L %5g u %4g: rel. differences s %.1e, ds/dL %.1e, d2s/dL2 %.1e\n", what,
              ratio, u, ev, e1, e2);
  EXPECT_LE(ev, kRelTol) << what << " R/L = " << ratio << ", u = " << u;
  EXPECT_LE(e1, kRelTol) << what << " R/L = " << ratio << ", u = " << u;
  EXPECT_LE(e2, kRelTol) << what << " R/L = " << ratio << ", u = " << u;
}

SpherePlateOptions drude_gold() {
  SpherePlateOptions o;
  o.radius = 20e-6;
  // Drude gold, common practice; Svetovoy et al., PRB 77, 035439 (2008)
  o.sphere = make_drude("gold-drude", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv);
  o.plate = make_half_space(o.sphere);
  o.rel_tol = 1e-4;
  return o;
}

TEST(BandedW, DrudeSphereOverDrudePlateEqualsFullRangeBuild) {
  for (double ratio : {10.0, 50.0, 200.0})
    for (double u : {0.3, 1.0, 5.0}) expect_same(drude_gold(), ratio, u, "Drude");
}

TEST(BandedW, PecSphereAndScalarFieldsEqualFullRangeBuild) {
  SpherePlateOptions pec = drude_gold();
  pec.sphere = make_perfect_conductor();
  pec.plate = make_half_space(pec.sphere);
  for (double ratio : {10.0, 50.0, 200.0}) expect_same(pec, ratio, 1.0, "PEC");
  for (FieldKind f : {FieldKind::kDirichlet, FieldKind::kNeumann}) {
    SpherePlateOptions o;
    o.radius = 20e-6;
    o.field = f;
    o.rel_tol = 1e-6;
    for (double ratio : {10.0, 50.0, 200.0})
      for (double u : {0.3, 1.0, 5.0})
        expect_same(o, ratio, u, f == FieldKind::kDirichlet ? "Dirichlet" : "Neumann");
  }
}

}  // namespace
}  // namespace roundtrip
