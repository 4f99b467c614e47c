// Atom over a plate: Casimir-Polder limits, closed forms, hydrogen sum rules, finite differences
// and the small-sphere limit of the sphere-plate engine. z is the atom-surface distance; alpha
// the polarizability volume alpha/(4 pi eps_0) (m^3); U < 0 attracts.
#include "solver/geometries/atom_plate.h"

#include <gtest/gtest.h>

#include <cmath>

#include "solver/atoms/polarizability.h"
#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/sphere_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

constexpr double kRb = 318.8 * kBohrVolume;  // m^3, the built-in rubidium alpha(0)

FrequencySum energy(const Geometry& g, double z, double temperature, double tol,
                    DerivativeOrder order = DerivativeOrder::kGradient) {
  FrequencyRuleOptions fo;
  fo.temperature_K = temperature;
  fo.rel_tol = tol;
  return sum_over_frequencies([&](double xi) { return g.at_frequency(xi, z, order); },
                              g.frequency_scale(z), fo);
}

PlanarPtr mirror() { return make_half_space(make_perfect_conductor()); }

TEST(AtomPlate, HydrogenSpectrumSatisfiesTheSumRules) {
  // Standard: S(0) = 1 (Thomas-Reiche-Kuhn, one electron), S(-1) = (2/3)<r^2> = 2,
  // S(1) = (2/3)<p^2> = 2/3, S(-2) = alpha(0) = 9/2 a.u. for hydrogen 1s. The oscillator strengths
  // are from memory (polarizability.cc), so these are their check. Tolerance 1e-9: the discrete
  // tail beyond n = 4000 is modelled to O(N^-3) ~ 1e-11, the continuum quadrature to 1e-12.
  EXPECT_NEAR(hydrogen_sum_rule(0), 1.0, 1e-9);
  EXPECT_NEAR(hydrogen_sum_rule(-1), 2.0, 1e-9);
  EXPECT_NEAR(hydrogen_sum_rule(1), 2.0 / 3.0, 1e-9);
  EXPECT_NEAR(hydrogen_sum_rule(-2), 4.5, 1e-9);
  const auto h = builtin_polarizability("hydrogen");
  ASSERT_TRUE(h);
  EXPECT_NEAR(h->alpha(0.0) / kBohrVolume, 4.5, 1e-9);  // standard: 9/2 a.u.
  // f-sum rule: alpha(i xi) -> S(0)/xi^2 = 1/xi^2 a.u. far above the spectrum (standard), and
  // alpha decreases monotonically.
  const double x = 300.0;
  EXPECT_NEAR(h->alpha(x * kHartreeFrequency) / kBohrVolume * x * x, 1.0, 1e-3);
  double prev = h->alpha(0.0);
  for (double u : {0.01, 0.1, 0.3, 1.0, 3.0, 10.0}) {
    const double a = h->alpha(u * kHartreeFrequency);
    EXPECT_LT(a, prev) << u;
    prev = a;
  }
}

TEST(AtomPlate, BuiltinStaticPolarizabilities) {
  // helium 1.383 a.u. (standard; accurate 1.38319), rubidium 318.8 a.u. (Holmgren et al., PRA 81,
  // 053607 (2010); from memory): the static sums of the built-in oscillators.
  EXPECT_NEAR(builtin_polarizability("helium")->alpha(0.0) / kBohrVolume, 1.383, 1e-12);
  EXPECT_NEAR(builtin_polarizability("rubidium")->alpha(0.0) / kBohrVolume, 318.8, 1e-9);
  EXPECT_EQ(builtin_polarizability("unobtainium"), nullptr);
}

