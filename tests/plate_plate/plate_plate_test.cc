// Plate-plate Lifshitz energies, pressures and gradients against published limits and series.
#include "solver/geometries/plate_plate.h"

#include <gtest/gtest.h>

#include <algorithm>
#include <boost/math/quadrature/exp_sinh.hpp>
#include <boost/math/quadrature/gauss_kronrod.hpp>
#include <cmath>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"
#include "solver/special/polylog.h"

namespace roundtrip {
namespace {

// Gold: omega_p = 9 eV, gamma = 35 meV (common practice; Svetovoy et al.,
// PRB 77, 035439 (2008)).
const double kGoldOmegaP = 9.0 * kRadPerSecondPerEv;
const double kGoldGamma = 0.035 * kRadPerSecondPerEv;

PlatePlate plates_of(MaterialPtr m, MaterialPtr medium = nullptr) {
  auto h = make_half_space(std::move(m));
  return PlatePlate(h, h, std::move(medium));
}

// {E/A, dE/dL, d2E/dL2} in J/m^2, Pa... from the frequency rule at temperature T.
FrequencySum lifshitz(const PlatePlate& pp, double gap, double temperature, double rel_tol) {
  FrequencyRuleOptions o;
  o.temperature_K = temperature;
  o.rel_tol = rel_tol;
  FrequencySum r = sum_over_frequencies(
      [&](double xi) { return pp.at_frequency(xi, gap, DerivativeOrder::kGradient); },
      pp.frequency_scale(gap), o);
  EXPECT_TRUE(r.converged) << r.message;
  return r;
}

double pec_energy(double gap) { return -kPi * kPi * kHbarC / (720.0 * std::pow(gap, 3)); }
double pec_pressure(double gap) { return -kPi * kPi * kHbarC / (240.0 * std::pow(gap, 4)); }

TEST(PlatePlate, PecEnergyAndPressureMatchCasimir1948) {
  // E/A = -pi^2 hbar c/(720 L^3), P = -pi^2 hbar c/(240 L^4) (Casimir, Proc. K. Ned. Akad. Wet.
  // 51, 793 (1948); published); dP/dL = -4P/L (derived). At 1 um: -4.3338e-10 J/m^2 and
  // -1.30013e-3 Pa (evaluated from the formula, 5 digits).
  const PlatePlate pp = plates_of(make_perfect_conductor());
  // Required accuracy 1e-10; the rule is asked for 1e-12 so that its estimate is well inside.
  constexpr double kTol = 1e-10;
  for (double gap : {1e-7, 1e-6, 1e-5}) {
    const FrequencySum r = lifshitz(pp, gap, 0.0, 1e-12);
    EXPECT_NEAR(r.total.value / pec_energy(gap), 1.0, kTol) << "L = " << gap;
    EXPECT_NEAR(-r.total.d1 / pec_pressure(gap), 1.0, kTol) << "L = " << gap;
    EXPECT_NEAR(-r.total.d2 / (-4.0 * pec_pressure(gap) / gap), 1.0, kTol) << "L = " << gap;
    EXPECT_LT(r.abs_error, kTol * std::abs(r.total.value));
  }
  // The 5-digit values above (their rounding: 5e-5 relative).
  EXPECT_NEAR(lifshitz(pp, 1e-6, 0.0, 1e-8).total.value / -4.3338e-10, 1.0, 5e-5);
}

TEST(PlatePlate, PecSpectrumMatchesPolylogClosedForm) {
  // Ideal plates, q = xi/c, e = e^{-2qL} (derived by expanding ln(1 - e^{-2 kappa L})):
  //   s = -(1/pi) [q/(2L) Li2(e) + Li3(e)/(4L^2)],
  //   ds/dL = (2/pi) [q^2/(2L) Li1(e) + q/(2L^2) Li2(e) + Li3(e)/(4L^3)], Li1(e) = -ln(1-e).
  // A dense grid in xi, from the static limit to where s has fallen by e^-100.
  const PlatePlate pp = plates_of(make_perfect_conductor());
  const double L = 100e-9;
  constexpr double kTol = 1e-13;  // the k rule's default target; Li2, Li3 good to ~4e-15
  double worst = 0.0;
  for (double lu = -12.0; lu <= 2.0; lu += 0.0137) {
    const double xi = std::pow(10.0, lu) * pp.frequency_scale(L);
    const double q = xi / kSpeedOfLight, e = std::exp(-2.0 * q * L);
    const double li1 = -std::log1p(-e), li2 = special::dilog(e), li3 = special::trilog(e);
    const double s = -(q / (2.0 * L) * li2 + li3 / (4.0 * L * L)) / kPi;
    const double ds =
        2.0 / kPi * (q * q / (2.0 * L) * li1 + q / (2.0 * L * L) * li2 + li3 / (4.0 * L * L * L));
    const Spectral r = pp.at_frequency(xi, L, DerivativeOrder::kForce);
    worst = std::max({worst, std::abs(r.value / s - 1.0), std::abs(r.d1 / ds - 1.0)});
  }
  EXPECT_LT(worst, kTol);
}

// High-temperature checks at T = 300 K, L = 20 um: 2 xi_1 L / c = 32.9, so every n >= 1 term is
// below ~x^3 e^{-x} ~ 2e-10 of the n = 0 term (pressure and energy alike; derived from the PEC
// closed form of s(xi)). Tolerance 1e-9 covers it.
constexpr double kHighT = 300.0;
constexpr double kHighTGap = 20e-6;
constexpr double kHighTTol = 1e-9;

TEST(PlatePlate, PecHighTemperatureLimitIsZeta3Law) {
  // F/A -> -zeta(3) k_B T/(8 pi L^2), P -> -zeta(3) k_B T/(4 pi L^3) (standard; e.g. Bordag,
  // Mohideen, Mostepanenko, Phys. Rep. 353, 1 (2001)).
  const PlatePlate pp = plates_of(make_perfect_conductor());
  const FrequencySum r = lifshitz(pp, kHighTGap, kHighT, 1e-12);
  const double kT = kBoltzmann * kHighT;
  const double L = kHighTGap;
  EXPECT_NEAR(r.total.value / (-kZeta3 * kT / (8.0 * kPi * L * L)), 1.0, kHighTTol);
  EXPECT_NEAR(-r.total.d1 / (-kZeta3 * kT / (4.0 * kPi * L * L * L)), 1.0, kHighTTol);
}

TEST(PlatePlate, DrudeHighTemperatureLimitIsHalfOfPec) {
  // r_TE(0, k) = 0 for a Drude metal, r_TM(0, k) = 1: exactly half the PEC n = 0 term (derived
  // from the Lifshitz n = 0 term; Lifshitz 1956).
  const PlatePlate pp = plates_of(make_drude("gold-drude", kGoldOmegaP, kGoldGamma));
  const FrequencySum r = lifshitz(pp, kHighTGap, kHighT, 1e-12);
  const double kT = kBoltzmann * kHighT;
  const double L = kHighTGap;
  EXPECT_NEAR(r.total.value / (-kZeta3 * kT / (16.0 * kPi * L * L)), 1.0, kHighTTol);
  EXPECT_NEAR(-r.total.d1 / (-kZeta3 * kT / (8.0 * kPi * L * L * L)), 1.0, kHighTTol);
}

TEST(PlatePlate, PlasmaHighTemperatureLimitAddsStaticTeTerm) {
  // Plasma = Drude value + (k_B T/4 pi) \int k dk ln[1 - r_TE(0,k)^2 e^{-2kL}],
  // r_TE(0,k) = (k - sqrt(k^2 + k_p^2))/(k + sqrt(k^2 + k_p^2)) (derived from the Lifshitz n = 0
  // term). The integral by Boost.Math exp_sinh (independent of the solver's own k rule).
  const PlatePlate pp = plates_of(make_plasma("gold-plasma", kGoldOmegaP));
  const FrequencySum r = lifshitz(pp, kHighTGap, kHighT, 1e-12);
  const double kT = kBoltzmann * kHighT;
  const double L = kHighTGap;
  const double kp = kGoldOmegaP / kSpeedOfLight;
  auto te = [&](double k) {
    if (!(k > 0.0)) return 0.0;  // k ln(...) -> 0
    const double q = std::sqrt(k * k + kp * kp);
    const double rte2 = std::pow((q - k) / (q + k), 2);
    // 1 - r^2 e^{-2kL} = 4kq/(k+q)^2 - r^2 expm1(-2kL): no cancellation as k -> 0.
    const double one_minus = 4.0 * k * q / ((k + q) * (k + q)) - rte2 * std::expm1(-2.0 * k * L);
    return k * std::log(one_minus);
  };
  // In y = 2kL (k dk = y dy/(4L^2)) so that the integrand has unit scale.
  boost::math::quadrature::exp_sinh<double> integrator;
  const double te_integral = integrator.integrate([&](double y) { return te(y / (2.0 * L)); }, 0.0,
                                                  std::numeric_limits<double>::infinity(), 1e-14) /
                             (2.0 * L);
  const double expected = -kZeta3 * kT / (16.0 * kPi * L * L) + kT / (4.0 * kPi) * te_integral;
  EXPECT_NEAR(r.total.value / expected, 1.0, kHighTTol);
  // The TE term is not negligible here (L k_p ~ 900, r_TE ~ -1): plasma is close to PEC.
  EXPECT_LT(r.total.value, -kZeta3 * kT / (16.0 * kPi * L * L) * 1.9);
}

TEST(PlatePlate, PecLowTemperatureExpansionHolds) {
  // F/A = E_0 [1 + (45 zeta(3)/pi^3) t^3 - t^4], t = 2 k_B T L/(hbar c) (from memory; classic
  // result for ideal plates, corrections ~exp(-pi/t)). L = 1 um, T = 100 K: t = 0.087,
  // e^{-pi/t} ~ 2e-16.
  const PlatePlate pp = plates_of(make_perfect_conductor());
  const double L = 1e-6, T = 100.0;
  const double t = 2.0 * kBoltzmann * T * L / kHbarC;
  const double expected = 1.0 + 45.0 * kZeta3 / (kPi * kPi * kPi) * t * t * t - t * t * t * t;
  const FrequencySum r = lifshitz(pp, L, T, 1e-13);
  // Matsubara sum to 1e-13 relative; the thermal correction itself is 1.1e-3, so this checks it
  // to ~1e-8 of its size.
  constexpr double kTol = 1e-11;
  EXPECT_NEAR(r.total.value / pec_energy(L), expected, kTol);
}

TEST(PlatePlate, PlasmaZeroTemperatureFollowsSeriesInSkinDepth) {
  // eta_E = E/E_PEC = 1 - 4x + (72/5)x^2 - (320/7)(1 - pi^2/210)x^3 + (400/3)(1 - 163pi^2/7350)x^4,
  // eta_P = 1 - (16/3)x + 24x^2 - (640/7)(1 - pi^2/210)x^3 + (2800/9)(1 - 163pi^2/7350)x^4,
  // x = c/(omega_p L) (from memory: Bezerra, Klimchitskaya, Mostepanenko).
  const PlatePlate pp = plates_of(make_plasma("gold-plasma", kGoldOmegaP));
  const double c3 = 1.0 - kPi * kPi / 210.0, c4 = 1.0 - 163.0 * kPi * kPi / 7350.0;
  double residual_e[2], residual_p[2], xs[2];
  const double gaps[2] = {2e-6, 4e-6};
  for (int i = 0; i < 2; ++i) {
    const double L = gaps[i];
    const double x = kSpeedOfLight / (kGoldOmegaP * L);
    const double eta_e =
        1 - 4 * x + 72.0 / 5 * x * x - 320.0 / 7 * c3 * x * x * x + 400.0 / 3 * c4 * x * x * x * x;
    const double eta_p = 1 - 16.0 / 3 * x + 24 * x * x - 640.0 / 7 * c3 * x * x * x +
                         2800.0 / 9 * c4 * x * x * x * x;
    const FrequencySum r = lifshitz(pp, L, 0.0, 1e-12);
    xs[i] = x;
    residual_e[i] = r.total.value / pec_energy(L) - eta_e;
    residual_p[i] = -r.total.d1 / pec_pressure(L) - eta_p;
    // Truncation: the omitted x^5 term; its coefficient is taken as 10^3, twice the growth of the
    // last known ones (133 -> 104 and 311 -> 243 for the x^4 terms): x = 0.011 gives 1.6e-7.
    const double kSeriesTol = 1e3 * std::pow(x, 5);
    EXPECT_NEAR(residual_e[i], 0.0, kSeriesTol) << "L = " << L;
    EXPECT_NEAR(residual_p[i], 0.0, kSeriesTol) << "L = " << L;
  }
  // The residual is the x^5 term: halving x divides it by ~32 (allow 25-40 for the x^6 term).
  const double ratio = residual_e[0] / residual_e[1];
  const double expected = std::pow(xs[0] / xs[1], 5);
  EXPECT_GT(ratio, 0.8 * expected);
  EXPECT_LT(ratio, 1.25 * expected);
  const double ratio_p = residual_p[0] / residual_p[1];
  EXPECT_GT(ratio_p, 0.8 * expected);
  EXPECT_LT(ratio_p, 1.25 * expected);
}

TEST(PlatePlate, NonretardedLimitMatchesHamakerTrilogFormula) {
  // E/A = -(hbar/(16 pi^2 L^2)) \int_0^inf dxi Li_3(Delta^2), Delta = (eps-1)/(eps+1) (standard:
  // Lifshitz theory at L << c/omega_0, e.g. Parsegian, Van der Waals Forces, CUP 2006).
  // Lorentz dielectric eps = 1 + C w0^2/(w0^2 + xi^2), C = 2, w0 = 1e16 rad/s; reference by
  // Boost.Math exp_sinh with Li_3 as its power series (independent of the solver's polylog).
  DrudeLorentzParams p;
  const double w0 = 1e16, C = 2.0;
  p.oscillators.push_back({C, w0, 0.0});
  const PlatePlate pp = plates_of(std::make_shared<DrudeLorentz>("lorentz", p));
  auto li3_delta2 = [&](double xi) {
    const double eps = 1.0 + C * w0 * w0 / (w0 * w0 + xi * xi);
    const double d2 = std::pow((eps - 1.0) / (eps + 1.0), 2);
    double sum = 0.0, pw = d2;
    for (int n = 1; n < 200 && pw > 1e-18 * sum; ++n, pw *= d2) sum += pw / (double(n) * n * n);
    return sum;
  };
  boost::math::quadrature::exp_sinh<double> integrator;
  const double hamaker_integral =
      integrator.integrate([&](double u) { return w0 * li3_delta2(w0 * u); }, 0.0,
                           std::numeric_limits<double>::infinity(), 1e-13);
  double deviation[2];
  const double gaps[2] = {0.25e-9, 0.5e-9};
  for (int i = 0; i < 2; ++i) {
    const double L = gaps[i];
    const double nonretarded = -kHbar / (16.0 * kPi * kPi * L * L) * hamaker_integral;
    const double r = lifshitz(pp, L, 0.0, 1e-10).total.value / nonretarded;
    // Retardation lowers |E| by a relative amount of order a^2 ln(1/a), a = L w0/c (the log from
    // the region k ~ xi/c; 1.6e-3 and 5.0e-3 here). Tolerance 10 a^2 ln(1/a), and the deviation
    // must be a reduction that shrinks faster than linearly in L.
    const double a = L * w0 / kSpeedOfLight;
    const double kRetardationTol = 10.0 * a * a * std::log(1.0 / a);
    EXPECT_NEAR(r, 1.0, kRetardationTol) << "L = " << L;
    deviation[i] = 1.0 - r;
    EXPECT_GT(deviation[i], 0.0);
  }
  // Halving L: a^2 ln(1/a) falls 3.3-fold at these a; a linear law would give 2.
  EXPECT_GT(deviation[1] / deviation[0], 2.5);
  EXPECT_LT(deviation[1] / deviation[0], 4.0);
}

TEST(PlatePlate, PressureAndGradientAreFiniteDifferencesOfEnergy) {
  // P = -dE/dL, dP/dL = -d2E/dL2 (definitions, geometry.h) by central differences with
  // h = 1e-3 L: truncation (h/L)^2 E'''/(6 E') ~ 3e-6 for an L^-3 law, round-off
  // rel_tol (L/h) ~ 1e-9 (first) and rel_tol (L/h)^2 ~ 1e-6 (second); tolerance 2e-5.
  constexpr double kFdTol = 2e-5;
  const PlatePlate pp = plates_of(make_drude("gold-drude", kGoldOmegaP, kGoldGamma));
  for (double T : {0.0, 300.0}) {
    const double L = 200e-9, h = 1e-3 * L;
    const FrequencySum c = lifshitz(pp, L, T, 1e-12);
    const double ep = lifshitz(pp, L + h, T, 1e-12).total.value;
    const double em = lifshitz(pp, L - h, T, 1e-12).total.value;
    EXPECT_NEAR((ep - em) / (2.0 * h) / c.total.d1, 1.0, kFdTol) << "T = " << T;
    EXPECT_NEAR((ep - 2.0 * c.total.value + em) / (h * h) / c.total.d2, 1.0, kFdTol) << "T = " << T;
  }
}

TEST(PlatePlate, ExchangingThePlatesLeavesTheSpectrumUnchanged) {
  // s(xi) depends on r_a r_b only (Lifshitz formula): a symmetry of the integrand.
  auto gold = make_half_space(make_drude("gold-drude", kGoldOmegaP, kGoldGamma));
  auto si = make_half_space(make_constant("glass", 3.8));
  const PlatePlate ab(gold, si, nullptr), ba(si, gold, nullptr);
  for (double xi : {0.0, 1e13, 1e15, 1e16}) {
    const Spectral x = ab.at_frequency(xi, 1e-7, DerivativeOrder::kGradient);
    const Spectral y = ba.at_frequency(xi, 1e-7, DerivativeOrder::kGradient);
    EXPECT_DOUBLE_EQ(x.value, y.value);
    EXPECT_DOUBLE_EQ(x.d2, y.d2);
  }
}

TEST(PlatePlate, PecPlatesInDielectricScaleAsInverseRefractiveIndex) {
  // Constant eps_m between ideal plates: xi -> xi sqrt(eps_m) in kappa gives
  // E/A = E_PEC / sqrt(eps_m) at T = 0 (derived from the Lifshitz formula).
  const double eps_m = 1.77;  // water-like optical value (demo)
  const PlatePlate pp = plates_of(make_perfect_conductor(), make_constant("medium", eps_m));
  const FrequencySum r = lifshitz(pp, 1e-6, 0.0, 1e-12);
  constexpr double kTol = 1e-10;  // as for the vacuum PEC check
  EXPECT_NEAR(r.total.value / (pec_energy(1e-6) / std::sqrt(eps_m)), 1.0, kTol);
}

TEST(PlatePlate, RejectsNonPositiveGap) {
  const PlatePlate pp = plates_of(make_perfect_conductor());
  try {
    pp.at_frequency(1e14, -1e-9, DerivativeOrder::kEnergy);
    FAIL() << "no exception";
  } catch (const std::invalid_argument& e) {
    EXPECT_NE(std::string(e.what()).find("gap"), std::string::npos);
  }
  EXPECT_THROW(PlatePlate(nullptr, nullptr, nullptr), std::invalid_argument);
}

}  // namespace
}  // namespace roundtrip
