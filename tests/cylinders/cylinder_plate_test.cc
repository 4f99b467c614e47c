// Perfectly conducting cylinder over a perfectly conducting plate, per unit length
// (solver/geometries/cylinder_plate.h). Sources beside each check.
#include "solver/geometries/cylinder_plate.h"

#include <gtest/gtest.h>

#include <cmath>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

std::shared_ptr<Geometry> pec(double R, FieldKind f, double rel_tol = 1e-6, int m_max = 0) {
  CylinderPlateOptions o;
  o.radius = R;
  o.cylinder = make_perfect_conductor();
  o.plate = make_half_space(make_perfect_conductor());
  o.field = f;
  o.rel_tol = rel_tol;
  o.m_max = m_max;
  return make_cylinder_plate(o);
}

FrequencySum energy(const Geometry& g, double L, double T, double rel_tol,
                    DerivativeOrder order = DerivativeOrder::kEnergy) {
  FrequencyRuleOptions opts;
  opts.temperature_K = T;
  opts.rel_tol = rel_tol;
  return sum_over_frequencies([&](double xi) { return g.at_frequency(xi, L, order); },
                              g.frequency_scale(L), opts);
}

// (hbar c / 4 pi) \int_0^inf dp p log det(1 - N(p)) for one channel, T = 0, vacuum: the polar
// form of the (xi, k_z) integral (Emig, Jaffe, Kardar, Scardicchio, PRL 96, 080403 (2006)).
// Gauss-Legendre panels in p L on [0, 60] (integrand ~ e^{-2pL}); used as the independent
// reference for the frequency-rule form and for the PFA fits (cheaper: one integral).
double polar_energy(FieldKind ch, double R, double L, double rel_tol) {
  static const double x[8] = {-0.9602898564975363, -0.7966664774136267, -0.5255324099163290,
                              -0.1834346424956498, 0.1834346424956498,  0.5255324099163290,
                              0.7966664774136267,  0.9602898564975363};
  static const double w[8] = {0.1012285362903763, 0.2223810344533745, 0.3137066458778873,
                              0.3626837833783620, 0.3626837833783620, 0.3137066458778873,
                              0.2223810344533745, 0.1012285362903763};
  double sum = 0.0;
  // Panels geometric near 0 (the Dirichlet integrand has a log-log end), uniform beyond.
  std::vector<double> edges{0.0};
  for (double e = 1e-8; e < 0.5; e *= 4.0) edges.push_back(e);
  for (double e = 0.5; e <= 40.0; e += 0.5) edges.push_back(e);
  for (std::size_t k = 0; k + 1 < edges.size(); ++k) {
    const double a = edges[k], b = edges[k + 1];
    for (int i = 0; i < 8; ++i) {
      const double u = 0.5 * (a + b) + 0.5 * (b - a) * x[i];
      const double p = u / L;
      sum += 0.5 * (b - a) * w[i] * p / L *
             cylinder_plate_logdet(ch, p, R, R + L, DerivativeOrder::kEnergy, rel_tol).value;
    }
  }
  return kHbarC / (4.0 * kPi) * sum;
}

// Derived: the frequency-rule form (hbar/2pi)\int dxi \int dk_z/(2pi) equals the polar form.
// Tolerance: 2e-5, from the rel_tol 1e-6 of the rule and the 1e-6 m cut-off of both sides.
TEST(CylinderPlate, FrequencyRuleFormEqualsPolarFormAtZeroTemperature) {
  const double R = 1e-6, L = 0.5e-6;
  for (FieldKind ch : {FieldKind::kDirichlet, FieldKind::kNeumann}) {
    const FrequencySum s = energy(*pec(R, ch), L, 0.0, 1e-6);
    ASSERT_TRUE(s.converged);
    const double ref = polar_energy(ch, R, L, 1e-7);
    EXPECT_NEAR(s.total.value / ref, 1.0, 2e-5) << to_string(ch);
    EXPECT_LT(ref, 0.0) << "both channels attract (PRL 96, 080403)";
  }
}

// Dirichlet + Neumann = electromagnetic for perfect conductors (TM and TE decouple; derived).
TEST(CylinderPlate, DirichletPlusNeumannIsElectromagnetic) {
  const double R = 2e-6, L = 1e-6;
  for (double xi : {0.0, 1e14, 5e14}) {
    const Spectral d =
        pec(R, FieldKind::kDirichlet)->at_frequency(xi, L, DerivativeOrder::kGradient);
    const Spectral n = pec(R, FieldKind::kNeumann)->at_frequency(xi, L, DerivativeOrder::kGradient);
    const Spectral e =
        pec(R, FieldKind::kElectromagnetic)->at_frequency(xi, L, DerivativeOrder::kGradient);
    EXPECT_NEAR((d.value + n.value) / e.value, 1.0, 1e-12);
    EXPECT_NEAR((d.d1 + n.d1) / e.d1, 1.0, 1e-12);
    EXPECT_NEAR((d.d2 + n.d2) / e.d2, 1.0, 1e-12);
  }
}

