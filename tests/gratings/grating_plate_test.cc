// Grating-plate round trip per area (solver/geometries/grating_plate.h).
#include "solver/geometries/grating_plate.h"

#include <gtest/gtest.h>

#include <chrono>
#include <cmath>
#include <cstdio>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

// Bloch integral tolerance of these tests and the agreement they ask for: the integrand is
// smooth, so a 1e-7 integral is trusted to a few 1e-7 (named here, not loosened to pass).
constexpr double kBlochTol = 1e-7;
constexpr double kPlateAgreement = 2e-6;

LamellarGrating grating(double f, double h, MaterialPtr m) {
  LamellarGrating g;
  g.period = 400e-9;
  g.filling = f;
  g.depth = h;
  g.ridge = m;
  g.substrate = m;
  return g;
}

GratingPlate make(const LamellarGrating& g, PlanarPtr plate, int orders) {
  GratingPlateOptions o;
  o.orders = orders;
  o.bloch_rel_tol = kBlochTol;
  return GratingPlate(g, std::move(plate), nullptr, o);
}

MaterialPtr silicon_like() { return make_constant("si-like", 11.7); }
MaterialPtr gold_like() {
  return make_drude("gold-like", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv);
}

void expect_rel(double a, double b, double tol, const char* what) {
  EXPECT_TRUE(std::isfinite(a)) << what;
  EXPECT_NEAR(a, b, tol * std::abs(b)) << what;
}

TEST(GratingPlate, FillingOneAndZeroDepthGiveThePlatePlateLifshitzIntegrand) {
  // Lifshitz (1956) through PlatePlate: f = 1 and h = 0 are the ridge half-space at L.
  const double L = 200e-9;
  const auto si = silicon_like();
  const PlatePlate pp(make_half_space(si), make_half_space(gold_like()), nullptr);
  for (double xi : {0.0, 3e14, 2e15}) {
    const Spectral ref = pp.at_frequency(xi, L, DerivativeOrder::kGradient);
    for (const auto& g : {grating(1.0, 100e-9, si), grating(0.4, 0.0, si)}) {
      const Spectral s =
          make(g, make_half_space(gold_like()), 4).at_frequency(xi, L, DerivativeOrder::kGradient);
      expect_rel(s.value, ref.value, kPlateAgreement, "value");
      expect_rel(s.d1, ref.d1, kPlateAgreement, "d1");
      expect_rel(s.d2, ref.d2, kPlateAgreement, "d2");
    }
  }
}

TEST(GratingPlate, FillingZeroIsThePlatePlateIntegrandAtLPlusDepth) {
  // f = 0: the substrate lies h below the ridge tops (Lifshitz 1956 at L + h).
  const double L = 150e-9, h = 100e-9;
  const auto si = silicon_like();
  const PlatePlate pp(make_half_space(si), make_half_space(gold_like()), nullptr);
  for (double xi : {0.0, 5e14}) {
    const Spectral ref = pp.at_frequency(xi, L + h, DerivativeOrder::kGradient);
    const Spectral s = make(grating(0.0, h, si), make_half_space(gold_like()), 4)
                           .at_frequency(xi, L, DerivativeOrder::kGradient);
    expect_rel(s.value, ref.value, kPlateAgreement, "value");
    expect_rel(s.d1, ref.d1, kPlateAgreement, "d1");
    expect_rel(s.d2, ref.d2, kPlateAgreement, "d2");
  }
}

TEST(GratingPlate, DerivativesMatchFiniteDifferences) {
  // Common practice: central differences with step 1e-3 L (error ~ 1e-6 relative) against the
  // analytic d/dL and d2/dL2 of a true grating (f = 0.5, h = 150 nm).
  const double L = 200e-9, dL = 2e-10;
  const auto g = make(grating(0.5, 150e-9, silicon_like()), make_half_space(gold_like()), 6);
  for (double xi : {0.0, 1e15}) {
    const Spectral s = g.at_frequency(xi, L, DerivativeOrder::kGradient);
    const double p = g.at_frequency(xi, L + dL, DerivativeOrder::kEnergy).value;
    const double m = g.at_frequency(xi, L - dL, DerivativeOrder::kEnergy).value;
    expect_rel(s.d1, (p - m) / (2 * dL), 1e-5, "d1 vs FD");
    expect_rel(s.d2, (p - 2 * s.value + m) / (dL * dL), 1e-3, "d2 vs FD");
  }
}

