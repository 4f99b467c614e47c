// The plane-wave (Nystrom) round trip of the cylinder-plate geometry against the order basis
// (solver/geometries/cylinder_plate.cc). Both discretise the same determinant: the order basis
// |m| <= M exactly, the plane-wave path through the trapezoid rule in t (k_x = p sinh t) of the
// plate's round trip and Sylvester's identity det(1 + AB) = det(1 + BA) (derived; the
// representation as in Spreng, Ingold, Maia Neto, J. Chem. Phys. 153, 024115 (2020)).
#include <fmt/format.h>
#include <gtest/gtest.h>

#include <cmath>

#include "solver/constants.h"
#include "solver/geometries/cylinder_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

constexpr double kEv = 1.519267447e15;  // rad/s per eV
// Drude gold, omega_p = 9 eV, gamma = 35 meV (common practice; Bordag, Mohideen, Mostepanenko,
// Phys. Rep. 353, 1 (2001)).
MaterialPtr drude_gold() { return make_drude("gold-drude", 9.0 * kEv, 0.035 * kEv); }

// Agreement of the two bases: 1e-9 relative. With rel_tol 1e-11 the step check of the
// plane-wave path stops at a difference below 5e-13 between two steps (trapezoid error squared
// twice per halving), and both sides use the same orders M.
constexpr double kBasisAgreement = 1e-9;
constexpr double kTightTol = 1e-11;

void expect_same(const Spectral& a, const Spectral& b, const std::string& what) {
  EXPECT_NEAR(a.value / b.value, 1.0, kBasisAgreement) << what;
  EXPECT_NEAR(a.d1 / b.d1, 1.0, kBasisAgreement) << what;
  EXPECT_NEAR(a.d2 / b.d2, 1.0, kBasisAgreement) << what;
}

TEST(CylinderPlaneWave, ScalarChannelsEqualTheOrderBasis) {
  const double L = 1e-6;
  for (double RL : {1.0, 5.0, 20.0})
    for (FieldKind ch : {FieldKind::kDirichlet, FieldKind::kNeumann})
      for (double pL : {0.02, 0.5, 3.0}) {
        const double R = RL * L, p = pL / L;
        int M = 0, J = 0;
        const Spectral a = cylinder_plate_logdet(ch, p, R, R + L, DerivativeOrder::kGradient,
                                                 kTightTol, 0, &M, RoundTripBasis::kOrders);
        const Spectral b =
            cylinder_plate_logdet(ch, p, R, R + L, DerivativeOrder::kGradient, kTightTol, M,
                                  nullptr, RoundTripBasis::kPlaneWaves, &J);
        EXPECT_GT(J, 0);
        expect_same(b, a,
                    fmt::format("{} R/L = {} pL = {} M = {} J = {}", to_string(ch), RL, pL, M, J));
      }
}

TEST(CylinderPlaneWave, GoldVectorPathEqualsTheOrderBasis) {
  const double L = 1e-6;
  const auto gold = drude_gold();
  const auto vac = make_vacuum();
  const auto plate = make_half_space(gold);
  // (xi L/c, k_z L): the static term, k_z = 0, and TE/TM mixing at small and large k_z.
  const double nodes[4][2] = {{0.0, 0.1}, {0.3, 0.0}, {0.3, 1.5}, {2.0, 0.1}};
  for (double RL : {1.0, 5.0, 20.0})
    for (const auto& nd : nodes) {
      const double xiL = nd[0], kzL = nd[1];
      const double R = RL * L, xi = xiL * kSpeedOfLight / L, kz = kzL / L;
      const auto at = plate->at(xi, *vac);
      int M = 0, J = 0;
      const Spectral a = cylinder_plate_vector_logdet(*gold, *at, *vac, xi, kz, R, R + L,
                                                      DerivativeOrder::kGradient, kTightTol, 0, &M,
                                                      RoundTripBasis::kOrders);
      const Spectral b = cylinder_plate_vector_logdet(*gold, *at, *vac, xi, kz, R, R + L,
                                                      DerivativeOrder::kGradient, kTightTol, M,
                                                      nullptr, RoundTripBasis::kPlaneWaves, &J);
      expect_same(b, a,
                  fmt::format("R/L = {} xiL/c = {} kzL = {} M = {} J = {}", RL, xiL, kzL, M, J));
    }
}

