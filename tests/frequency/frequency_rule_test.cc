// Frequency rules against sums and integrals with closed forms.
#include "solver/frequency/frequency_rule.h"

#include <gtest/gtest.h>

#include <cmath>

#include "solver/constants.h"

namespace roundtrip {
namespace {

// Closed-form spectral function s(xi) = A e^{-a xi} with "derivatives" B e^{-a xi}, C e^{-a xi}.
SpectralFunction exponential(double a) {
  return [a](double xi) {
    const double e = std::exp(-a * xi);
    return Spectral{e, -2.0 * e, 3.0 * e};
  };
}

TEST(MatsubaraSum, ExponentialEqualsGeometricSeriesWithHalfWeightAtZero) {
  // Sum' e^{-a xi_n} = 1/2 + q/(1-q), q = e^{-a xi_1} (geometric series; standard).
  FrequencyRuleOptions opts;
  opts.temperature_K = 300.0;
  opts.rel_tol = 1e-13;
  opts.thermal_rule = ThermalRule::kMatsubara;
  const double xi1 = matsubara_frequency(1, opts.temperature_K);
  const double a = 0.05 / xi1;  // slow decay: ~700 terms
  const FrequencySum r = sum_over_frequencies(exponential(a), 1.0 / a, opts);
  const double q = std::exp(-a * xi1);
  const double exact = kBoltzmann * opts.temperature_K * (0.5 + q / (1.0 - q));
  // The sum stops once the geometric tail is below rel_tol |sum|, and the tail is not added.
  const double kTol = 2.0 * opts.rel_tol;
  ASSERT_TRUE(r.converged) << r.message;
  EXPECT_NEAR(r.total.value / exact, 1.0, kTol);
  EXPECT_NEAR(r.total.d1 / (-2.0 * exact), 1.0, kTol);
  EXPECT_NEAR(r.total.d2 / (3.0 * exact), 1.0, kTol);
  // The geometric tail estimate is the neglected remainder kT q^N/(1-q) (N terms summed); only
  // round-off in the ratio of two terms separates them.
  const double remainder =
      kBoltzmann * opts.temperature_K * std::pow(q, double(r.terms.size())) / (1.0 - q);
  EXPECT_NEAR(r.abs_error / remainder, 1.0, 1e-6);
  ASSERT_GE(r.terms.size(), 2u);
  EXPECT_DOUBLE_EQ(r.terms[0].xi, 0.0);
  EXPECT_DOUBLE_EQ(r.terms[0].weight, 0.5 * kBoltzmann * opts.temperature_K);
  EXPECT_DOUBLE_EQ(r.terms[1].weight, kBoltzmann * opts.temperature_K);
  EXPECT_DOUBLE_EQ(r.terms[1].xi, xi1);
}

TEST(MatsubaraSum, ReportsNonConvergenceAtTermLimit) {
  FrequencyRuleOptions opts;
  opts.temperature_K = 1.0;
  opts.max_matsubara_terms = 10;
  opts.thermal_rule = ThermalRule::kMatsubara;  // auto would take the Pade decomposition here
  const double xi1 = matsubara_frequency(1, opts.temperature_K);
  const FrequencySum r = sum_over_frequencies(exponential(1e-3 / xi1), xi1, opts);
  EXPECT_FALSE(r.converged);
  EXPECT_FALSE(r.message.empty());
  EXPECT_EQ(r.terms.size(), 10u);
}

TEST(ZeroTemperatureRule, ExponentialIntegralIsExact) {
  // (hbar/2pi) \int_0^inf e^{-a xi} dxi = hbar / (2 pi a) (elementary).
  FrequencyRuleOptions opts;
  opts.rel_tol = 1e-12;
  const double a = 1.0 / 3e15;
  const FrequencySum r = sum_over_frequencies(exponential(a), 1e15, opts);  // scale off by 3
  const double exact = kHbar / (2.0 * kPi * a);
  // The double-exponential rule converges far past its stopping change; 1e-12 is the target.
  const double kTol = 1e-12;
  ASSERT_TRUE(r.converged) << r.message;
  EXPECT_NEAR(r.total.value / exact, 1.0, kTol);
  EXPECT_NEAR(r.total.d1 / (-2.0 * exact), 1.0, kTol);
  EXPECT_NEAR(r.total.d2 / (3.0 * exact), 1.0, kTol);
  EXPECT_LT(r.abs_error, 1e-10 * exact);
  // total is the sum of the recorded terms.
  double sum = 0.0;
  for (const auto& t : r.terms) sum += t.weight * t.s.value;
  EXPECT_NEAR(sum / r.total.value, 1.0, 1e-15);
  for (std::size_t i = 1; i < r.terms.size(); ++i) EXPECT_LT(r.terms[i - 1].xi, r.terms[i].xi);
}

TEST(ZeroTemperatureRule, SquareRootStructureNearZeroIsResolved) {
  // \int_0^inf sqrt(xi/(xi+b)) e^{-xi} dxi with b = 1e-10 mimics the narrow Drude TE structure
  // near xi = 0. Reference from mpmath 1.x (30 digits):
  //   mp.quad(lambda x: mp.sqrt(x/(x+b))*mp.exp(-x), [0, b, 1e-6, 1e-3, 1, mp.inf])
  FrequencyRuleOptions opts;
  opts.rel_tol = 1e-10;
  const double b = 1e-10;
  auto f = [b](double xi) {
    const double v = std::sqrt(xi / (xi + b)) * std::exp(-xi);
    return Spectral{v, 0.0, 0.0};
  };
  const FrequencySum r = sum_over_frequencies(f, 1.0, opts);
  const double approx = (kHbar / (2.0 * kPi)) * 0.999999998858253518603303283978;
  // The requested rel_tol; the stopping change over-estimates the error of the finer level.
  const double kTol = opts.rel_tol;
  ASSERT_TRUE(r.converged) << r.message;
  EXPECT_NEAR(r.total.value / approx, 1.0, kTol);
}

TEST(ZeroTemperatureRule, IntegrandThatCancelsToZeroStillConverges) {
  // \int_0^inf (1 - xi) e^{-xi} dxi = 0 (elementary): convergence is judged against
  // \int |s| (= 2/e), not against the vanishing total.
  FrequencyRuleOptions opts;
  opts.rel_tol = 1e-10;
  auto f = [](double xi) { return Spectral{(1.0 - xi) * std::exp(-xi), 0.0, 0.0}; };
  const FrequencySum r = sum_over_frequencies(f, 1.0, opts);
  ASSERT_TRUE(r.converged) << r.message;
  // rel_tol times \int |s| (2/e), in units of hbar/2pi.
  const double kTol = opts.rel_tol * 2.0 / std::exp(1.0);
  EXPECT_NEAR(r.total.value / (kHbar / (2.0 * kPi)), 0.0, kTol);
}

TEST(FrequencyRuleOptions, ValidateNamesTheBadField) {
  FrequencyRuleOptions o;
  EXPECT_TRUE(o.validate().empty());
  o.temperature_K = -1.0;
  EXPECT_NE(o.validate().find("temperature_K"), std::string::npos);
  o = {};
  o.rel_tol = 0.0;
  EXPECT_NE(o.validate().find("rel_tol"), std::string::npos);
  o = {};
  o.max_matsubara_terms = 0;
  EXPECT_NE(o.validate().find("max_matsubara_terms"), std::string::npos);
  EXPECT_EQ(to_string(FrequencyRuleKind::kMatsubara), "matsubara");
}

}  // namespace
}  // namespace roundtrip