TEST(AtomPlate, ConstantAlphaOverPerfectMirrorAtZeroTemperatureIsCasimirPolder1948) {
  // U = -3 hbar c alpha/(8 pi z^4) exactly for a constant alpha (Casimir & Polder, Phys. Rev. 73,
  // 360 (1948)); F = -12 hbar c alpha/(8 pi z^5), dF/dz = 60 hbar c alpha/(8 pi z^6).
  // Tolerance 1e-8: the frequency rule at rel_tol 1e-9 and the kappa integral at 1e-11.
  const auto g = make_atom_plate(make_constant_polarizability(kRb), mirror());
  for (double z : {1e-9, 1e-7, 1e-5}) {
    const auto s = energy(*g, z, 0.0, 1e-9);
    ASSERT_TRUE(s.converged);
    const double c4 = 3.0 * kHbarC * kRb / (8.0 * kPi);
    EXPECT_NEAR(s.total.value / (-c4 / std::pow(z, 4)), 1.0, 1e-8) << z;
    EXPECT_NEAR(s.total.d1 / (4.0 * c4 / std::pow(z, 5)), 1.0, 1e-8) << z;
    EXPECT_NEAR(s.total.d2 / (-20.0 * c4 / std::pow(z, 6)), 1.0, 1e-8) << z;
  }
  ASSERT_TRUE(g->c4().has_value());
  EXPECT_NEAR(*g->c4() / (3.0 * kHbarC * kRb / (8.0 * kPi)), 1.0, 1e-15);
}

TEST(AtomPlate, RubidiumFarFromPerfectMirrorApproachesCasimirPolder) {
  // Casimir & Polder 1948 at z >> c/omega_0 (c/omega_0 = 125 nm for the D lines): the relative
  // deviation falls like (c/(omega_0 z))^2 (alpha(i xi) = alpha(0)(1 - xi^2/omega_0^2 + ...) at
  // xi ~ c/z; derived). At 10 um the bound 4 (c/(omega_0 z))^2 ~ 6e-4.
  const auto rb = builtin_polarizability("rubidium");
  const auto g = make_atom_plate(rb, mirror());
  const double w0 = 0.0580 * kHartreeFrequency;
  for (double z : {2e-6, 1e-5}) {
    const double u = energy(*g, z, 0.0, 1e-9, DerivativeOrder::kEnergy).total.value;
    const double cp = -3.0 * kHbarC * rb->alpha(0.0) / (8.0 * kPi * std::pow(z, 4));
    const double bound = 4.0 * std::pow(kSpeedOfLight / (w0 * z), 2);
    EXPECT_LT(std::abs(u / cp - 1.0), bound) << z;
    EXPECT_GT(u / cp, 1.0 - bound) << z;
  }
}

TEST(AtomPlate, NonRetardedLimitIsLennardJonesWithC3) {
  // One-oscillator atom over a constant-eps dielectric: C3 = (hbar/4pi) r alpha0 \int w^2/(w^2 +
  // xi^2) dxi = hbar alpha0 w r/8, r = (eps - 1)/(eps + 1) (Lennard-Jones 1932; standard;
  // integral derived). z^3 U -> -C3 as z -> 0; the deviation is O(omega z/c) (derived from the
  // expansion of e^{-2 kappa z}), bound 3 omega z/c.
  const double w = 0.0580 * kHartreeFrequency, eps = 4.0, r = (eps - 1) / (eps + 1);
  const auto atom = make_oscillator_polarizability({{kRb, w}});
  const auto g = make_atom_plate(atom, make_half_space(make_constant("eps4", eps)));
  const double c3 = kHbar * kRb * w * r / 8.0;
  EXPECT_NEAR(g->c3() / c3, 1.0, 1e-8);  // the quadrature of c3() (tolerance 1e-9 there)
  for (double z : {1e-10, 1e-11}) {
    const double u = energy(*g, z, 0.0, 1e-9, DerivativeOrder::kEnergy).total.value;
    EXPECT_NEAR(-u * z * z * z / c3, 1.0, 3.0 * w * z / kSpeedOfLight) << z;
  }
}

