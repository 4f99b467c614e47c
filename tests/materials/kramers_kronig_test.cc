// Kramers-Kronig transform of tabulated optical data (solver/materials/tabulated.h).
#include <fmt/format.h>
#include <gtest/gtest.h>

#include <cmath>
#include <complex>

#include "solver/constants.h"
#include "solver/materials/models.h"
#include "solver/materials/tabulated.h"

namespace roundtrip {
namespace {

constexpr double kEv = kRadPerSecondPerEv;
// The brief's accuracy target for eps(i xi) from a well-sampled table.
constexpr double kKkRelTol = 1e-4;
// Cubic-spline interpolation on 40 points per decade against the direct sum: the spline error
// scales as h^4 (h = ln 10 / 40), far below the Kramers-Kronig target.
constexpr double kSplineRelTol = 1e-6;

// Analytic Drude-Lorentz on the real axis, e^{-i omega t}:
//   eps(omega) = 1 - wp^2/(omega(omega + i gamma)) + sum C w^2/(w^2 - omega^2 - i g omega),
// the continuation of models.h's eps(i xi) (standard; Klimchitskaya, Mohideen, Mostepanenko,
// RMP 81, 1827 (2009)).
std::complex<double> eps_real_axis(const DrudeLorentzParams& p, double w) {
  const std::complex<double> i(0.0, 1.0);
  std::complex<double> e = p.eps_inf;
  if (p.plasma_frequency > 0.0)
    e -= p.plasma_frequency * p.plasma_frequency / (w * (w + i * p.damping));
  for (const auto& o : p.oscillators)
    e += o.strength * o.frequency * o.frequency /
         (o.frequency * o.frequency - w * w - i * o.damping * w);
  return e;
}

// A table sampled log-uniformly from `p` between e_lo and e_hi (eV).
OpticalData sample(const DrudeLorentzParams& p, double e_lo, double e_hi, int n) {
  OpticalData d;
  d.origin = "sampled Drude-Lorentz";
  for (int i = 0; i < n; ++i) {
    const double w = e_lo * kEv * std::pow(e_hi / e_lo, static_cast<double>(i) / (n - 1));
    const auto e = eps_real_axis(p, w);
    d.omega.push_back(w);
    d.eps1.push_back(e.real());
    d.eps2.push_back(e.imag());
  }
  return d;
}

DrudeLorentzParams gold_like() {  // invented parameters, gold-like magnitudes
  DrudeLorentzParams p;
  p.plasma_frequency = 9.0 * kEv;
  p.damping = 0.035 * kEv;
  p.oscillators = {{1.5, 3.0 * kEv, 0.8 * kEv}, {2.0, 6.0 * kEv, 2.0 * kEv}};
  return p;
}

// xi relevant to gaps 10 nm - 10 um: c/(2L) x [0.1, 30] (brief).
constexpr double kXiLo = 0.1 * kSpeedOfLight / (2 * 10e-6);
constexpr double kXiHi = 30.0 * kSpeedOfLight / (2 * 10e-9);

TEST(KramersKronig, DrudeTableGivesExactDrudeIdentity) {
  // Standard: with eps'' = wp^2 g/(w(w^2+g^2)) on the whole axis,
  // 1 + (2/pi) \int w eps''/(w^2+xi^2) = 1 + wp^2/(xi(xi+g)) exactly.
  DrudeLorentzParams p;
  p.plasma_frequency = 9.0 * kEv;
  p.damping = 0.035 * kEv;
  KramersKronigOptions o;
  o.plasma_frequency = p.plasma_frequency;
  o.damping = p.damping;
  const TabulatedMaterial t("drude-table", sample(p, 1e-3, 1e3, 6000), o);
  const DrudeLorentz exact("drude", p);
  double worst = 0.0;
  for (double xi = kXiLo; xi <= kXiHi; xi *= 1.1) {
    const double rel = std::abs(t.epsilon_direct(xi) / exact.epsilon(xi) - 1.0);
    ASSERT_TRUE(std::isfinite(rel));
    worst = std::max(worst, rel);
  }
  EXPECT_LT(worst, kKkRelTol);
  RecordProperty("worst_relative_error", fmt::format("{:.3g}", worst));
}

TEST(KramersKronig, SampledDrudeLorentzReproducesAnalyticEpsilonOnImaginaryAxis) {
  const DrudeLorentzParams p = gold_like();
  KramersKronigOptions o;
  o.plasma_frequency = p.plasma_frequency;
  o.damping = p.damping;
  const TabulatedMaterial t("dl-table", sample(p, 1e-3, 1e3, 6000), o);
  const DrudeLorentz exact("dl", p);
  double worst_direct = 0.0, worst_interp = 0.0;
  for (double xi = kXiLo; xi <= kXiHi; xi *= 1.07) {
    const double e = exact.epsilon(xi);
    worst_direct = std::max(worst_direct, std::abs(t.epsilon_direct(xi) / e - 1.0));
    worst_interp = std::max(worst_interp, std::abs(t.epsilon(xi) / e - 1.0));
  }
  EXPECT_LT(worst_direct, kKkRelTol);
  EXPECT_LT(worst_interp, kKkRelTol);
  RecordProperty("worst_direct", fmt::format("{:.3g}", worst_direct));
  RecordProperty("worst_interpolated", fmt::format("{:.3g}", worst_interp));
  EXPECT_EQ(t.static_limit().kind, StaticClass::kDrudeConductor);
}

TEST(KramersKronig, InterpolationAgreesWithDirectSum) {
  const DrudeLorentzParams p = gold_like();
  const TabulatedMaterial t("dl-table", sample(p, 1e-3, 1e3, 2000), KramersKronigOptions{});
  double worst = 0.0;
  for (double xi = 1.3e9; xi < 0.9e20; xi *= 1.013)  // off-grid points across the whole grid
    worst = std::max(worst, std::abs(t.epsilon(xi) / t.epsilon_direct(xi) - 1.0));
  EXPECT_LT(worst, kSplineRelTol);
  RecordProperty("worst_spline_error", fmt::format("{:.3g}", worst));
}

TEST(KramersKronig, FittedDrudeExtensionRecoversPureDrudeParameters) {
  // eps' = 1 - wp^2/(w^2+g^2), eps'' w = g wp^2/(w^2+g^2) (standard Drude) invert exactly.
  DrudeLorentzParams p;
  p.plasma_frequency = 7.5 * kEv;
  p.damping = 0.05 * kEv;
  const TabulatedMaterial t("fit", sample(p, 0.01, 100, 500), KramersKronigOptions{});
  constexpr double kFitRelTol = 1e-10;  // exact algebra, rounding only
  EXPECT_TRUE(t.drude_fitted());
  EXPECT_NEAR(t.drude_plasma_frequency() / p.plasma_frequency, 1.0, kFitRelTol);
  EXPECT_NEAR(t.drude_damping() / p.damping, 1.0, kFitRelTol);
  EXPECT_NE(t.description().find("fitted"), std::string::npos);
}

TEST(KramersKronig, LorentzDielectricWithoutDrudeHasStaticSumRule) {
  // Lorentz oscillator: eps(0) = 1 + sum C (standard). The table starts at w1 = 1 meV; the missing
  // eps'' below it contributes (2/pi) \int_0^w1 eps''/w ~ (2/pi) C g w1/w0^2 (derived).
  DrudeLorentzParams p;
  p.oscillators = {{1.1, 10.0 * kEv, 1.0 * kEv}, {1.7, 0.12 * kEv, 0.01 * kEv}};
  KramersKronigOptions o;
  o.low = LowFrequencyModel::kNone;
  const TabulatedMaterial t("glass-like", sample(p, 1e-3, 1e3, 4000), o);
  const StaticLimit s = t.static_limit();
  ASSERT_EQ(s.kind, StaticClass::kDielectric);
  const double missing = 2.0 / kPi * 1.7 * 0.01 * 1e-3 / (0.12 * 0.12);
  EXPECT_NEAR(s.static_eps, 1.0 + 1.1 + 1.7, 3 * missing + kKkRelTol);
  const DrudeLorentz exact("lorentz", p);
  for (double xi = kXiLo; xi <= kXiHi; xi *= 1.3)
    EXPECT_NEAR(t.epsilon(xi) / exact.epsilon(xi), 1.0, kKkRelTol) << "xi = " << xi;
}

TEST(KramersKronig, RejectsNegativeLossAndTooFewPoints) {
  OpticalData d = sample(gold_like(), 0.01, 100, 10);
  d.eps2[4] = -0.1;
  EXPECT_THROW(TabulatedMaterial("bad", d, KramersKronigOptions{}), std::invalid_argument);
  OpticalData few = sample(gold_like(), 0.01, 100, 3);
  EXPECT_THROW(TabulatedMaterial("few", few, KramersKronigOptions{}), std::invalid_argument);
  // A dielectric table (eps1 > 1) cannot be fitted by a Drude term.
  DrudeLorentzParams glass;
  glass.oscillators = {{1.1, 10.0 * kEv, 1.0 * kEv}};
  EXPECT_THROW(TabulatedMaterial("glass", sample(glass, 0.01, 100, 50), KramersKronigOptions{}),
               std::invalid_argument);
}

}  // namespace
}  // namespace roundtrip