TEST(GratingPlate, LargePeriodTendsToTheGratingPfa) {
  // Bao et al., PRL 105, 250402 (2010): E -> f E_pp(L) + (1 - f) E_pp(L + h) when the period is
  // much larger than the gap and the depth. Per frequency, at period 40 L: within 5 %, and
  // closer than at period 10 L (the approach is the check; the rate is reported).
  const double L = 100e-9, h = 100e-9, f = 0.5, xi = 5e14;
  const auto si = silicon_like();
  const PlatePlate top(make_half_space(si), make_half_space(gold_like()), nullptr);
  const double pfa = f * top.at_frequency(xi, L, DerivativeOrder::kEnergy).value +
                     (1 - f) * top.at_frequency(xi, L + h, DerivativeOrder::kEnergy).value;
  std::vector<double> dev;
  for (double period : {1e-6, 4e-6}) {
    auto g = grating(f, h, si);
    g.period = period;
    GratingPlateOptions o;
    o.bloch_rel_tol = 1e-5;
    o.orders = static_cast<int>(std::ceil(2.0 * period / L));
    const GratingPlate gp(g, make_half_space(gold_like()), nullptr, o);
    const double s = gp.at_frequency(xi, L, DerivativeOrder::kEnergy).value;
    dev.push_back(s / pfa - 1.0);
    // Observed: 4.8e-2 at period 10 L, 1.2e-2 at 40 L: the deviation falls like 1/period.
    std::printf("period %.1e m: s/s_PFA - 1 = %.4e (N = %d)\n", period, dev.back(), o.orders);
  }
  EXPECT_LT(std::abs(dev[1]), 0.05);
  EXPECT_LT(std::abs(dev[1]), std::abs(dev[0]));
}

TEST(GratingPlate, ConvergesInTheOrderCount) {
  // Li (1996): algebraic convergence for lamellar profiles; the observed rate is printed.
  // Observed (f = 0.5, h = 200 nm, period 400 nm, L = 200 nm, xi = 5e14 rad/s): relative
  // changes 1.6e-3, 5.0e-4, 1.5e-4 per doubling of N, i.e. about N^-1.7.
  const double L = 200e-9, xi = 5e14;
  std::vector<double> v;
  for (int N : {4, 8, 16, 32}) {
    const auto g = make(grating(0.5, 200e-9, silicon_like()), make_half_space(gold_like()), N);
    v.push_back(g.at_frequency(xi, L, DerivativeOrder::kEnergy).value);
  }
  const double d1 = std::abs(v[1] - v[0]), d2 = std::abs(v[2] - v[1]), d3 = std::abs(v[3] - v[2]);
  std::printf("s(N = 4, 8, 16, 32) = %.10e %.10e %.10e %.10e; changes %.2e %.2e %.2e\n", v[0], v[1],
              v[2], v[3], d1 / std::abs(v[3]), d2 / std::abs(v[3]), d3 / std::abs(v[3]));
  EXPECT_LT(d2, d1);
  EXPECT_LT(d3, d2);
  EXPECT_LT(d3, 1e-3 * std::abs(v[3]));
}

TEST(GratingPlate, BlochIntegralMeetsItsTolerance) {
  // The integral at 1e-4 against the one at 1e-8 (derived: error control of the nested rules).
  const double L = 200e-9, xi = 5e14;
  auto run = [&](double tol) {
    GratingPlateOptions o;
    o.orders = 6;
    o.bloch_rel_tol = tol;
    const GratingPlate gp(grating(0.5, 200e-9, silicon_like()), make_half_space(gold_like()),
                          nullptr, o);
    const double s = gp.at_frequency(xi, L, DerivativeOrder::kForce).value;
    std::printf("bloch_rel_tol %.0e: s = %.12e, nodes %d\n", tol, s,
                GratingPlate::last_node_count());
    return s;
  };
  const double ref = run(1e-8);
  for (double tol : {1e-4, 1e-6}) EXPECT_NEAR(run(tol), ref, tol * std::abs(ref));
}

}  // namespace
}  // namespace roundtrip