// The plane-wave path's analytic H-derivatives against central differences (derived). Step
// 1e-4 L: truncation error ~1e-8 relative, rounding ~1e-12/1e-4.
TEST(CylinderPlaneWave, AnalyticGapDerivativesMatchFiniteDifferences) {
  const double R = 20e-6, L = 1e-6, H0 = R + L, h = 1e-4 * L;
  const auto gold = drude_gold();
  const auto vac = make_vacuum();
  const double xi = 0.5 * kSpeedOfLight / L, kz = 0.7 / L;
  const auto at = make_half_space(gold)->at(xi, *vac);
  const auto f = [&](double H) {
    return cylinder_plate_vector_logdet(*gold, *at, *vac, xi, kz, R, H, DerivativeOrder::kGradient,
                                        kTightTol, 150, nullptr, RoundTripBasis::kPlaneWaves);
  };
  const Spectral c = f(H0), a = f(H0 - h), b = f(H0 + h);
  EXPECT_NEAR((b.value - a.value) / (2 * h) / c.d1, 1.0, 1e-6);
  EXPECT_NEAR((b.d1 - a.d1) / (2 * h) / c.d2, 1.0, 1e-6);
  const auto g = [&](double H) {
    return cylinder_plate_logdet(FieldKind::kNeumann, 0.5 / L, R, H, DerivativeOrder::kGradient,
                                 kTightTol, 150, nullptr, RoundTripBasis::kPlaneWaves);
  };
  const Spectral sc = g(H0), sa = g(H0 - h), sb = g(H0 + h);
  EXPECT_NEAR((sb.value - sa.value) / (2 * h) / sc.d1, 1.0, 1e-6);
  EXPECT_NEAR((sb.d1 - sa.d1) / (2 * h) / sc.d2, 1.0, 1e-6);
}

// The automatic choice takes the plane waves at R/L = 1e3 and their node count grows like
// sqrt(R/L) while the order cut-off grows like R/L (derived, cylinder_plate.cc); the result
// agrees with the order basis to the requested accuracy.
TEST(CylinderPlaneWave, AutomaticChoiceAndNodeScaling) {
  const double L = 1e-6, tol = 1e-6;
  int J[2], M[2];
  for (int k = 0; k < 2; ++k) {
    const double R = (k == 0 ? 100.0 : 1000.0) * L;
    const Spectral a =
        cylinder_plate_logdet(FieldKind::kNeumann, 0.5 / L, R, R + L, DerivativeOrder::kGradient,
                              tol, 0, &M[k], RoundTripBasis::kAuto, &J[k]);
    ASSERT_GT(J[k], 0) << "M = " << M[k];
    if (k == 0) {
      const Spectral b =
          cylinder_plate_logdet(FieldKind::kNeumann, 0.5 / L, R, R + L, DerivativeOrder::kGradient,
                                tol, 0, nullptr, RoundTripBasis::kOrders);
      EXPECT_NEAR(a.value / b.value, 1.0, tol);
      EXPECT_NEAR(a.d1 / b.d1, 1.0, tol);
    }
  }
  std::printf("R/L = 1e2: M = %d, J = %d; R/L = 1e3: M = %d, J = %d\n", M[0], J[0], M[1], J[1]);
  EXPECT_GT(double(M[1]) / M[0], 6.0);  // ~10
  EXPECT_LT(double(J[1]) / J[0], 5.0);  // ~sqrt(10)
}

}  // namespace
}  // namespace roundtrip
