// The PFA-correction fit recovers known coefficients (an invariant of the fitting, not physics).
#include "solver/pfa/theta_fit.h"

#include <gtest/gtest.h>

#include <cmath>

namespace roundtrip {
namespace {

TEST(ThetaFit, RecoversCoefficientsOfAQuadraticCorrection) {
  // E/E_PFA = 1 + theta x + theta2 x^2 exactly: the linear regression of (ratio-1)/x is exact.
  const double theta = 1.0 / 3.0 - 20.0 / (M_PI * M_PI), theta2 = 2.4;
  std::vector<double> x{0.005, 0.01, 0.02, 0.03}, r;
  for (double v : x) r.push_back(1 + theta * v + theta2 * v * v);
  const ThetaFit f = fit_theta(x, r, 1e-12);
  ASSERT_TRUE(f.valid);
  EXPECT_NEAR(f.theta, theta, 1e-8);
  EXPECT_NEAR(f.theta2, theta2, 1e-6);
  EXPECT_LT(f.uncertainty, 1e-8);
}

TEST(ThetaFit, UncertaintyCoversAnOmittedHalfIntegerTerm) {
  // A x^{3/2} term the model does not have: the quoted uncertainty must cover the bias.
  const double theta = -1.69;
  std::vector<double> x, r;
  for (double v = 0.005; v <= 0.1; v *= 1.5) {
    x.push_back(v);
    r.push_back(1 + theta * v + 3.0 * std::pow(v, 1.5) + 1.0 * v * v);
  }
  const ThetaFit f = fit_theta(x, r, 1e-6);
  ASSERT_TRUE(f.valid);
  EXPECT_LT(std::abs(f.theta - theta), 2 * f.uncertainty);
}

TEST(ThetaFit, TooFewPointsIsReportedNotGuessed) {
  const ThetaFit f = fit_theta({0.01, 0.02}, {0.99, 0.98}, 1e-6);
  EXPECT_FALSE(f.valid);
  EXPECT_FALSE(f.message.empty());
}

}  // namespace
}  // namespace roundtrip
