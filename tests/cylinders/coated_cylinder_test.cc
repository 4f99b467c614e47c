// Coated (layered) cylinder T-matrix, solver/scatterers/cylinder_body.h, and the cylinder
// geometries with shells. Sources beside each check.
#include <gtest/gtest.h>

#include <boost/math/special_functions/bessel.hpp>
#include <boost/math/special_functions/bessel_prime.hpp>
#include <cmath>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/cylinder_cylinder.h"
#include "solver/geometries/cylinder_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"
#include "solver/scatterers/cylinder_body.h"
#include "solver/scatterers/cylinder_t.h"

namespace roundtrip {
namespace {

// Gold as a Drude metal, omega_p = 9 eV, gamma = 35 meV, and its plasma model (common practice
// in the Casimir literature, e.g. Bordag, Mohideen, Mostepanenko, Phys. Rep. 353, 1 (2001)).
constexpr double kEv = 1.519267447e15;  // rad/s per eV
MaterialPtr drude_gold() { return make_drude("gold-drude", 9.0 * kEv, 0.035 * kEv); }
MaterialPtr plasma_gold() { return make_plasma("gold-plasma", 9.0 * kEv); }

struct TMat {
  std::vector<double> lt;
  std::vector<cylinder::Tau> tau;
};
TMat t_of(const MaterialPtr& body, const MaterialPtr& medium, double R, double xi, double kz,
          int M) {
  TMat t;
  cylinder::cylinder_t(*body, *medium, R, xi, kz, M, t.lt, t.tau);
  return t;
}

// |a - b| <= tol max(|b|, floor): entrywise comparison of tau (a relative test for the
// diagonal, whose entries are O(1) or small, and the same scale for the cross terms).
void expect_tau_near(const TMat& a, const TMat& b, double tol, const std::string& what) {
  ASSERT_EQ(a.tau.size(), b.tau.size());
  for (std::size_t m = 0; m < a.tau.size(); ++m) {
    EXPECT_EQ(a.lt[m], b.lt[m]);
    const double scale = std::max({std::abs(b.tau[m][0]), std::abs(b.tau[m][3]), 1e-300});
    for (int k = 0; k < 4; ++k)
      EXPECT_NEAR(a.tau[m][k], b.tau[m][k], tol * scale)
          << what << " m = " << m << " entry " << k << " got " << a.tau[m][k] << " want "
          << b.tau[m][k];
  }
}

// Derived (cylinder_body.h): a shell of the core's own material is no interface at all, so the
// coated cylinder is the homogeneous one; the layered transfer and cylinder_t's closed form
// (Bohren & Huffman (1983) ch. 8 continued to imaginary frequency) are different algebra, so they
// agree to rounding: 1e-12 relative (tens of operations on O(1) ratios; measured worst 6e-14).
TEST(CoatedCylinder, ShellOfTheCoreMaterialIsTheHomogeneousCylinder) {
  const auto vac = make_vacuum();
  const double R = 1e-6;
  const int M = 30;
  for (const MaterialPtr& mat : {make_constant("glass", 2.25), drude_gold(), plasma_gold(),
                                 make_constant("silicon", 11.7)}) {
    const auto coated = make_coated_cylinder(mat, {{mat, 0.3e-6}, {mat, 1e-9}});
    for (double xi : {0.0, 1e13, 3e14, 5e15})
      for (double kz : {2e4, 1e6, 3e7}) {
        expect_tau_near(t_of(coated, vac, R, xi, kz, M), t_of(mat, vac, R, xi, kz, M), 1e-12,
                        mat->name() + " xi " + std::to_string(xi) + " kz " + std::to_string(kz));
      }
  }
}

// Derived: a shell of the medium's permittivity (eps -> 1 in vacuum) is empty space, so the
// cylinder is the bare core of radius a = R - d, whose T-matrix in the basis normalised at the
// outer radius R is the same physical operator: T_m = -(I_m/K_m)(pR) tau_m(coated) =
// -(I_m/K_m)(pa) tau_m(core). Tolerance: tau(coated) ~ (a/R)^{2m} tau(core) is a difference of
// O(1) log-derivative terms (cylinder_body.h), so its rounding is absolute, a few m ulp:
// 1e-12 of the diagonal plus 1e-13 absolute (measured worst 3e-12 relative at m = 20, where
// (a/R)^{2m} ~ 1e-4).
TEST(CoatedCylinder, ShellOfTheMediumIsTheBareCore) {
  const auto vac = make_vacuum();
  const double R = 1e-6, d = 0.2e-6;
  const int M = 20;
  for (const MaterialPtr& core :
       {make_constant("glass", 2.25), drude_gold(), plasma_gold(), make_perfect_conductor()}) {
    const auto coated = make_coated_cylinder(core, {{make_constant("empty", 1.0), d}});
    for (double xi : {0.0, 1e14, 2e15})
      for (double kz : {1e5, 3e6}) {
        const TMat a = t_of(coated, vac, R, xi, kz, M), b = t_of(core, vac, R - d, xi, kz, M);
        for (int m = 0; m <= M; ++m) {
          const double f = std::exp(b.lt[m] - a.lt[m]);  // core's tau renormalised to R
          const double scale = std::max(std::abs(b.tau[m][0]), std::abs(b.tau[m][3])) * f;
          for (int k = 0; k < 4; ++k)
            EXPECT_NEAR(a.tau[m][k], b.tau[m][k] * f, 1e-12 * scale + 1e-13)
                << core->name() << " xi " << xi << " kz " << kz << " m " << m << " k " << k;
        }
      }
  }
}

// Derived: a shell of zero thickness changes nothing; the transfer is continuous as d -> 0
// (Q -> 1, cylinder_body.h) and the first correction is linear in d (of order m eps_shell d/R:
// 0.2 at d/R = 1e-3 for silicon at m = 15). So the deviation from the bare glass cylinder must fall
// about 100x per 100x in d (required: at least 20x) and be below 1e-5 at d/R = 1e-7.
TEST(CoatedCylinder, ZeroThicknessLimitIsTheCore) {
  const auto vac = make_vacuum();
  const auto glass = make_constant("glass", 2.25), silicon = make_constant("silicon", 11.7);
  const double R = 1e-6;
  const int M = 15;
  for (double xi : {1e14, 1e15})
    for (double kz : {1e5, 3e6}) {
      const TMat ref = t_of(glass, vac, R, xi, kz, M);
      double prev = 1.0;
      for (double d : {1e-9, 1e-11, 1e-13}) {
        const TMat a = t_of(make_coated_cylinder(glass, {{silicon, d}}), vac, R, xi, kz, M);
        double worst = 0.0;
        for (int m = 0; m <= M; ++m)
          for (int k = 0; k < 4; ++k)
            worst = std::max(worst, std::abs(a.tau[m][k] - ref.tau[m][k]) /
                                        std::max(std::abs(ref.tau[m][0]), std::abs(ref.tau[m][3])));
        if (d < 1e-9) EXPECT_LT(worst, prev * 0.05) << "d = " << d;
        prev = worst;
      }
      EXPECT_LT(prev, 1e-5);
    }
}

// Derived: a core deep inside a thick shell is invisible to the low orders once the shell's
// evanescent decay exp(-2 p_shell (R - a)) is negligible: the cylinder is a homogeneous one of
// the shell's material. Core radius 1e-3 R, p R >= 30: the core's imprint is below e^-60.
// Tolerance 1e-12 as for the homogeneous comparison.
TEST(CoatedCylinder, ThickShellWithADeepCoreIsTheShellCylinder) {
  const auto vac = make_vacuum();
  const auto silicon = make_constant("silicon", 11.7);
  const double R = 1e-6;
  const int M = 10;
  for (const MaterialPtr& core : {make_perfect_conductor(), drude_gold(), plasma_gold()}) {
    const auto coated = make_coated_cylinder(core, {{silicon, R - 1e-9}});
    for (double xi : {5e15, 2e16})
      for (double kz : {3e7, 1e8})
        expect_tau_near(t_of(coated, vac, R, xi, kz, M), t_of(silicon, vac, R, xi, kz, M), 1e-12,
                        core->name());
  }
}

// Derived: a gold shell much thicker than its skin depth c/omega_p ~ 22 nm hides its core: a
// 400 nm Drude-gold shell on glass is a gold cylinder up to e^-(2 x 400/22) ~ 1e-16. At xi = 0
// the Drude shell is an equipotential (tau_EE = 1 for both) and the static H field passes
// through it (tau_HH = 0 for both): exact. Tolerance 1e-12.
TEST(CoatedCylinder, ThickGoldShellIsAGoldCylinder) {
  const auto vac = make_vacuum();
  const auto glass = make_constant("glass", 2.25);
  const double R = 1e-6;
  const int M = 20;
  const auto coated = make_coated_cylinder(glass, {{drude_gold(), 0.4e-6}});
  for (double xi : {0.0, 1e14, 1e15, 1e16})
    for (double kz : {1e5, 3e6})
      expect_tau_near(t_of(coated, vac, R, xi, kz, M), t_of(drude_gold(), vac, R, xi, kz, M), 1e-12,
                      "xi " + std::to_string(xi));
}

// Derived: as the core's permittivity grows (constant eps = 1e4 ... 1e12) the coated cylinder
// tends to the one with a perfectly conducting core (the homogeneous eps -> inf limit of
// cylinder_t.h, leading corrections O(eps^-1/2) from the core's skin).
TEST(CoatedCylinder, LargeCoreEpsilonTendsToPerfectlyConductingCore) {
  const auto vac = make_vacuum();
  const auto glass = make_constant("glass", 2.25);
  const double R = 1e-6;
  const int M = 10;
  const double xi = 3e14, kz = 2e6;
  const TMat ref =
      t_of(make_coated_cylinder(make_perfect_conductor(), {{glass, 0.3e-6}}), vac, R, xi, kz, M);
  double prev = 1.0;
  for (double eps : {1e6, 1e8, 1e10, 1e12}) {
    const TMat a =
        t_of(make_coated_cylinder(make_constant("big", eps), {{glass, 0.3e-6}}), vac, R, xi, kz, M);
    double worst = 0.0;
    for (int m = 0; m <= M; ++m)
      for (int k = 0; k < 4; ++k)
        worst = std::max(worst, std::abs(a.tau[m][k] - ref.tau[m][k]) /
                                    std::max(std::abs(ref.tau[m][0]), std::abs(ref.tau[m][3])));
    EXPECT_LT(worst, 0.3 * prev) << "eps " << eps;  // O(eps^-1/2): a factor 10 per 100
    prev = worst;
  }
  EXPECT_LT(prev, 1e-4);
}

// k_z = 0: TE and TM decouple and the coated cylinder is the scalar 2D problem (derived here
// from Maxwell's equations, the imaginary-frequency form of the coated cylinder at normal
// incidence, Bohren & Huffman (1983) §8.5; Kerker, The Scattering of Light (1969)). Region j:
// p_j = sqrt(eps_j) xi/c, psi = A I_m(p_j rho) + B K_m(p_j rho); E_z (TM): psi and psi'
// continuous; H_z (TE): psi and psi'/eps continuous. With w_j = 1 (TM) or 1/eps_j (TE) and the
// core's y_1 = p_1 I'_m(p_1 a)/I_m(p_1 a):
//   shell psi = I_m(p_2 rho) + g K_m(p_2 rho),
//   g = -[w_2 p_2 I'_m(p_2 a) - w_1 y_1 I_m(p_2 a)] / [w_2 p_2 K'_m(p_2 a) - w_1 y_1 K_m(p_2 a)],
//   y_2 = p_2 [I'_m(p_2 b) + g K'_m(p_2 b)] / [I_m(p_2 b) + g K_m(p_2 b)],
//   T_m = -[w_m p I'_m(p b) - w_2 y_2 I_m(p b)] / [w_m p K'_m(p b) - w_2 y_2 K_m(p b)].
// Evaluated here with Boost's Bessel functions directly (moderate orders and arguments, no
// scaling needed). Both this formula and the transfer end in the same cancellation
// w_m p I' - w_2 y_2 I (weak scattering at high m, small p b), so the tolerance is 1e-12 plus
// 100 ulp times its condition number kappa = (|w_m p I'| + |w_2 y_2 I|)/|w_m p I' - w_2 y_2 I|.
// Spot values of this formula agree with the direct mpmath solve of
// tests/cylinders/coated_cylinder_reference.py (50 digits): glass core (eps 2.25, a = 0.6 um),
// silicon shell (eps 11.7) to b = 1 um, vacuum, xi = 3e14 rad/s, m = 2: T_TM = T_EE =
// -0.019972330212149347, T_TE = T_HH = 0.057345626568641962 (checked below too).
double scalar_2d_t(bool tm, int m, double xi, double e1, double a, double e2, double b, double em,
                   double* kappa = nullptr) {
  using boost::math::cyl_bessel_i;
  using boost::math::cyl_bessel_i_prime;
  using boost::math::cyl_bessel_k;
  using boost::math::cyl_bessel_k_prime;
  const double k0 = xi / kSpeedOfLight;
  const double p1 = std::sqrt(e1) * k0, p2 = std::sqrt(e2) * k0, p = std::sqrt(em) * k0;
  const double w1 = tm ? 1.0 : 1.0 / e1, w2 = tm ? 1.0 : 1.0 / e2, wm = tm ? 1.0 : 1.0 / em;
  const double y1 = p1 * cyl_bessel_i_prime(m, p1 * a) / cyl_bessel_i(m, p1 * a);
  const double g = -(w2 * p2 * cyl_bessel_i_prime(m, p2 * a) - w1 * y1 * cyl_bessel_i(m, p2 * a)) /
                   (w2 * p2 * cyl_bessel_k_prime(m, p2 * a) - w1 * y1 * cyl_bessel_k(m, p2 * a));
  const double y2 = p2 * (cyl_bessel_i_prime(m, p2 * b) + g * cyl_bessel_k_prime(m, p2 * b)) /
                    (cyl_bessel_i(m, p2 * b) + g * cyl_bessel_k(m, p2 * b));
  const double u = wm * p * cyl_bessel_i_prime(m, p * b), v = w2 * y2 * cyl_bessel_i(m, p * b);
  if (kappa) *kappa = (std::abs(u) + std::abs(v)) / std::abs(u - v);
  return -(u - v) / (wm * p * cyl_bessel_k_prime(m, p * b) - w2 * y2 * cyl_bessel_k(m, p * b));
}

TEST(CoatedCylinder, NormalIncidenceIsTheScalarCoatedCylinder) {
  const double b = 1e-6, a = 0.6e-6;
  const int M = 12;
  for (const auto& [e1, e2, em] : std::vector<std::array<double, 3>>{
           {2.25, 11.7, 1.0}, {11.7, 2.25, 1.0}, {1e3, 2.0, 1.77}, {2.0, 1e3, 1.0}})
    for (double xi : {3e13, 3e14, 3e15}) {
      const auto med = make_constant("medium", em);
      const auto coated =
          make_coated_cylinder(make_constant("core", e1), {{make_constant("shell", e2), b - a}});
      const TMat t = t_of(coated, med, b, xi, 0.0, M);
      for (int m = 0; m <= M; ++m) {
        const double s = -std::exp(t.lt[m]);  // T = -(I/K) tau
        double k_tm = 0.0, k_te = 0.0;
        const double tm = scalar_2d_t(true, m, xi, e1, a, e2, b, em, &k_tm);
        const double te = scalar_2d_t(false, m, xi, e1, a, e2, b, em, &k_te);
        constexpr double kUlp = 2.2e-16;
        EXPECT_NEAR(s * t.tau[m][0] / tm, 1.0, 1e-12 + 100 * kUlp * k_tm)
            << e1 << " " << e2 << " " << xi << " " << m << " kappa " << k_tm;
        EXPECT_NEAR(s * t.tau[m][3] / te, 1.0, 1e-12 + 100 * kUlp * k_te)
            << e1 << " " << e2 << " " << xi << " " << m << " kappa " << k_te;
        EXPECT_EQ(t.tau[m][1], 0.0);
        EXPECT_EQ(t.tau[m][2], 0.0);
      }
    }
}

// Oblique incidence (k_z != 0, TE and TM mixed) against an independent direct solve of both
// interfaces' conditions as one 8 x 8 linear system in mpmath at 50 digits
// (tests/cylinders/coated_cylinder_reference.py; its output pasted here). Tolerance 1e-12
// relative to the largest entry of T_m (the transfer's rounding, measured ~1e-15).
TEST(CoatedCylinder, ObliqueIncidenceMatchesADirectSolveOfTheInterfaceConditions) {
  struct Case {
    double xi, kz, e1, a, e2, b, em;
    std::vector<std::array<double, 5>> rows;  // m, T_EE, T_EH, T_HE, T_HH
  };
  const std::vector<Case> cases = {
      {3e14,
       0.0,
       2.25,
       0.6e-6,
       11.7,
       1e-6,
       1.0,
       {{0, -1.6408050001453833, 0.0, 0.0, 0.35471492664565216},
        {1, -0.35471492664565216, 0.0, 0.0, 0.45614737505267986},
        {2, -0.019972330212149347, 0.0, 0.0, 0.057345626568641962},
        {5, -5.7069107724111591e-8, 0.0, 0.0, 6.1546658200789e-7}}},
      {3e14,
       2e6,
       2.25,
       0.6e-6,
       11.7,
       1e-6,
       1.0,
       {{0, -22.405765044050269, 0.0, 0.0, 4.511562158889414},
        {1, -13.434252299312527, 1.8774554063249316, -1.8774554063249316, 3.5964861757674971},
        {2, -3.6290569385018678, 0.93303709970149469, -0.93303709970149469, 1.1029942883809674},
        {5, -0.002404365019373593, 0.00099910357912598368, -0.00099910357912598368,
         0.00069380332466773946}}},
      {1e15,
       5e6,
       1e3,
       0.8e-6,
       2.0,
       1e-6,
       1.77,
       {{0, -22368.651767159044, 0.0, 0.0, 12398.379588116575},
        {1, -18758.934787793482, 672.09256914260703, -1189.6038473824144, 10502.421173645289},
        {2, -11163.101026227686, 826.70318585136977, -1463.2646389569245, 6397.0346907608427},
        {5, -385.13349252413106, 82.35215842271401, -145.7633204082038, 234.32048293830787}}},
  };
  for (const Case& c : cases) {
    const auto coated = make_coated_cylinder(make_constant("core", c.e1),
                                             {{make_constant("shell", c.e2), c.b - c.a}});
    const TMat t = t_of(coated, make_constant("medium", c.em), c.b, c.xi, c.kz, 5);
    for (const auto& r : c.rows) {
      const int m = static_cast<int>(r[0]);
      const double s = -std::exp(t.lt[m]);  // T = -(I/K) tau
      const double big = std::max(std::abs(r[1]), std::abs(r[4]));
      for (int k = 0; k < 4; ++k)
        EXPECT_NEAR(s * t.tau[m][k], r[1 + k], 1e-12 * big)
            << "xi " << c.xi << " kz " << c.kz << " m " << m << " entry " << k;
    }
  }
}

// Derived: the exact xi = 0 T-matrix (cylinder_body.h: electrostatics with equipotential
// conductors; magnetostatics with London screening in plasma regions) is the limit of the
// dynamic one for every layering of dielectric, Drude, plasma and perfect conductor. At
// xi = 1e8 rad/s (k_0 = 0.33/m) the TE/TM cross terms are O(k_0/k_z) <= 1.1e-6 here (they vanish
// linearly in xi: measured at m = 2, 1e-6 at xi = 1e9, 1e-3 at 1e12), the diagonal corrections
// O((k_0/k_z)^2): tolerance 1e-5 of the diagonal scale. (Much lower xi is no better: the cross
// terms of a plasma region at eps ~ 1e26 round to ~1e-4 at xi = 1e3, as for the homogeneous
// cylinder_t; ~1e-10 here.) Drude regions keep a residual London-like screening
// eps k_0^2 R^2 = omega_p^2 xi R^2/(c^2 gamma) ~ 4e-11 xi/(rad/s) that vanishes only linearly
// (4e-3 at 1e8: measured tau_HH ~ 8e-5), so layerings with Drude take xi = 1e3 rad/s.
TEST(CoatedCylinder, StaticTMatrixIsTheLimitOfTheDynamicOne) {
  const double R = 1e-6;
  const auto vac = make_vacuum();
  const auto glass = make_constant("glass", 2.25), silicon = make_constant("silicon", 11.7);
  const auto pec = make_perfect_conductor();
  const auto other_plasma = make_plasma("plasma-4eV", 4.0 * kEv);
  const std::vector<std::pair<MaterialPtr, std::vector<CylinderShell>>> bodies = {
      {glass, {{silicon, 0.3e-6}}},
      {glass, {{plasma_gold(), 30e-9}}},
      {plasma_gold(), {{glass, 0.2e-6}}},
      {pec, {{glass, 0.2e-6}}},
      {pec, {{plasma_gold(), 20e-9}}},
      {other_plasma, {{plasma_gold(), 40e-9}}},
      {plasma_gold(), {{glass, 0.1e-6}, {other_plasma, 50e-9}}},
      {glass, {{drude_gold(), 50e-9}}},
      {drude_gold(), {{silicon, 0.2e-6}}},
      {silicon, {{plasma_gold(), 30e-9}, {glass, 0.1e-6}}},
  };
  for (const auto& [core, shells] : bodies) {
    const auto body = make_coated_cylinder(core, shells);
    bool drude = core->static_limit().kind == StaticClass::kDrudeConductor;
    for (const auto& sh : shells)
      drude = drude || sh.material->static_limit().kind == StaticClass::kDrudeConductor;
    const double xi = drude ? 1e3 : 1e8;
    for (double kz : {3e5, 3e6, 3e7}) {
      const int M = 12;
      const TMat s = t_of(body, vac, R, 0.0, kz, M), d = t_of(body, vac, R, xi, kz, M);
      for (int m = 0; m <= M; ++m)
        for (int k = 0; k < 4; ++k)
          EXPECT_NEAR(d.tau[m][k], s.tau[m][k],
                      1e-5 * (std::abs(s.tau[m][0]) + std::abs(s.tau[m][3])))
              << body->name() << " kz " << kz << " m " << m << " entry " << k;
    }
  }
}

// Derived: a shell of the core's own material changes nothing, so the per-length spectral
// integrand s(xi) (the k_z integral of log det, with its L-derivative) and the PFA per length of
// cylinder-plate and cylinder-cylinder with such shells equal the unshelled ones, at xi = 0 (the
// exact static T-matrices) and at two Matsubara frequencies of 300 K. The T-matrices agree to
// ~6e-14 (first test) and the adaptive k_z and m rules see the same integrands to that level:
// 1e-10 relative. (The full frequency sum took 40 s of CPU time here: too slow for the suite.)
TEST(CoatedCylinder, GeometriesWithAShellOfTheCoreMaterialAreUnchanged) {
  const double R = 0.2e-6, L = 0.2e-6, T = 300.0, tol = 1e-4;
  const double xi1 = 2.0 * kPi * kBoltzmann * T / kHbar;  // first Matsubara frequency
  const auto gold = drude_gold();
  const auto glass = make_constant("glass", 2.25);
  const auto silicon_plate = make_half_space(make_constant("silicon", 11.7));
  const auto shelled_gold = make_coated_cylinder(gold, {{gold, 40e-9}});
  const auto shelled_glass = make_coated_cylinder(glass, {{glass, 60e-9}, {glass, 10e-9}});
  const auto same = [&](const Geometry& a, const Geometry& b) {
    for (double xi : {0.0, xi1, 4.0 * xi1}) {
      const Spectral sa = a.at_frequency(xi, L, DerivativeOrder::kGradient);
      const Spectral sb = b.at_frequency(xi, L, DerivativeOrder::kGradient);
      EXPECT_NEAR(sb.value / sa.value, 1.0, 1e-10) << a.kind() << " xi " << xi;
      EXPECT_NEAR(sb.d1 / sa.d1, 1.0, 1e-10) << a.kind() << " xi " << xi;
    }
  };
  {
    CylinderPlateOptions o;
    o.radius = R;
    o.plate = silicon_plate;
    o.rel_tol = tol;
    o.cylinder = gold;
    const auto plain = make_cylinder_plate(o);
    o.cylinder = shelled_gold;
    const auto coated = make_cylinder_plate(o);
    same(*plain, *coated);
    FrequencyRuleOptions opts;
    opts.temperature_K = T;
    opts.rel_tol = tol;
    EXPECT_NEAR(coated->pfa(L, opts)->energy / plain->pfa(L, opts)->energy, 1.0, 1e-10);
    EXPECT_NE(coated->describe().find("gold-drude (4e-08 m) on gold-drude"), std::string::npos)
        << coated->describe();
  }
  {
    CylinderCylinderOptions o;
    o.radius1 = R;
    o.radius2 = 1.5 * R;
    o.rel_tol = tol;
    o.cylinder1 = glass;
    o.cylinder2 = gold;
    const auto plain = make_cylinder_cylinder(o);
    o.cylinder1 = shelled_glass;
    o.cylinder2 = shelled_gold;
    const auto coated = make_cylinder_cylinder(o);
    same(*plain, *coated);
  }
}

}  // namespace
}  // namespace roundtrip