// Derived: constant alpha over a perfect mirror at T > 0. s(xi) = -alpha e^{-2az}(a^2/z + a/z^2 +
// 1/(2z^3)), a = xi/c; with q = e^{-2 b z}, b = 2 pi k_B T/(hbar c), the Matsubara sum is
// geometric: sum q^n = q/(1-q), sum n q^n = q/(1-q)^2, sum n^2 q^n = q(1+q)/(1-q)^3.
double thermal_mirror_closed_form(double alpha, double z, double t) {
  const double b = 2.0 * kPi * kBoltzmann * t / kHbarC, q = std::exp(-2.0 * b * z);
  const double s0 = q / (1 - q), s1 = q / ((1 - q) * (1 - q)),
               s2 = q * (1 + q) / ((1 - q) * (1 - q) * (1 - q));
  return -kBoltzmann * t * alpha *
         (1.0 / (4.0 * z * z * z) + b * b / z * s2 + b / (z * z) * s1 + s0 / (2.0 * z * z * z));
}

TEST(AtomPlate, ThermalConstantAlphaOverMirrorEqualsTheGeometricSeries) {
  // Tolerance 1e-8 (frequency rule at 1e-10). Force and gradient against central differences of
  // the closed form (h = 1e-4 z: truncation (h/z)^2 f'''/(6 f') ~ 3e-8 for a z^-3 law, bound
  // 1e-6; rounding of the second difference ~1e-16/(h/z)^2 = 1e-8, bound 1e-5).
  const auto g = make_atom_plate(make_constant_polarizability(kRb), mirror());
  for (double t : {3.0, 300.0})
    for (double z : {1e-7, 1e-6, 1e-5}) {
      const auto s = energy(*g, z, t, 1e-10);
      ASSERT_TRUE(s.converged);
      const double u = thermal_mirror_closed_form(kRb, z, t);
      EXPECT_NEAR(s.total.value / u, 1.0, 1e-8) << t << " K " << z;
      const double h = 1e-4 * z;
      const double up = thermal_mirror_closed_form(kRb, z + h, t),
                   um = thermal_mirror_closed_form(kRb, z - h, t);
      EXPECT_NEAR(s.total.d1 / ((up - um) / (2 * h)), 1.0, 1e-6) << t << " K " << z;
      EXPECT_NEAR(s.total.d2 / ((up - 2 * u + um) / (h * h)), 1.0, 1e-5) << t << " K " << z;
    }
}

TEST(AtomPlate, HighTemperatureLimitIsTheStaticTerm) {
  // z >> hbar c/(k_B T): U -> -k_B T alpha(0) r_TM(0)/(4 z^3) (standard; only n = 0 survives,
  // the n = 1 term is ~ e^{-4 pi z k_B T/(hbar c)} ~ e^{-160} here). Mirror: r = 1; dielectric:
  // r = (eps(0) - 1)/(eps(0) + 1); Drude gold: static TM reflection 1.
  const double t = 300.0, z = 1e-4;
  const auto rb = builtin_polarizability("rubidium");
  const double eps = 3.81;
  struct Case {
    PlanarPtr plate;
    double r;
  };
  for (const Case& c : {Case{mirror(), 1.0},
                        Case{make_half_space(make_constant("eps", eps)), (eps - 1) / (eps + 1)},
                        Case{make_half_space(make_drude("gold", 9.0 * kRadPerSecondPerEv,
                                                        0.035 * kRadPerSecondPerEv)),
                             1.0}}) {
    const auto g = make_atom_plate(rb, c.plate);
    const double u = energy(*g, z, t, 1e-10, DerivativeOrder::kEnergy).total.value;
    const double ref = -kBoltzmann * t * rb->alpha(0.0) * c.r / (4.0 * z * z * z);
    EXPECT_NEAR(u / ref, 1.0, 1e-9) << c.plate->describe();
  }
}

