// The T = 0 frequency rule (exp-exp map, frequency_rule.cc) against closed forms and against the
// exp-sinh rule it replaced, with the number of evaluations of s(xi) it saves.
#include <fmt/format.h>
#include <gtest/gtest.h>

#include <boost/math/special_functions/expint.hpp>
#include <cmath>
#include <map>
#include <memory>
#include <string>
#include <utility>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/plate_plate.h"
#include "solver/geometries/sphere_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"
#include "solver/special/polylog.h"

namespace roundtrip {
namespace {

constexpr double kZeta4 = kPi * kPi * kPi * kPi / 90.0;  // standard
const double kGoldOmegaP =
    9.0 * kRadPerSecondPerEv;  // common practice; Svetovoy et al., PRB 77, 035439 (2008)
const double kGoldGamma = 0.035 * kRadPerSecondPerEv;

// s(xi) with a count of evaluations and a cache (the sphere-plate terms are not cheap).
class Counted {
 public:
  explicit Counted(SpectralFunction f) : f_(std::move(f)) {}
  SpectralFunction fn() {
    return [this](double xi) {
      ++count_;
      auto it = cache_.find(xi);
      if (it != cache_.end()) return it->second;
      return cache_[xi] = f_(xi);
    };
  }
  int take() { return std::exchange(count_, 0); }

