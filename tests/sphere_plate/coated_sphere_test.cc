// Sphere-plate with a coated sphere (SpherePlateOptions::shells; solver/scatterers/sphere_body.h).
// R outer radius, L surface-to-surface gap; energies negative when attractive.
#include <gtest/gtest.h>

#include <cmath>
#include <stdexcept>
#include <string>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/sphere_plate.h"
#include "solver/materials/library.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

constexpr double kR = 1e-6;
constexpr double kGap = 0.2e-6;  // R/L = 5: cheap, and far from both PFA and dipole limits

SpherePlateOptions sphere(MaterialPtr core, std::vector<SphereShell> shells, double tol) {
  SpherePlateOptions o;
  o.radius = kR;
  o.sphere = std::move(core);
  o.shells = std::move(shells);
  o.plate = make_half_space(builtin_material("gold-drude"));
  o.rel_tol = tol;
  return o;
}

FrequencySum energy(const SpherePlateOptions& o, double gap, double tol,
                    DerivativeOrder order = DerivativeOrder::kEnergy) {
  FrequencyRuleOptions fo;
  fo.rel_tol = tol;
  const auto g = make_sphere_plate(o);
  return sum_over_frequencies([&](double xi) { return g->at_frequency(xi, gap, order); },
                              g->frequency_scale(gap), fo);
}

TEST(CoatedSpherePlate, EnergyLiesBetweenCoreAndSolidShellMaterial) {
  // Derived/standard: at every imaginary frequency a gold coating makes the sphere more
  // reflective than polystyrene and less than solid gold, so s(xi) and the T = 0 energy lie in
  // between (E < 0: |E_ps| < |E_coated| < |E_gold|); a dielectric coating on gold the other way
  // round. The PFA values (the coated sphere's partner is the layered half-space) likewise.
  const MaterialPtr gold = builtin_material("gold-drude"), ps = builtin_material("polystyrene");
  const double tol = 1e-5;  // the three energies differ by > 10 %
  const SpherePlateOptions core_only = sphere(ps, {}, tol), solid = sphere(gold, {}, tol);
  const SpherePlateOptions coated = sphere(ps, {{gold, 20e-9}}, tol);
  const double e_ps = energy(core_only, kGap, tol).total.value;
  const double e_au = energy(solid, kGap, tol).total.value;
  const double e_c = energy(coated, kGap, tol).total.value;
  RecordProperty("E_ps_coated_gold",
                 std::to_string(e_ps) + " " + std::to_string(e_c) + " " + std::to_string(e_au));
  EXPECT_LT(e_au, e_c);
  EXPECT_LT(e_c, e_ps);
  EXPECT_LT(e_ps, 0.0);
  const double xi_c = kSpeedOfLight / (2 * kGap);
  for (double xi : {0.0, 0.01 * xi_c, xi_c, 10 * xi_c}) {
    const double a =
        make_sphere_plate(core_only)->at_frequency(xi, kGap, DerivativeOrder::kEnergy).value;
    const double b =
        make_sphere_plate(coated)->at_frequency(xi, kGap, DerivativeOrder::kEnergy).value;
    const double c =
        make_sphere_plate(solid)->at_frequency(xi, kGap, DerivativeOrder::kEnergy).value;
    if (xi == 0.0) {
      // n = 0: a Drude coating is a conducting sphere (TM g^2 = 1, TE 0) like solid Drude gold;
      // both take the closed-form Bessel kernel, so they agree to rounding.
      EXPECT_NEAR(b / c, 1.0, 1e-13);
    } else {
      EXPECT_LT(c, b) << "xi = " << xi;
    }
    EXPECT_LT(b, a) << "xi = " << xi;
  }
  FrequencyRuleOptions fo;
  fo.rel_tol = tol;
  const double p_ps = make_sphere_plate(core_only)->pfa(kGap, fo)->energy;
  const double p_c = make_sphere_plate(coated)->pfa(kGap, fo)->energy;
  const double p_au = make_sphere_plate(solid)->pfa(kGap, fo)->energy;
  EXPECT_LT(p_au, p_c);
  EXPECT_LT(p_c, p_ps);

  // Polystyrene coating on gold: between solid gold and solid polystyrene.
  const double e_d = energy(sphere(gold, {{ps, 20e-9}}, tol), kGap, tol).total.value;
  EXPECT_LT(e_au, e_d);
  EXPECT_LT(e_d, e_ps);
}

