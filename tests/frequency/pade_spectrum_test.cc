// Pade spectrum decomposition (Hu, Xu, Yan, J. Chem. Phys. 133, 101106 (2010)): its poles and
// weights against the Pade property, the Matsubara limit, and free energies against the
// Matsubara sum (Lifshitz formula) of the same spectra.
#include "solver/frequency/pade_spectrum.h"

#include <gtest/gtest.h>

#include <boost/math/special_functions/zeta.hpp>
#include <cmath>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/library.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

TEST(PadeSpectrum, MatchesTheFirst2NTaylorCoefficientsOfTheBoseSeries) {
  // phi(w) = sum_n 2/(w + (n pi)^2) has Taylor coefficients (-1)^k 2 zeta(2k+2)/pi^(2k+2); the
  // [N-1/N] Pade approximant reproduces the first 2N of them (definition of a Pade approximant;
  // zeta from Boost.Math), i.e. sum_j 2 eta_j / y_j^(2k+2) = 2 zeta(2k+2) / pi^(2k+2).
  for (int n : {1, 2, 5, 12}) {
    const PadePoles p = pade_spectrum_poles(n);
    ASSERT_EQ(p.y.size(), static_cast<std::size_t>(n));
    for (int k = 0; k < 2 * n; ++k) {
      double sum = 0.0;
      for (int j = 0; j < n; ++j) sum += 2.0 * p.eta[j] * std::pow(p.y[j], -2.0 * (k + 1));
      const double exact = 2.0 * boost::math::zeta(2.0 * k + 2.0) / std::pow(kPi, 2.0 * k + 2.0);
      // Round-off of the eigenvalues (~1e-15 relative) grows with the power 2k+2 <= 50.
      constexpr double kTol = 1e-12;
      EXPECT_NEAR(sum / exact, 1.0, kTol) << "N = " << n << ", k = " << k;
    }
  }
}

TEST(PadeSpectrum, LowestPolesAreMatsubaraFrequenciesWithUnitWeight) {
  // Hu, Xu, Yan (2010): the lower half of the [N-1/N] poles converge to z = i n pi with weight 1.
  const PadePoles p = pade_spectrum_poles(40);
  for (int j = 0; j < 10; ++j) {
    EXPECT_NEAR(p.y[j] / (kPi * (j + 1)), 1.0, 1e-13) << "pole " << j;
    EXPECT_NEAR(p.eta[j], 1.0, 1e-12) << "pole " << j;
  }
  for (int j = 0; j < 40; ++j) {
    EXPECT_GT(p.eta[j], 0.0);
    if (j > 0) EXPECT_GT(p.y[j], p.y[j - 1]);
  }
  EXPECT_THROW(pade_spectrum_poles(0), std::invalid_argument);
  EXPECT_THROW(pade_spectrum_poles(kMaxPadePoles + 1), std::invalid_argument);
}

// Free energy of gold plates (Drude, built-in gold-drude) by a rule, with gradient.
FrequencySum gold_plates(double gap, double T, double tol, ThermalRule rule) {
  static const PlatePlate pp(make_half_space(builtin_material("gold-drude")),
                             make_half_space(builtin_material("gold-drude")), nullptr);
  FrequencyRuleOptions o;
  o.temperature_K = T;
  o.rel_tol = tol;
  o.thermal_rule = rule;
  return sum_over_frequencies(
      [&](double xi) { return pp.at_frequency(xi, gap, DerivativeOrder::kGradient); },
      pp.frequency_scale(gap), o);
}

TEST(PadeSpectrum, GoldPlatesAgreeWithTheMatsubaraSumWithFarFewerFrequencies) {
  // Reference: the Lifshitz Matsubara sum at rel_tol 1e-12 (plate_plate tests check it against
  // closed forms). The decomposition must meet rel_tol in E, dE/dL and d2E/dL2.
  struct Point {
    double gap, T;
  };
  for (const Point pt : {Point{100e-9, 300.0}, Point{1e-6, 1.0}, Point{20e-9, 77.0}}) {
    const FrequencySum ref = gold_plates(pt.gap, pt.T, 1e-12, ThermalRule::kMatsubara);
    ASSERT_TRUE(ref.converged) << ref.message;
    for (double tol : {1e-4, 1e-7}) {
      // Forced: at 1 um and 1 K auto takes the Matsubara terms with an integral tail (fewer).
      const FrequencySum p = gold_plates(pt.gap, pt.T, tol, ThermalRule::kPade);
      ASSERT_TRUE(p.converged) << p.message;
      EXPECT_EQ(p.rule, FrequencyRuleKind::kPadeSpectrum);
      EXPECT_EQ(p.terms.size(), static_cast<std::size_t>(p.pade_poles + 1));
      EXPECT_NEAR(p.total.value / ref.total.value, 1.0, tol) << pt.gap << " m, " << pt.T << " K";
      EXPECT_NEAR(p.total.d1 / ref.total.d1, 1.0, tol);
      EXPECT_NEAR(p.total.d2 / ref.total.d2, 1.0, tol);
      EXPECT_LE(p.abs_error, tol * std::abs(p.total.value));
      const FrequencySum m = gold_plates(pt.gap, pt.T, tol, ThermalRule::kMatsubara);
      EXPECT_LT(2 * p.terms.size(), m.terms.size()) << "the decomposition needs fewer terms";
    }
  }
}

TEST(PadeSpectrum, AutoTakesTheShorterRuleAndForcedRulesAreKept) {
  FrequencyRuleOptions o;
  o.temperature_K = 300.0;
  o.rel_tol = 1e-8;
  for (double gap : {50e-9, 50e-6}) {
    const double xi_scale = kSpeedOfLight / (2.0 * gap);
    o.thermal_rule = ThermalRule::kAuto;
    const ThermalRuleChoice c = choose_thermal_rule(xi_scale, o);
    ASSERT_EQ(c.rule, FrequencyRuleKind::kPadeSpectrum) << gap;
    EXPECT_LT(c.pade_poles + 1, c.matsubara_terms) << gap;
    EXPECT_LE(c.pade_model_error, kPadeModelFraction * o.rel_tol);
    o.thermal_rule = ThermalRule::kMatsubara;
    EXPECT_EQ(choose_thermal_rule(xi_scale, o).rule, FrequencyRuleKind::kMatsubara);
  }
  o.temperature_K = 0.0;
  EXPECT_NE(o.validate().find("needs T > 0"), std::string::npos) << o.validate();
  o.thermal_rule = ThermalRule::kAuto;
  EXPECT_EQ(choose_thermal_rule(1e15, o).rule, FrequencyRuleKind::kZeroTemperatureQuadrature);
  EXPECT_EQ(thermal_rule_from_string("pade"), ThermalRule::kPade);
  EXPECT_FALSE(thermal_rule_from_string("Pade").has_value());
}

}  // namespace
}  // namespace roundtrip