 private:
  SpectralFunction f_;
  std::map<double, Spectral> cache_;
  int count_ = 0;
};

struct RuleRun {
  FrequencySum sum;
  int evaluations = 0;
};

// One rule (the T = 0 path of sum_over_frequencies, or the exp-sinh reference) on s, counting
// its evaluations.
using Rule = FrequencySum (*)(const SpectralFunction&, double, const FrequencyRuleOptions&);
RuleRun run_rule(Rule rule, Counted& s, double xi_scale, double rel_tol) {
  FrequencyRuleOptions o;
  o.rel_tol = rel_tol;
  RuleRun r{rule(s.fn(), xi_scale, o), 0};
  r.evaluations = s.take();
  return r;
}
RuleRun new_rule(Counted& s, double xi_scale, double rel_tol) {
  return run_rule(sum_over_frequencies, s, xi_scale, rel_tol);
}
RuleRun old_rule(Counted& s, double xi_scale, double rel_tol) {
  return run_rule(zero_temperature_exp_sinh_rule, s, xi_scale, rel_tol);
}

// Per component: |x - ref| <= tol |ref| (components of ref that vanish are skipped).
void expect_close(const Spectral& x, const Spectral& ref, double tol, const std::string& what) {
  ASSERT_TRUE(std::isfinite(x.value) && std::isfinite(x.d1) && std::isfinite(x.d2)) << what;
  if (ref.value != 0.0) EXPECT_NEAR(x.value / ref.value, 1.0, tol) << what << " value";
  if (ref.d1 != 0.0) EXPECT_NEAR(x.d1 / ref.d1, 1.0, tol) << what << " d1";
  if (ref.d2 != 0.0) EXPECT_NEAR(x.d2 / ref.d2, 1.0, tol) << what << " d2";
}

TEST(ZeroTemperatureRule, PerfectMirrorPlatesMatchCasimir1948WithFewerEvaluations) {
  // E/A = -pi^2 hbar c / (720 L^3) (Casimir, Proc. K. Ned. Akad. Wet. 51, 793 (1948)); E ~ L^-3
  // gives dE/dL = -3E/L and d2E/dL2 = 12E/L^2.
  const double L = 100e-9;
  auto pec = make_half_space(make_perfect_conductor());
  const PlatePlate pp(pec, pec, nullptr);
  const double e = -kPi * kPi * kHbarC / (720.0 * L * L * L);
  const Spectral exact{e, -3.0 * e / L, 12.0 * e / (L * L)};
  for (auto order : {DerivativeOrder::kEnergy, DerivativeOrder::kGradient}) {
    Counted s([&](double xi) { return pp.at_frequency(xi, L, order); });
    for (double tol : {1e-4, 1e-7}) {
      const RuleRun a = new_rule(s, pp.frequency_scale(L), tol);
      const RuleRun b = old_rule(s, pp.frequency_scale(L), tol);
      const std::string what = fmt::format("rel_tol {} order {}", tol, int(order));
      ASSERT_TRUE(a.sum.converged) << a.sum.message;
      // The requested accuracy (the k integral is at 1e-13).
      const Spectral ref = order == DerivativeOrder::kEnergy ? Spectral{e, 0.0, 0.0} : exact;
      expect_close(a.sum.total, ref, tol, what);
      // The reported error bounds the true one (it is an estimate, not a guess below it).
      EXPECT_GE(a.sum.abs_error, std::abs(a.sum.total.value - e)) << what;
      EXPECT_LE(a.sum.abs_error, tol * std::abs(e)) << what;
      // Plates: never more evaluations than the exp-sinh rule (measured 25-28 against 49-105).
      EXPECT_LE(a.evaluations, b.evaluations) << what;
      EXPECT_EQ(a.evaluations, int(a.sum.terms.size())) << what;
    }
  }
}

// The PFA model of a perfect-mirror sphere over a plate: per frequency the sphere-plate s is
// 2 pi R \int_L^inf s_pp dL' with s_pp of perfect mirrors, which in u = 2 xi L / c is
// proportional to Li_3(e^-u) (derived: \int_u^inf G(a)/a^2 da = Li_3(e^-u)/u for the plate
// G = a Li_2(e^-a) + Li_3(e^-a)), and its L-derivatives to G and u G' - 2 G. Integrals (term by
// term, sum 1/n^4): \int Li_3(e^-u) = zeta(4), \int G = 2 zeta(4), \int (u G' - 2 G) = -6 zeta(4).
Spectral pfa_model(double u) {
  const double x = std::exp(-u);
  const double g = u * special::dilog(x) + special::trilog(x);
  const double g1 = u == 0.0 ? 0.0 : u * std::log(-std::expm1(-u));
  return {special::trilog(x), g, u * g1 - 2.0 * g};
}

TEST(ZeroTemperatureRule, PfaSpherePlateModelIntegratesToZeta4WithAboutHalfTheEvaluations) {
  const double unit = kHbar / (2.0 * kPi);  // the rule's prefactor; xi_scale = 1 makes u = xi
  const Spectral exact{kZeta4 * unit, 2.0 * kZeta4 * unit, -6.0 * kZeta4 * unit};
  for (bool energy_only : {true, false}) {
    Counted s([&](double u) {
      Spectral v = pfa_model(u);
      if (energy_only) v.d1 = v.d2 = 0.0;
      return v;
    });
    for (double tol : {1e-4, 1e-7}) {
      const RuleRun a = new_rule(s, 1.0, tol);
      const RuleRun b = old_rule(s, 1.0, tol);
      const std::string what = fmt::format("rel_tol {} energy only {}", tol, energy_only);
      ASSERT_TRUE(a.sum.converged) << a.sum.message;
      expect_close(a.sum.total, energy_only ? Spectral{exact.value, 0, 0} : exact, tol, what);
      EXPECT_GE(a.sum.abs_error, std::abs(a.sum.total.value - exact.value)) << what;
      // Measured: 22-24 against 49-97 at 1e-4, 52-53 against 105 at 1e-7.
      EXPECT_GE(double(b.evaluations) / a.evaluations, tol > 1e-5 ? 2.0 : 1.9) << what;
    }
  }
}

TEST(ZeroTemperatureRule, DrudeGoldPlatesAgreeWithTheExpSinhRuleAtTightTolerance) {
  auto gold = make_half_space(make_drude("gold-drude", kGoldOmegaP, kGoldGamma));
  const PlatePlate pp(gold, gold, nullptr);
  for (double L : {100e-9, 1e-6}) {
    Counted s([&](double xi) { return pp.at_frequency(xi, L, DerivativeOrder::kGradient); });
    // Reference: the exp-sinh rule at 1e-10 (an independent map and node set).
    const RuleRun ref = old_rule(s, pp.frequency_scale(L), 1e-10);
    ASSERT_TRUE(ref.sum.converged) << ref.sum.message;
    for (double tol : {1e-4, 1e-7}) {
      const RuleRun a = new_rule(s, pp.frequency_scale(L), tol);
      const RuleRun b = old_rule(s, pp.frequency_scale(L), tol);
      const std::string what = fmt::format("L {} rel_tol {}", L, tol);
      ASSERT_TRUE(a.sum.converged) << a.sum.message;
      // rel_tol plus the reference's own 1e-10.
      expect_close(a.sum.total, ref.sum.total, tol + 1e-10, what);
      EXPECT_LE(a.evaluations, b.evaluations) << what;
    }
  }
}

TEST(ZeroTemperatureRule, LeftEndMovesWhenTheSpectrumIsNotFlatNearZero) {
  // s(u) = e^-u (1 + 9 b / (u + b)): a peak of width b = 1e-6 at u = 0 holding 1.2e-4 of the
  // integral, partly left of the default left end u = 0.02 rel_tol. Exact (elementary, with
  // \int_0^inf e^-u/(u + b) du = e^b E_1(b)): 1 + 9 b e^b E_1(b); E_1 from Boost.Math.
  const double b = 1e-6;
  const double exact =
      (kHbar / (2.0 * kPi)) * (1.0 + 9.0 * b * std::exp(b) * boost::math::expint(1, b));
  for (double tol : {1e-4, 1e-7}) {
    FrequencyRuleOptions o;
    o.rel_tol = tol;
    const FrequencySum r = sum_over_frequencies(
        [b](double u) {
          return Spectral{std::exp(-u) * (1.0 + 9.0 * b / (u + b)), 0.0, 0.0};
        },
        1.0, o);
    ASSERT_TRUE(r.converged) << r.message;
    // \int |s| = the value here, so rel_tol of it.
    EXPECT_NEAR(r.total.value / exact, 1.0, tol) << tol;
    EXPECT_LT(r.terms.front().xi, 1e-3 * b) << "the left end should have moved past the peak";
  }
}

// Sphere-plate with a fixed l_max and m_max, so that s(xi) is a smooth function of xi (an
// automatic l_max jumps with xi by steps of ~ the geometry's rel_tol) with the physical shape:
// l_max = 3 R/L at R/L = 10 (converged to ~1e-4 at small xi), R/L at R/L = 50 (a truncated but
// smooth stand-in, to keep the test fast; the quadrature sees the same kind of spectrum).
std::shared_ptr<Geometry> sphere_plate(bool drude, double ratio, double L) {
  SpherePlateOptions o;
  o.radius = ratio * L;
  o.sphere = drude ? make_drude("gold-drude", kGoldOmegaP, kGoldGamma) : make_perfect_conductor();
  o.plate = make_half_space(o.sphere);
  o.l_max = static_cast<int>(ratio <= 10.0 ? 3 * ratio : ratio);
  o.m_max = o.l_max;
  o.rel_tol = 1e-10;  // momentum quadrature
  return make_sphere_plate(o);
}

// The new rule at 1e-4 and 1e-7 against the exp-sinh rule at 1e-8 on the same s(xi), with E,
// dE/dL and d2E/dL2 (and the energy alone); the exp-sinh rule's evaluations over the new rule's
// are at least saving_1e4 (rel_tol 1e-4) and saving_1e7 (1e-7).
void check_sphere_plate(bool drude, double ratio, double saving_1e4, double saving_1e7) {
  const double L = 100e-9;
  const auto g = sphere_plate(drude, ratio, L);
  const double scale = g->frequency_scale(L);
  // One cache of E, F, F' terms; the energy-only rule sees their values (what a kEnergy call
  // returns, without the derivative work).
  Counted full([&](double xi) { return g->at_frequency(xi, L, DerivativeOrder::kGradient); });
  const SpectralFunction full_fn = full.fn();
  for (auto order : {DerivativeOrder::kGradient, DerivativeOrder::kEnergy}) {
    Counted s([&](double xi) {
      Spectral v = full_fn(xi);
      if (order == DerivativeOrder::kEnergy) v.d1 = v.d2 = 0.0;
      return v;
    });
    const RuleRun ref = old_rule(s, scale, 1e-8);
    ASSERT_TRUE(ref.sum.converged) << ref.sum.message;
    // The reference's own reported error (its last change, which overstates it).
    const double ref_err = ref.sum.abs_error / std::abs(ref.sum.total.value);
    for (double tol : {1e-4, 1e-7}) {
      const RuleRun a = new_rule(s, scale, tol);
      const RuleRun b = old_rule(s, scale, tol);  // mostly cached: its nodes nest with ref's
      const std::string what =
          fmt::format("drude {} R/L {} rel_tol {} order {}", drude, ratio, tol, int(order));
      ASSERT_TRUE(a.sum.converged) << a.sum.message;
      const Spectral r = order == DerivativeOrder::kEnergy ? Spectral{ref.sum.total.value, 0.0, 0.0}
                                                           : ref.sum.total;
      expect_close(a.sum.total, r, tol + ref_err, what);
      EXPECT_GE(a.sum.abs_error + ref.sum.abs_error,
                std::abs(a.sum.total.value - ref.sum.total.value))
          << what;
      EXPECT_GE(double(b.evaluations) / a.evaluations, tol > 1e-5 ? saving_1e4 : saving_1e7)
          << what;
    }
  }
}

// Measured evaluations (new / exp-sinh) with E, F, F' and with E alone: PEC 24/97 and 24/49
// at 1e-4, 53/105 and 26-52/97-105 at 1e-7; Drude gold 25/49 and 23/49 at 1e-4, 50-51/97 and
// 48-49/97 at 1e-7 (the left-end probe costs Drude one evaluation).
TEST(ZeroTemperatureRule, PecSpherePlateAtRadiusTenGapsAgreesWithAboutHalfTheEvaluations) {
  check_sphere_plate(false, 10.0, 2.0, 1.8);
}
TEST(ZeroTemperatureRule, PecSpherePlateAtRadiusFiftyGapsAgreesWithAboutHalfTheEvaluations) {
  check_sphere_plate(false, 50.0, 2.0, 1.8);
}
TEST(ZeroTemperatureRule, DrudeSpherePlateAtRadiusTenGapsAgreesWithFewerEvaluations) {
  check_sphere_plate(true, 10.0, 1.9, 1.8);
}
TEST(ZeroTemperatureRule, DrudeSpherePlateAtRadiusFiftyGapsAgreesWithFewerEvaluations) {
  check_sphere_plate(true, 50.0, 1.9, 1.8);
}

}  // namespace
}  // namespace roundtrip

namespace roundtrip {
namespace {

TEST(ZeroTemperatureRule, DecayScaleOffByAHundredEitherWayStillConverges) {
  // (hbar/2pi) \int_0^inf e^{-a xi} dxi = hbar / (2 pi a) (elementary), with xi_scale 100 times
  // too small and too large. More evaluations are allowed; the accuracy is not relaxed.
  for (double off : {100.0, 0.01}) {
    const double a = 1.0 / (off * 1e15);
    for (double tol : {1e-4, 1e-7}) {
      FrequencyRuleOptions o;
      o.rel_tol = tol;
      const FrequencySum r = sum_over_frequencies(
          [a](double xi) {
            const double e = std::exp(-a * xi);
            return Spectral{e, -2.0 * e, 3.0 * e};
          },
          1e15, o);
      const double exact = kHbar / (2.0 * kPi * a);
      ASSERT_TRUE(r.converged) << r.message << " off " << off << " tol " << tol;
      expect_close(r.total, {exact, -2.0 * exact, 3.0 * exact}, tol,
                   fmt::format("off {} rel_tol {}", off, tol));
      EXPECT_GE(r.abs_error, std::abs(r.total.value - exact)) << off << " " << tol;
    }
  }
}

}  // namespace
}  // namespace roundtrip