TEST(CoatedSpherePlate, ThinCoatingTendsToTheCoreAndThickToTheShell) {
  // Derived: the shell's effect is O(d) as d -> 0 and the core's O(exp(-2 d/delta)) for d much
  // larger than the skin depth delta (~22 nm for gold at xi >~ c/(2L)). xi > 0 only: at xi = 0 a
  // conducting shell of any thickness is a conductor (see EnergyLiesBetween...).
  const MaterialPtr gold = builtin_material("gold-drude"), ps = builtin_material("polystyrene");
  const double xi = kSpeedOfLight / (2 * kGap);
  auto s = [&](const SpherePlateOptions& o) {
    return make_sphere_plate(o)->at_frequency(xi, kGap, DerivativeOrder::kEnergy).value;
  };
  const double s_ps = s(sphere(ps, {}, 1e-8)), s_au = s(sphere(gold, {}, 1e-8));
  const double thin1 = s(sphere(ps, {{gold, 1e-15}}, 1e-8)) - s_ps;
  const double thin2 = s(sphere(ps, {{gold, 2e-15}}, 1e-8)) - s_ps;
  EXPECT_NEAR(thin2 / thin1, 2.0, 1e-3);  // linear in d (second order ~ eps l d/R ~ 1e-6)
  // 0.5 um of gold = ~20 skin depths: the core is invisible to ~e^-40 (rel 1e-11: the l_max and
  // node choices are identical, so only rounding of the Mie amplitudes differs)
  EXPECT_NEAR(s(sphere(ps, {{gold, 0.5e-6}}, 1e-8)) / s_au, 1.0, 1e-11);
  // a shell of the core's own material changes nothing
  EXPECT_NEAR(s(sphere(ps, {{ps, 0.3e-6}}, 1e-8)) / s_ps, 1.0, 1e-12);
}

// Central differences in L at fixed truncation (as in sphere_plate_test.cc): h = 1e-4 L, error
// ~h^2 s''' ~ 1e-8 relative, rounding ~1e-12.
void check_derivatives(SpherePlateOptions o, double xi, double gap, const std::string& what) {
  o.l_max = 40;
  o.m_max = 40;
  const auto g = make_sphere_plate(o);
  const double h = 1e-4 * gap;
  const Spectral c = g->at_frequency(xi, gap, DerivativeOrder::kGradient);
  const Spectral p = g->at_frequency(xi, gap + h, DerivativeOrder::kForce);
  const Spectral m = g->at_frequency(xi, gap - h, DerivativeOrder::kForce);
  EXPECT_NEAR((p.value - m.value) / (2 * h) / c.d1, 1.0, 1e-7) << what << " xi = " << xi;
  EXPECT_NEAR((p.d1 - m.d1) / (2 * h) / c.d2, 1.0, 1e-7) << what << " xi = " << xi;
}

TEST(CoatedSpherePlate, LDerivativesMatchFiniteDifferences) {
  const MaterialPtr gold = builtin_material("gold-drude"), ps = builtin_material("polystyrene");
  const MaterialPtr plasma = builtin_material("gold-plasma");
  const double gap = 0.3 * kR, xi_c = kSpeedOfLight / (2 * gap);
  for (double xi : {0.0, 0.3 * xi_c, 3.0 * xi_c}) {
    check_derivatives(sphere(ps, {{gold, 30e-9}}, 1e-6), xi, gap, "gold on polystyrene");
    check_derivatives(sphere(gold, {{ps, 30e-9}}, 1e-6), xi, gap, "polystyrene on gold");
    check_derivatives(sphere(ps, {{plasma, 30e-9}, {ps, 50e-9}}, 1e-6), xi, gap,
                      "plasma gold between polystyrene");
  }
}