// Force and gradient: the analytic H-derivatives against central differences of log det
// (derived). Step 1e-4 L: truncation error ~1e-8 relative, rounding ~1e-12/1e-4.
TEST(CylinderPlate, AnalyticGapDerivativesMatchFiniteDifferences) {
  const double R = 1e-6, H0 = 1.3e-6;
  for (FieldKind ch : {FieldKind::kDirichlet, FieldKind::kNeumann})
    for (double p : {1e4, 1e6, 3e6}) {
      const int M = 60;  // fixed cut-off: the same matrix at every H
      const auto f = [&](double H) {
        return cylinder_plate_logdet(ch, p, R, H, DerivativeOrder::kGradient, 1e-10, M);
      };
      const double h = 1e-4 * (H0 - R);
      const Spectral c = f(H0), a = f(H0 - h), b = f(H0 + h);
      EXPECT_NEAR((b.value - a.value) / (2 * h) / c.d1, 1.0, 1e-6);
      EXPECT_NEAR((b.d1 - a.d1) / (2 * h) / c.d2, 1.0, 1e-6);
    }
}

// Convergence in m: the automatic cut-off against twice as many orders (derived from the
// tail-sum estimate: the difference must be below rel_tol of |log det|).
TEST(CylinderPlate, AutomaticOrderCutOffMeetsItsTolerance) {
  const double R = 50e-6, L = 1e-6;
  for (FieldKind ch : {FieldKind::kDirichlet, FieldKind::kNeumann})
    for (double pL : {0.05, 0.5, 2.0}) {
      const double p = pL / L;
      int m = 0;
      const double tol = 1e-6;
      const Spectral a =
          cylinder_plate_logdet(ch, p, R, R + L, DerivativeOrder::kGradient, tol, 0, &m);
      const Spectral b =
          cylinder_plate_logdet(ch, p, R, R + L, DerivativeOrder::kGradient, tol, 2 * m);
      EXPECT_NEAR(a.value / b.value, 1.0, tol) << "m = " << m << " pL = " << pL;
      EXPECT_NEAR(a.d1 / b.d1, 1.0, 10 * tol) << "m = " << m;
    }
}

// Convergence of the k_z rule: rel_tol 1e-4 against 1e-9 at one frequency (derived).
TEST(CylinderPlate, AxialMomentumIntegralMeetsItsTolerance) {
  const double R = 5e-6, L = 0.5e-6;
  for (double xi : {0.0, 3e14, 3e15}) {
    const Spectral a =
        pec(R, FieldKind::kElectromagnetic, 1e-4)->at_frequency(xi, L, DerivativeOrder::kGradient);
    const Spectral b =
        pec(R, FieldKind::kElectromagnetic, 1e-9)->at_frequency(xi, L, DerivativeOrder::kGradient);
    EXPECT_NEAR(a.value / b.value, 1.0, 1e-4) << xi;
    EXPECT_NEAR(a.d1 / b.d1, 1.0, 1e-4) << xi;
    EXPECT_NEAR(a.d2 / b.d2, 1.0, 1e-4) << xi;
  }
}

// Large distance, TE (Neumann): E/l -> -5 hbar c R^2 / (32 pi H^4) (derived: first order in
// t_0 = t_{+-1} = (pR)^2/2 with \int u^3 K_0 = 4, \int u^3 K_2 = 8, DLMF 10.43.19). Relative
// corrections O((R/H)^2): at R/H = 1e-3 a tolerance of 1e-4.
TEST(CylinderPlate, NeumannChannelAtLargeDistanceFollowsTheDerivedLaw) {
  const double R = 1e-6, H = 1e-3, L = H - R;
  const double ref = -5.0 * kHbarC * R * R / (32.0 * kPi * std::pow(H, 4));
  const FrequencySum s = energy(*pec(R, FieldKind::kNeumann), L, 0.0, 1e-7);
  EXPECT_NEAR(s.total.value / ref, 1.0, 1e-4);
}

// Large distance, TM (Dirichlet): E/l -> -hbar c / (16 pi H^2 ln(H/R)) (derived: m = 0, t_0 ~
// 1/ln(1/pR), \int u K_0 = 1; the form 1/(H^2 ln(H/R)) of PRL 96, 080403 (2006)), with
// corrections O(1/ln(H/R)): the deviation times ln(H/R) must stay bounded and the ratio approach 1.
TEST(CylinderPlate, DirichletChannelAtLargeDistanceFallsLikeOneOverLogarithm) {
  const double R = 1e-9;
  double prev_dev = 1e300;
  for (double HR : {1e3, 1e6, 1e9}) {
    const double H = HR * R, L = H - R;
    const double ref = -kHbarC / (16.0 * kPi * H * H * std::log(HR));
    const double e = polar_energy(FieldKind::kDirichlet, R, L, 1e-8);
    const double dev = std::abs(e / ref - 1.0);
    std::printf("H/R = %g: E/E_asym = %.8f, dev*ln = %.4f\n", HR, e / ref, dev * std::log(HR));
    EXPECT_LT(dev, prev_dev);
    EXPECT_LT(dev * std::log(HR), 2.0);
    prev_dev = dev;
  }
}

}  // namespace
}  // namespace roundtrip