TEST(AtomPlate, ForceAndGradientAreDerivativesOfTheEnergy) {
  // Central differences (h = 1e-3 z; truncation (h/z)^2 f'''/(6 f') ~ 3e-6 for a z^-3 law and
  // 5e-6 for z^-4, bound 1e-5; second difference: truncation ~1e-5 and rounding of the sums at
  // 1e-11 relative / (h/z)^2 = 1e-5, bound 1e-4). Rubidium over Drude gold and over silica-like
  // two-oscillator glass at 300 K and at 0 K.
  const auto rb = builtin_polarizability("rubidium");
  const auto gold =
      make_half_space(make_drude("gold", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv));
  const auto g = make_atom_plate(rb, gold);
  for (double t : {0.0, 300.0})
    for (double z : {2e-8, 5e-7}) {
      const double h = 1e-3 * z;
      const auto s = energy(*g, z, t, 1e-11);
      const double up = energy(*g, z + h, t, 1e-11, DerivativeOrder::kEnergy).total.value;
      const double um = energy(*g, z - h, t, 1e-11, DerivativeOrder::kEnergy).total.value;
      EXPECT_NEAR(s.total.d1 / ((up - um) / (2 * h)), 1.0, 1e-5) << t << " K " << z;
      EXPECT_NEAR(s.total.d2 / ((up - 2 * s.total.value + um) / (h * h)), 1.0, 1e-4)
          << t << " K " << z;
    }
}

TEST(AtomPlate, SmallSphereInTheSpherePlateEngineIsAnAtom) {
  // A dielectric sphere of radius a << z is an atom of alpha = a^3 (eps - 1)/(eps + 2) at its
  // centre (Clausius-Mossotti, standard). Independent paths: Mie T-matrix and plane-wave round
  // trip (sphere_plate) against the Casimir-Polder kappa integral (atom_plate). Corrections are
  // O((a/z)^2) (next multipole, magnetic dipole, dynamic Mie terms; derived): a = 10 nm at
  // z = 1 um gives ~1e-4; tolerance 1e-3, and the deviation must scale like a^2.
  const double eps = 3.0, z = 1e-6;
  for (double t : {0.0, 300.0}) {
    double dev[2];
    for (int i = 0; i < 2; ++i) {
      const double a = i == 0 ? 1e-8 : 2e-8, gap = z - a;
      const double alpha = a * a * a * (eps - 1) / (eps + 2);
      SpherePlateOptions o;
      o.radius = a;
      o.sphere = make_constant("eps3", eps);
      o.plate = mirror();
      o.rel_tol = 1e-8;
      const auto sp = make_sphere_plate(o);
      const double e_sp = energy(*sp, gap, t, 1e-8, DerivativeOrder::kForce).total.value;
      const auto at = make_atom_plate(make_constant_polarizability(alpha), mirror());
      const auto s_at = energy(*at, gap + a, t, 1e-8, DerivativeOrder::kForce);
      dev[i] = e_sp / s_at.total.value - 1.0;
      EXPECT_NEAR(dev[i], 0.0, 1e-3) << t << " K, a = " << a;
    }
    // Derived: the deviation is O((a/z)^2), so doubling a multiplies it by about 4 (accepted 3-5).
    EXPECT_GT(dev[1] / dev[0], 3.0) << t << " K: " << dev[0] << " " << dev[1];
    EXPECT_LT(dev[1] / dev[0], 5.0) << t << " K: " << dev[0] << " " << dev[1];
  }
}

TEST(AtomPlate, ConductingMediumIsRefused) {
  EXPECT_THROW(
      make_atom_plate(make_constant_polarizability(kRb), mirror(), make_drude("gold", 1e16, 1e14)),
      std::invalid_argument);
  EXPECT_THROW(make_constant_polarizability(-1e-30), std::invalid_argument);
  EXPECT_THROW(make_oscillator_polarizability({{1e-30, -1.0}}), std::invalid_argument);
}

}  // namespace
}  // namespace roundtrip