TEST(CoatedSpherePlate, ForceIsMinusTheGapDerivativeOfTheEnergy) {
  // Standard: F = -dE/dL. The T = 0 energy at L +- h against the rule's dE/dL (analytic per
  // frequency). h = 1e-3 L: difference error ~h^2 E'''/(6 E') ~ 1e-6; the rule's error at rel_tol
  // 1e-7 is smooth in L (its nodes scale with c/2L), so it largely cancels in the difference.
  // Measured deviation 1.7e-6; tolerance 2e-5.
  const MaterialPtr gold = builtin_material("gold-drude"), ps = builtin_material("polystyrene");
  const double tol = 1e-7;
  const SpherePlateOptions o = sphere(ps, {{gold, 30e-9}}, tol);
  const double h = 1e-3 * kGap;
  const FrequencySum c = energy(o, kGap, tol, DerivativeOrder::kGradient);
  const double ep = energy(o, kGap + h, tol).total.value;
  const double em = energy(o, kGap - h, tol).total.value;
  const double dev = (ep - em) / (2 * h) / c.total.d1 - 1.0;
  RecordProperty("relative_deviation", std::to_string(dev));
  EXPECT_NEAR(dev, 0.0, 2e-5);
  EXPECT_GT(c.total.d1, 0.0);  // attractive: E rises with L
}

TEST(CoatedSpherePlate, DielectricCoatingKeepsTheMultipolePathAtZeroFrequency) {
  // The closed-form n = 0 kernel needs g_l^2 = 1 for every l; polystyrene on a perfect conductor
  // has g_l^2 < 1 (-> the dielectric value at large l), so the automatic path must equal the
  // explicit multipole sum (l_max fixed so that exp(-2 l_max L/R) < 1e-13) and differ from the
  // solid perfect conductor.
  const MaterialPtr ps = builtin_material("polystyrene");
  SpherePlateOptions o = sphere(make_perfect_conductor(), {{ps, 50e-9}}, 1e-10);
  const double gap = 0.2 * kR;
  const Spectral automatic = make_sphere_plate(o)->at_frequency(0.0, gap, DerivativeOrder::kEnergy);
  SpherePlateOptions fixed = o;
  fixed.l_max = 80;
  const Spectral multi = make_sphere_plate(fixed)->at_frequency(0.0, gap, DerivativeOrder::kEnergy);
  EXPECT_NEAR(automatic.value / multi.value, 1.0, 1e-9);
  const Spectral pec = make_sphere_plate(sphere(make_perfect_conductor(), {}, 1e-10))
                           ->at_frequency(0.0, gap, DerivativeOrder::kEnergy);
  EXPECT_GT(std::abs(automatic.value / pec.value - 1.0), 1e-3);
}

TEST(CoatedSpherePlate, BadShellsAreRejected) {
  const MaterialPtr ps = builtin_material("polystyrene");
  EXPECT_THROW(make_sphere_plate(sphere(ps, {{ps, 0.0}}, 1e-6)), std::invalid_argument);
  EXPECT_THROW(make_sphere_plate(sphere(ps, {{ps, kR}}, 1e-6)), std::invalid_argument);
  EXPECT_THROW(make_sphere_plate(sphere(ps, {{nullptr, 1e-8}}, 1e-6)), std::invalid_argument);
  try {
    make_sphere_plate(sphere(ps, {{ps, -1e-9}}, 1e-6));
    FAIL();
  } catch (const std::invalid_argument& e) {
    EXPECT_NE(std::string(e.what()).find("thickness"), std::string::npos) << e.what();
  }
}

}  // namespace
}  // namespace roundtrip
