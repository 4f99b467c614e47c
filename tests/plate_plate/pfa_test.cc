// Derjaguin PFA built on the plate-plate Lifshitz result.
#include "solver/pfa/pfa.h"

#include <gtest/gtest.h>

#include <boost/math/quadrature/gauss_kronrod.hpp>
#include <cmath>

#include "solver/constants.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

PlatePlate plates_of(MaterialPtr m) {
  auto h = make_half_space(std::move(m));
  return PlatePlate(h, h, nullptr);
}

FrequencyRuleOptions rule(double temperature, double rel_tol) {
  FrequencyRuleOptions o;
  o.temperature_K = temperature;
  o.rel_tol = rel_tol;
  return o;
}

TEST(Pfa, PecSphereEnergyMatchesDerjaguinWithCasimirEnergy) {
  // E_PFA = -pi^3 hbar c R/(720 L^2), F_PFA = 2 pi R E_pp = -pi^3 hbar c R/(360 L^3),
  // F'_PFA = -2 pi R P_pp = pi^3 hbar c R/(120 L^4) (Derjaguin, Kolloid Z. 69, 155 (1934) with
  // Casimir 1948; derived).
  const PlatePlate pp = plates_of(make_perfect_conductor());
  const double R = 50e-6;
  constexpr double kTol = 1e-10;  // as for the plate-plate PEC check
  for (double L : {1e-7, 1e-6}) {
    FrequencySum summary;
    const PfaValues v = sphere_plate_pfa(pp, R, L, rule(0.0, 1e-12), &summary);
    EXPECT_TRUE(summary.converged) << summary.message;
    const double c = kPi * kPi * kPi * kHbarC * R;
    EXPECT_NEAR(v.energy / (-c / (720.0 * L * L)), 1.0, kTol) << "L = " << L;
    EXPECT_NEAR(v.force / (-c / (360.0 * L * L * L)), 1.0, kTol) << "L = " << L;
    EXPECT_NEAR(v.gradient / (c / (120.0 * L * L * L * L)), 1.0, kTol) << "L = " << L;
  }
}

TEST(Pfa, GoldEnergyIsTwoPiRTimesIntegralOfPlateEnergy) {
  // E_PFA = 2 pi R \int_L^inf E_pp(L') dL', F_PFA = 2 pi R E_pp(L), F' = -2 pi R P_pp (Derjaguin
  // 1934). The L' integral by Boost.Math Gauss-Kronrod in u = L/L' (independent of the closed
  // Li_2 form used by the solver). Drude gold at 300 K.
  const PlatePlate pp =
      plates_of(make_drude("gold-drude", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv));
  const double R = 20e-6, L = 300e-9;
  const FrequencyRuleOptions o = rule(300.0, 1e-11);
  auto plate = [&](double gap) {
    return sum_over_frequencies(
               [&](double xi) { return pp.at_frequency(xi, gap, DerivativeOrder::kForce); },
               pp.frequency_scale(gap), o)
        .total;
  };
  auto integrand = [&](double u) { return u > 0.0 ? plate(L / u).value * L / (u * u) : 0.0; };
  double gk_error = 0.0;
  const double integral = boost::math::quadrature::gauss_kronrod<double, 31>::integrate(
      integrand, 0.0, 1.0, 10, 1e-10, &gk_error);
  const PfaValues v = sphere_plate_pfa(pp, R, L, o);
  const Spectral e = plate(L);
  // Quadrature tolerances 1e-10 (Gauss-Kronrod) and 1e-11 (frequency sums): 1e-9.
  constexpr double kTol = 1e-9;
  EXPECT_NEAR(v.energy / (2.0 * kPi * R * integral), 1.0, kTol);
  EXPECT_NEAR(v.force / (2.0 * kPi * R * e.value), 1.0, kTol);
  EXPECT_NEAR(v.gradient / (2.0 * kPi * R * e.d1), 1.0, kTol);
}

TEST(Pfa, TwoPecSpheresUseEffectiveRadius) {
  // E = -pi^3 hbar c R1 R2/(720 (R1+R2) L^2) (Derjaguin, Kolloid Z. 69, 155 (1934); derived).
  const PlatePlate pp = plates_of(make_perfect_conductor());
  const double R1 = 10e-6, R2 = 30e-6, L = 200e-9;
  const PfaValues v = sphere_plate_pfa(pp, pfa_effective_radius(R1, R2), L, rule(0.0, 1e-12));
  constexpr double kTol = 1e-10;
  EXPECT_NEAR(v.energy / (-kPi * kPi * kPi * kHbarC * R1 * R2 / (720.0 * (R1 + R2) * L * L)), 1.0,
              kTol);
  EXPECT_DOUBLE_EQ(pfa_effective_radius(R1, R1), R1 / 2.0);
}

TEST(Pfa, RejectsNonPositiveRadius) {
  const PlatePlate pp = plates_of(make_perfect_conductor());
  try {
    sphere_plate_pfa(pp, 0.0, 1e-7, rule(0.0, 1e-6));
    FAIL() << "no exception";
  } catch (const std::invalid_argument& e) {
    EXPECT_NE(std::string(e.what()).find("radius"), std::string::npos);
  }
}

}  // namespace
}  // namespace roundtrip
