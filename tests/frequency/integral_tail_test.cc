// Low temperatures: Matsubara terms with an integral tail (frequency_rule.h) against closed
// forms, the plain Matsubara sum where it converges, and the T = 0 limit.
#include <gtest/gtest.h>

#include <cmath>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/library.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

FrequencySum plates(const MaterialPtr& m, double gap, double temperature, double rel_tol,
                    ThermalRule rule, DerivativeOrder order = DerivativeOrder::kGradient,
                    int max_terms = 200000) {
  auto p = make_half_space(m);
  const PlatePlate pp(p, p, nullptr);
  FrequencyRuleOptions o;
  o.temperature_K = temperature;
  o.rel_tol = rel_tol;
  o.thermal_rule = temperature > 0.0 ? rule : ThermalRule::kAuto;
  o.max_matsubara_terms = max_terms;
  return sum_over_frequencies([&](double xi) { return pp.at_frequency(xi, gap, order); },
                              pp.frequency_scale(gap), o);
}

MaterialPtr gold() {
  return make_drude("gold", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv);
}

TEST(GregoryCorrection, SumsGeometricAndPowerSeriesToItsErrorEstimate) {
  // sum_{n>=0} e^{-a n} = 1/(1 - e^{-a}), \int_0^inf e^{-a n} dn = 1/a (elementary);
  // sum_{n>=16} (n+1)^-4 = zeta(4) - sum_{m<=16} m^-4, \int_16^inf (n+1)^-4 dn = 1/(3 17^3).
  // (a = 1 is outside the asymptotic regime: |Delta^k f| falls only like 0.63^k; the rule
  // detects that through its error estimate and takes a larger N.)
  for (double a : {0.05, 0.3}) {
    std::vector<Spectral> f;
    for (int j = 0; j <= kGregoryDifferences; ++j) f.push_back({std::exp(-a * j), 0.0, 0.0});
    const GregoryCorrection g = gregory_tail_correction(f);
    const double exact = 1.0 / (-std::expm1(-a)) - 1.0 / a;
    // The error is below the last term used (the estimate) for a smooth tail.
    EXPECT_LE(std::abs(g.value.value - exact), std::abs(g.last.value)) << a;
    // The next term, |G_8| a^7 = 7.3e-12 at a = 0.05, is the expected error.
    if (a <= 0.05) EXPECT_NEAR(g.value.value, exact, 1e-11);
  }
  const double zeta4 = kPi * kPi * kPi * kPi / 90.0;
  double head = 0.0;
  for (int m = 1; m <= 16; ++m) head += std::pow(m, -4.0);
  std::vector<Spectral> f;
  for (int j = 0; j <= kGregoryDifferences; ++j) f.push_back({std::pow(17.0 + j, -4.0), 0.0, 0.0});
  const GregoryCorrection g = gregory_tail_correction(f);
  const double exact = (zeta4 - head) - 1.0 / (3.0 * 17.0 * 17.0 * 17.0);
  EXPECT_LE(std::abs(g.value.value - exact), std::abs(g.last.value));
  EXPECT_NEAR(g.value.value / exact, 1.0, 1e-5);  // (last term: 2e-5 of the correction)
}

TEST(IntegralTailRule, PerfectMirrorsFollowTheLowTemperatureExpansion) {
  // E(T)/E(0) = 1 + (45 zeta(3)/pi^3) t^3 - t^4, t = 2 k_B T L/(hbar c), for ideal plates up to
  // terms ~exp(-pi/t) (from memory, classic result; verified here against the plain Matsubara
  // sum at 10 K). Derivatives, from E = E0(L)(1 + A t^3 - t^4) with E0 ~ L^-3, t ~ L (derived):
  // (dE/dL)/(dE0/dL) = 1 + t^4/3, d2E/dL2 = d2E0/dL2. L = 1 um, T = 10 K: t = 8.7e-3, a shift of
  // 1.1e-6 of E; exp(-pi/t) ~ 1e-157.
  const double L = 1e-6, T = 10.0;
  const auto pec = make_perfect_conductor();
  const FrequencySum zero = plates(pec, L, 0.0, 1e-13, ThermalRule::kAuto);
  ASSERT_TRUE(zero.converged) << zero.message;
  const double t = 2.0 * kBoltzmann * T * L / kHbarC;
  const double shift = 45.0 * kZeta3 / (kPi * kPi * kPi) * t * t * t - t * t * t * t;
  const FrequencySum plain = plates(pec, L, T, 1e-13, ThermalRule::kMatsubara);
  ASSERT_TRUE(plain.converged) << plain.message;
  for (double tol : {1e-6, 1e-9, 1e-12}) {
    // Forced (at 10 K and 1 um auto takes the Pade decomposition, which needs fewer).
    const FrequencySum r = plates(pec, L, T, tol, ThermalRule::kIntegralTail);
    ASSERT_TRUE(r.converged) << r.message;
    EXPECT_EQ(r.rule, FrequencyRuleKind::kMatsubaraIntegralTail) << tol;
    EXPECT_LT(r.terms.size(), plain.terms.size()) << tol;
    // Both results carry <= tol; the T = 0 reference 1e-13.
    const double bound = tol + 2e-13;
    EXPECT_NEAR(r.total.value / zero.total.value - 1.0, shift, bound) << tol;
    EXPECT_NEAR(r.total.d1 / zero.total.d1 - 1.0, t * t * t * t / 3.0, bound) << tol;
    EXPECT_NEAR(r.total.d2 / zero.total.d2, 1.0, bound) << tol;
    EXPECT_NEAR(r.total.value / plain.total.value, 1.0, tol + 1e-13) << tol;
    EXPECT_LE(r.abs_error, tol * std::abs(r.total.value));
  }
  EXPECT_NEAR(plain.total.value / zero.total.value - 1.0, shift, 3e-13);
}

