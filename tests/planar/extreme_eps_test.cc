// Accepted extreme permittivities (eps up to the double range, oscillator strengths of 1e300):
// Fresnel coefficients take the eps -> inf limits instead of losing the TE part, and plates give
// the perfect-conductor energy. Regression of issue 11 item 6 (E was half the PEC value).
#include <gtest/gtest.h>

#include <cmath>
#include <limits>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/layered.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

MaterialPtr huge_constant() { return make_constant("huge", 1.7e308); }
MaterialPtr huge_oscillator() {
  DrudeLorentzParams p;
  p.oscillators.push_back({1e300, 1e16, 0.0});
  return std::make_shared<DrudeLorentz>("strong", p);
}
MaterialPtr overflowing_sum() {  // eps_inf + C = 3.4e308: the sum itself leaves the double range
  DrudeLorentzParams p;
  p.eps_inf = 1.7e308;
  p.oscillators.push_back({1.7e308, 1e16, 0.0});
  return std::make_shared<DrudeLorentz>("overflowing", p);
}

FrequencySum plates(const PlanarPtr& a, double gap, double T, double rel_tol) {
  const PlatePlate pp(a, a, nullptr);
  FrequencyRuleOptions o;
  o.temperature_K = T;
  o.rel_tol = rel_tol;
  return sum_over_frequencies(
      [&](double xi) { return pp.at_frequency(xi, gap, DerivativeOrder::kGradient); },
      pp.frequency_scale(gap), o);
}

TEST(ExtremePermittivity, FresnelCoefficientsTakeThePerfectConductorLimit) {
  // r_TE -> -1, r_TM -> +1 as eps -> inf at xi > 0 (standard); the deviation is
  // ~2 kappa/(sqrt(eps) xi/c) < 1e-130 here (derived), so the limits hold to every digit.
  const auto vacuum = make_vacuum();
  for (const auto& m : {huge_constant(), huge_oscillator(), overflowing_sum()}) {
    const auto hs = make_half_space(m);
    for (double xi : {1e9, 1e13, 1e15, 1e17}) {
      const auto at = hs->at(xi, *vacuum);
      for (double k : {0.0, 1e5, 1e7, 1e9}) {
        const Reflection r = at->reflect(k);
        EXPECT_DOUBLE_EQ(r.te, -1.0) << m->name() << " xi = " << xi << " k = " << k;
        EXPECT_DOUBLE_EQ(r.tm, 1.0) << m->name() << " xi = " << xi << " k = " << k;
      }
    }
    // xi = 0: a dielectric has no static TE reflection (r_TE = 0) and r_TM = (e - 1)/(e + 1) = 1
    // (standard), also when eps(0) = eps_inf + C overflowed.
    const Reflection r0 = hs->at(0.0, *vacuum)->reflect(1e7);
    EXPECT_EQ(r0.te, 0.0) << m->name();
    EXPECT_DOUBLE_EQ(r0.tm, 1.0) << m->name();
  }
}

TEST(ExtremePermittivity, PlatesGiveThePerfectConductorEnergyAtZeroTemperature) {
  // eps = 1.7e308 and C = 1e300 plates: E, dE/dL, d2E/dL2 of perfect mirrors,
  // -pi^2 hbar c/(720 L^3) (Casimir, Proc. KNAW 51, 793 (1948)), to rel_tol.
  constexpr double kTol = 1e-8;
  const double L = 100e-9;
  const double e0 = -kPi * kPi * kHbarC / (720.0 * L * L * L);
  for (const auto& m : {huge_constant(), huge_oscillator(), overflowing_sum()}) {
    const FrequencySum r = plates(make_half_space(m), L, 0.0, kTol);
    ASSERT_TRUE(r.converged) << r.message;
    EXPECT_NEAR(r.total.value / e0, 1.0, kTol) << m->name();
    EXPECT_NEAR(r.total.d1 / (-3.0 * e0 / L), 1.0, kTol) << m->name();
    EXPECT_NEAR(r.total.d2 / (12.0 * e0 / (L * L)), 1.0, kTol) << m->name();
  }
}

TEST(ExtremePermittivity, ThermalPlatesDifferFromPerfectMirrorsOnlyByTheStaticTeTerm) {
  // At T > 0 a dielectric, however large eps, has r_TE(0) = 0, a perfect conductor -1; the n = 0
  // TE term of ideal plates is (k_B T/2)(1/2 pi) \int k dk ln(1 - e^{-2kL}) = -k_B T zeta(3)/(16 pi
  // L^2) (derived; Lifshitz). So E(eps -> inf) = E_PEC + k_B T zeta(3)/(16 pi L^2).
  constexpr double kTol = 1e-8;
  const double L = 1e-6, T = 300.0;
  const FrequencySum pec = plates(make_half_space(make_perfect_conductor()), L, T, 1e-10);
  ASSERT_TRUE(pec.converged) << pec.message;
  const double te0 = kBoltzmann * T * kZeta3 / (16.0 * kPi * L * L);
  for (const auto& m : {huge_constant(), huge_oscillator()}) {
    const FrequencySum r = plates(make_half_space(m), L, T, kTol);
    ASSERT_TRUE(r.converged) << r.message;
    EXPECT_NEAR(r.total.value / (pec.total.value + te0), 1.0, kTol) << m->name();
  }
}

TEST(ExtremePermittivity, AFilmOfHugeEpsIsAPerfectMirror) {
  // A 10 nm film of eps = 1.7e308 on gold: kappa d >~ 1e139, nothing below is seen (standard,
  // transfer matrices); the plates give the perfect-mirror energy at T = 0.
  constexpr double kTol = 1e-8;
  const double L = 100e-9;
  const double e0 = -kPi * kPi * kHbarC / (720.0 * L * L * L);
  const auto film =
      make_layered({Layer{huge_constant(), 10e-9}}, make_drude("gold", 1.37e16, 5.3e13));
  const FrequencySum r = plates(film, L, 0.0, kTol);
  ASSERT_TRUE(r.converged) << r.message;
  EXPECT_NEAR(r.total.value / e0, 1.0, kTol);
  const auto vacuum = make_vacuum();
  const Reflection r0 = film->at(0.0, *vacuum)->reflect(1e7);
  EXPECT_TRUE(std::isfinite(r0.te) && std::isfinite(r0.tm));
}

}  // namespace
}  // namespace roundtrip