TEST(IntegralTailRule, ReachesTheZeroTemperatureLimitDownToANanokelvin) {
  // Ideal plates at 100 nm: the thermal shift is (45 zeta(3)/pi^3) t^3 < 1e-11 below 10 mK
  // (t = 8.7e-7 at 10 mK); the rule must give E(0) to rel_tol with few terms at any T.
  const auto pec = make_perfect_conductor();
  const double L = 100e-9;
  const FrequencySum zero = plates(pec, L, 0.0, 1e-12, ThermalRule::kAuto);
  ASSERT_TRUE(zero.converged) << zero.message;
  // Down to 1e-300 K (k_B T denormal): the model spectrum of the rule choice was non-finite below
  // ~1e-14 K (ln(1 - e^-a) with e^-a rounded to 1), and auto fell back to an unconverged sum.
  for (double T : {1e-2, 1e-5, 1e-9, 1e-20, 1e-300}) {
    for (double tol : {1e-4, 1e-8}) {
      const FrequencySum r = plates(pec, L, T, tol, ThermalRule::kAuto);
      ASSERT_TRUE(r.converged) << r.message << " T = " << T;
      EXPECT_EQ(r.rule, FrequencyRuleKind::kMatsubaraIntegralTail);
      EXPECT_LT(r.terms.size(), 150u) << T;
      EXPECT_NEAR(r.total.value / zero.total.value, 1.0, tol + 1e-11) << T;
      EXPECT_NEAR(r.total.d1 / zero.total.d1, 1.0, tol + 1e-11) << T;
      EXPECT_NEAR(r.total.d2 / zero.total.d2, 1.0, tol + 1e-11) << T;
    }
  }
}

TEST(IntegralTailRule, GoldPlatesAgreeWithThePlainMatsubaraSumAt3And30K) {
  // Reference: the Lifshitz Matsubara sum at rel_tol 1e-12 (standard; ~1.8e4 terms at 3 K).
  const double L = 200e-9;
  for (double T : {3.0, 30.0}) {
    const FrequencySum ref = plates(gold(), L, T, 1e-12, ThermalRule::kMatsubara);
    ASSERT_TRUE(ref.converged) << ref.message;
    for (double tol : {1e-6, 1e-9}) {
      const FrequencySum r = plates(gold(), L, T, tol, ThermalRule::kIntegralTail);
      ASSERT_TRUE(r.converged) << r.message;
      EXPECT_EQ(r.rule, FrequencyRuleKind::kMatsubaraIntegralTail);
      EXPECT_NEAR(r.total.value / ref.total.value, 1.0, tol) << T;
      EXPECT_NEAR(r.total.d1 / ref.total.d1, 1.0, tol) << T;
      EXPECT_NEAR(r.total.d2 / ref.total.d2, 1.0, tol) << T;
      // The reported error bounds the true one (value).
      EXPECT_LE(std::abs(r.total.value - ref.total.value),
                r.abs_error + 1e-12 * std::abs(ref.total.value))
          << T;
    }
  }
}

TEST(IntegralTailRule, DrudeGoldTendsToTheZeroTemperatureResultWithoutAJump) {
  // Drude gold with gamma > 0: s(xi) is continuous at xi = 0+ for fixed k (r_TE -> 0 as
  // kappa_1^2 - k^2 = omega_p^2 xi/(gamma c^2) -> 0; derived), so E(T) -> E(0) as T -> 0 once
  // the Matsubara spacing 2 pi k_B T/hbar is far below the Drude TE scale
  // gamma c^2/(omega_p L)^2 ~ 6e11 rad/s (200 nm): the "linear" term k_B T (s(0) - s(0+))/2 of
  // the rule vanishes. At 1e-9 K any bounded thermal term is below k_B T |s|max ~ 1e-11 of E
  // (derived). Reference: the T = 0 rule at 1e-12 and the exp-sinh T = 0 rule (independent).
  const double L = 200e-9;
  const FrequencySum zero = plates(gold(), L, 0.0, 1e-12, ThermalRule::kAuto);
  ASSERT_TRUE(zero.converged) << zero.message;
  for (double tol : {1e-6, 1e-10}) {
    const FrequencySum r = plates(gold(), L, 1e-9, tol, ThermalRule::kAuto);
    ASSERT_TRUE(r.converged) << r.message;
    EXPECT_EQ(r.rule, FrequencyRuleKind::kMatsubaraIntegralTail);
    EXPECT_NEAR(r.total.value / zero.total.value, 1.0, tol + 1e-11);
    EXPECT_NEAR(r.total.d1 / zero.total.d1, 1.0, tol + 1e-11);
    EXPECT_NEAR(r.total.d2 / zero.total.d2, 1.0, tol + 1e-11);
  }
}

TEST(IntegralTailRule, KeepsTheDrudeStaticJumpWhenTheSpacingExceedsTheTeScale) {
  // At 1 um the Drude TE scale gamma c^2/(omega_p L)^2 is 2.5e10 rad/s; at 2 K the first
  // Matsubara frequency (1.6e12 rad/s) lies far above it, so the n = 0 TE term is missing against
  // its neighbours: the known large thermal correction of Drude metals (Bostrom & Sernelius,
  // PRL 84, 4757 (2000); from memory). The rule's n = 0 term is explicit, so it must agree with
  // the plain sum (standard) to rel_tol, and differ from E(0) by about
  // k_B T s_TE(0+)/2 ~ k_B T zeta(3)/(16 pi L^2) ~ 8e-4 of E (ideal TE plate term; derived, rough).
  const double L = 1e-6, T = 2.0;
  const FrequencySum ref = plates(gold(), L, T, 1e-12, ThermalRule::kMatsubara);
  ASSERT_TRUE(ref.converged) << ref.message;
  const FrequencySum zero = plates(gold(), L, 0.0, 1e-10, ThermalRule::kAuto);
  const FrequencySum r = plates(gold(), L, T, 1e-8, ThermalRule::kIntegralTail);
  ASSERT_TRUE(r.converged) << r.message;
  EXPECT_NEAR(r.total.value / ref.total.value, 1.0, 1e-8);
  EXPECT_GT(std::abs(r.total.value / zero.total.value - 1.0), 3e-4);
}

// Gold (Drude) plates at 200 nm and 10 mK, energy: the plain Matsubara sum (standard Lifshitz
// sum, no approximation) at rel_tol 1e-12 with the cap lifted needs ~2.5e6 terms (minutes on one
// core), so it ran once (DISABLED_GoldAt10mKPlainSumReference, run with
// --gtest_also_run_disabled_tests) and its value is pasted here.
// Output of that run: "plain sum: 2356372 terms, E = -3.6707975923821714e-08 J/m^2 (tail bound
// 3.67e-20)", 367 s. (E at T = 0 is -3.6707975977520e-08: the thermal shift, 1.5e-9 of E, is
// below the rel_tol tested, so the 1e-9 case is what checks the tail rule beyond E(0).)
constexpr double kGold10mKPlainSum = -3.6707975923821714e-08;  // J/m^2

TEST(IntegralTailRule, GoldAt10mKMatchesThePlainSumWithTheCapLifted) {
  for (double tol : {1e-6, 1e-9, 1e-11}) {
    const FrequencySum r = plates(gold(), 200e-9, 0.01, tol, ThermalRule::kAuto);
    ASSERT_TRUE(r.converged) << r.message;
    EXPECT_EQ(r.rule, FrequencyRuleKind::kMatsubaraIntegralTail);
    // The reference carries <= 1e-12 (its geometric tail bound).
    EXPECT_NEAR(r.total.value / kGold10mKPlainSum, 1.0, tol + 1e-12) << tol;
  }
}

TEST(IntegralTailRule, DISABLED_GoldAt10mKPlainSumReference) {
  const FrequencySum ref = plates(gold(), 200e-9, 0.01, 1e-12, ThermalRule::kMatsubara,
                                  DerivativeOrder::kEnergy, 10000000);
  ASSERT_TRUE(ref.converged) << ref.message;
  printf("plain sum: %zu terms, E = %.17g J/m^2 (tail bound %.3g)\n", ref.terms.size(),
         ref.total.value, ref.abs_error);
  EXPECT_NEAR(ref.total.value / kGold10mKPlainSum, 1.0, 1e-12);
}

TEST(IntegralTailRule, CheckWarnsOnlyWhereARuleCannotConverge) {
  FrequencyRuleOptions o;
  o.rel_tol = 1e-6;
  const double xi_scale = kSpeedOfLight / (2.0 * 200e-9);
  for (double T : {1e-300, 1e-9, 1e-2, 1.0, 300.0}) {
    o.temperature_K = T;
    o.thermal_rule = ThermalRule::kAuto;
    EXPECT_EQ(frequency_rule_problem(xi_scale, o), "") << T;
  }
  o.temperature_K = 1e-2;
  o.thermal_rule = ThermalRule::kMatsubara;
  EXPECT_NE(frequency_rule_problem(xi_scale, o).find("cap of 200000"), std::string::npos)
      << frequency_rule_problem(xi_scale, o);
  EXPECT_EQ(thermal_rule_from_string("integral-tail"), ThermalRule::kIntegralTail);
}

}  // namespace
}  // namespace roundtrip
