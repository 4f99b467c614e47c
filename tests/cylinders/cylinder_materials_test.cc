// Real-material cylinder over a plate (the vector path of solver/geometries/cylinder_plate.cc,
// T-matrix solver/scatterers/cylinder_t.h). Sources beside each check.
#include <gtest/gtest.h>

#include <boost/math/special_functions/bessel.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "io/case_file.h"
#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/cylinder_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"
#include "solver/scatterers/cylinder_t.h"

namespace roundtrip {
namespace {

// Gold as a Drude metal, omega_p = 9 eV, gamma = 35 meV (common practice in the Casimir
// literature, e.g. Bordag, Mohideen, Mostepanenko, Phys. Rep. 353, 1 (2001)), and its plasma
// model (gamma = 0).
constexpr double kEv = 1.519267447e15;  // rad/s per eV (hbar = 6.582119569e-16 eV s)
MaterialPtr drude_gold() { return make_drude("gold-drude", 9.0 * kEv, 0.035 * kEv); }
MaterialPtr plasma_gold() { return make_plasma("gold-plasma", 9.0 * kEv); }

// Derived: with a perfectly conducting cylinder and plate the plate's longitudinal reflection is
// diag(-1, 1) and tau = diag(1, I'K/(K'I)), so the vector path must give the sum of the scalar
// Dirichlet and Neumann channels (Emig, Jaffe, Kardar, Scardicchio, PRL 96, 080403 (2006)).
// Tolerance 1e-10: the plate quadrature's check is 1e-11 per order.
TEST(CylinderMaterials, VectorPathWithPerfectConductorsIsDirichletPlusNeumann) {
  const double R = 1e-6, H = 1.4e-6;
  const auto pec = make_perfect_conductor();
  const auto vac = make_vacuum();
  const auto plate = make_half_space(pec);
  for (double xi : {0.0, 2e14, 1e15})
    for (double kz : {1e3, 5e5, 2e6}) {
      const auto at = plate->at(xi, *vac);
      const int M = 40;
      const Spectral v = cylinder_plate_vector_logdet(*pec, *at, *vac, xi, kz, R, H,
                                                      DerivativeOrder::kGradient, 1e-10, M);
      const double p = std::hypot(kz, xi / kSpeedOfLight);
      Spectral s = cylinder_plate_logdet(FieldKind::kDirichlet, p, R, H, DerivativeOrder::kGradient,
                                         1e-10, M);
      s +=
          cylinder_plate_logdet(FieldKind::kNeumann, p, R, H, DerivativeOrder::kGradient, 1e-10, M);
      EXPECT_NEAR(v.value / s.value, 1.0, 1e-10) << xi << " " << kz;
      EXPECT_NEAR(v.d1 / s.d1, 1.0, 1e-10);
      EXPECT_NEAR(v.d2 / s.d2, 1.0, 1e-10);
    }
}

// Derived: as eps -> inf (constant eps on both bodies) the round trip tends to the perfect
// conductors'; the leading corrections are O(eps^-1/2) (r_TE = -1 + 2 kappa/kappa_1), so the
// deviation must fall by ~10 per factor 100 in eps and be below 1e-3 at eps = 1e8.
TEST(CylinderMaterials, LargeEpsilonTendsToPerfectConductors) {
  const double R = 1e-6, H = 1.5e-6, xi = 3e14, kz = 4e5;
  const auto vac = make_vacuum();
  const auto pec = make_perfect_conductor();
  const auto ref_plate = make_half_space(pec)->at(xi, *vac);
  const Spectral ref = cylinder_plate_vector_logdet(*pec, *ref_plate, *vac, xi, kz, R, H,
                                                    DerivativeOrder::kForce, 1e-10);
  double prev = 1.0;
  for (double eps : {1e4, 1e6, 1e8}) {
    const auto mat = make_constant("big", eps);
    const auto plate = make_half_space(mat)->at(xi, *vac);
    const Spectral s = cylinder_plate_vector_logdet(*mat, *plate, *vac, xi, kz, R, H,
                                                    DerivativeOrder::kForce, 1e-10);
    const double dev = std::abs(s.value / ref.value - 1.0);
    std::printf("eps = %g: deviation %.3e\n", eps, dev);
    if (eps > 1e4) EXPECT_LT(dev, 0.2 * prev);
    prev = dev;
  }
  EXPECT_LT(prev, 1e-3);
}

// Dilute cylinder: to first order in eps - 1 the round trip is the pairwise sum of the
// Casimir-Polder interactions of its volume elements, alpha = (eps - 1) dV/(4 pi) (derived from
// the Born series of T; Casimir-Polder integrand as in solver/geometries/atom_plate.h, Antezza,
// Pitaevskii, Stringari, PRA 70, 053619 (2004)). Over the disc, \int dA e^{-2 kappa y} =
// e^{-2 kappa H} 2 pi R I_1(2 kappa R)/(2 kappa), so per frequency
//   s = -(eps - 1)(R/4) \int_{kappa_0}^inf dkappa e^{-2 kappa H} I_1(2 kappa R)/kappa
//       [(2 kappa^2 - kappa_0^2) r_TM - kappa_0^2 r_TE],  k = sqrt(kappa^2 - kappa_0^2).
// With a dielectric plate (r_TE + r_TM != 0) this tests the TE/TM cross terms of both bodies.
// Tolerance: relative corrections are O(eps - 1) = 1e-4; 5e-4.
TEST(CylinderMaterials, DiluteCylinderIsThePairwiseCasimirPolderSum) {
  const double R = 0.5e-6, L = 0.3e-6, H = R + L, delta = 1e-4;
  const auto vac = make_vacuum();
  for (double eps_plate : {3.0, 1e300}) {
    const PlanarPtr plate = eps_plate > 1e100 ? make_half_space(make_perfect_conductor())
                                              : make_half_space(make_constant("glass", eps_plate));
    for (double xi : {0.0, 1e15}) {
      CylinderPlateOptions o;
      o.radius = R;
      o.cylinder = make_constant("dilute", 1.0 + delta);
      o.plate = plate;
      o.rel_tol = 1e-6;  // k_z rule to 1e-7, m cut-off 2e-8: far below the 5e-4 checked
      const Spectral s = make_cylinder_plate(o)->at_frequency(xi, L, DerivativeOrder::kEnergy);
      const auto at = plate->at(xi, *vac);
      const double k0 = xi / kSpeedOfLight;
      // kappa = k0 + y/(2H): Gauss-Laguerre-like trapezoid in y on [0, 80] with 16000 steps.
      double sum = 0.0;
      const int n = 16000;
      const double ymax = 80.0, dy = ymax / n;
      for (int i = 0; i <= n; ++i) {
        const double y = i * dy, kap = k0 + y / (2.0 * H);
        if (kap == 0.0) continue;
        const Reflection r = at->reflect(std::sqrt(std::max(0.0, kap * kap - k0 * k0)));
        const double b = (2.0 * kap * kap - k0 * k0) * r.tm - k0 * k0 * r.te;
        const double w = (i == 0 || i == n) ? 0.5 : 1.0;
        sum += w * dy / (2.0 * H) * std::exp(-2.0 * kap * H) *
               boost::math::cyl_bessel_i(1, 2.0 * kap * R) / kap * b;
      }
      // At xi = 0 the same form with kappa_0 = 0 (static TM factor of the dilute cylinder
      // against the plate's static r_TM; TE is absent for mu = 1).
      const double ref = -delta * R / 4.0 * sum;
      EXPECT_NEAR(s.value / ref, 1.0, 5e-4) << eps_plate << " " << xi;
    }
  }
}

// Derived: the static T-matrix (exact xi = 0 forms of cylinder_t.h) is the limit of the dynamic
// one for a plasma cylinder (London TE response) and a dielectric; 1e-6 at xi = 1e6 rad/s where
// the dynamic corrections are O((xi R/c)^2) ~ 1e-9 and O(xi/omega_p).
TEST(CylinderMaterials, StaticTMatrixIsTheLimitOfTheDynamicOne) {
  const double R = 1e-6, kz = 3e6;
  const auto vac = make_vacuum();
  for (const MaterialPtr& m : {plasma_gold(), make_constant("glass", 4.0)}) {
    std::vector<double> lt0, lt1;
    std::vector<cylinder::Tau> t0, t1;
    cylinder::cylinder_t(*m, *vac, R, 0.0, kz, 10, lt0, t0);
    cylinder::cylinder_t(*m, *vac, R, 1e6, kz, 10, lt1, t1);
    for (int k = 0; k <= 10; ++k)
      for (int c = 0; c < 4; ++c)
        EXPECT_NEAR(t1[k][c], t0[k][c], 1e-6 * (std::abs(t0[k][0]) + std::abs(t0[k][3])))
            << m->name() << " m = " << k << " c = " << c;
  }
}

// Force and gradient: analytic H-derivatives of the vector round trip against central
// differences (derived); Drude gold cylinder over a plasma-gold plate, fixed m cut-off. Step
// 1e-4 L: truncation ~1e-8, rounding ~1e-12/1e-4.
TEST(CylinderMaterials, VectorPathDerivativesMatchFiniteDifferences) {
  const double R = 1e-6, H0 = 1.4e-6;
  const auto vac = make_vacuum();
  const auto cyl = drude_gold();
  const auto plate = make_half_space(plasma_gold());
  for (double xi : {0.0, 5e14})
    for (double kz : {2e5, 3e6}) {
      const auto at = plate->at(xi, *vac);
      const auto f = [&](double H) {
        return cylinder_plate_vector_logdet(*cyl, *at, *vac, xi, kz, R, H,
                                            DerivativeOrder::kGradient, 1e-10, 40);
      };
      const double h = 1e-4 * (H0 - R);
      const Spectral c = f(H0), a = f(H0 - h), b = f(H0 + h);
      EXPECT_NEAR((b.value - a.value) / (2 * h) / c.d1, 1.0, 1e-6) << xi << " " << kz;
      EXPECT_NEAR((b.d1 - a.d1) / (2 * h) / c.d2, 1.0, 1e-6) << xi << " " << kz;
    }
}

// The exact n = 0 term (derived from the static limits of cylinder_t.h and planar.h): a Drude
// cylinder over a Drude plate keeps only TM, which is the Dirichlet problem (tau_EE = 1,
// R_EE = -r_TM = -1), so s(0) equals the perfectly conducting Dirichlet channel; a plasma
// cylinder over a plasma plate adds a TE (London) part between 0 and the perfect conductor's
// Neumann channel, tending to it as omega_p grows (Bimonte, Emig, Kardar, Appl. Phys. Lett. 100,
// 074110 (2012) discuss the same Drude/plasma split for spheres, from memory).
TEST(CylinderMaterials, StaticTermDrudeIsDirichletAndPlasmaTendsToPerfectConductor) {
  const double R = 1e-6, L = 0.5e-6;
  const auto scalar = [&](FieldKind f) {
    CylinderPlateOptions o;
    o.radius = R;
    o.field = f;
    o.rel_tol = 1e-6;  // k_z rule to 1e-7, m cut-off to 2e-8 of the value
    return make_cylinder_plate(o)->at_frequency(0.0, L, DerivativeOrder::kEnergy).value;
  };
  const auto em = [&](const MaterialPtr& m) {
    CylinderPlateOptions o;
    o.radius = R;
    o.cylinder = m;
    o.plate = make_half_space(m);
    o.rel_tol = 1e-6;
    return make_cylinder_plate(o)->at_frequency(0.0, L, DerivativeOrder::kEnergy).value;
  };
  const double dir = scalar(FieldKind::kDirichlet), neu = scalar(FieldKind::kNeumann);
  EXPECT_NEAR(em(drude_gold()) / dir, 1.0, 1e-6);  // two k_z rules, each to 1e-7, and m
  double prev = 1.0;
  for (double wp_ev : {9.0, 90.0, 900.0}) {
    const double te = em(make_plasma("p", wp_ev * kEv)) - dir;
    const double gap = 1.0 - te / neu;
    std::printf("omega_p = %g eV: TE/Neumann = %.6f\n", wp_ev, te / neu);
    EXPECT_GT(te / neu, 0.0);
    EXPECT_LT(gap, prev);
    prev = gap;
  }
  EXPECT_LT(prev, 0.01);
}

// The reduced demo: cases/gold_wire_over_silicon.toml at its largest gap (1 um). Checks that the
// case parses and builds, that the frequency sum converges and that the wire attracts (both
// bodies are polarisable: the Casimir-Lifshitz interaction attracts, common practice); the
// exact-to-PFA ratio is printed, not checked (no published value for this pair).
TEST(CylinderMaterials, ReducedDemoCaseRuns) {
  std::ifstream in(std::filesystem::path(ROUNDTRIP_SOURCE_DIR) /
                   "cases/gold_wire_over_silicon.toml");
  std::stringstream ss;
  ss << in.rdbuf();
  std::string text = ss.str();
  const std::string from = "values = [\"0.25 um\", \"0.5 um\", \"1 um\"]";
  ASSERT_NE(text.find(from), std::string::npos);
  text.replace(text.find(from), from.size(), "values = [\"1 um\"]");
  const io::CaseSpec spec = io::parse_case(text, "gold_wire_over_silicon.toml");
  const auto g = io::build_geometry(spec);
  const double L = spec.gaps.at(0);
  const FrequencySum s = sum_over_frequencies(
      [&](double xi) { return g->at_frequency(xi, L, DerivativeOrder::kEnergy); },
      g->frequency_scale(L), spec.frequency);
  ASSERT_TRUE(s.converged);
  const auto pfa = g->pfa(L, spec.frequency);
  ASSERT_TRUE(pfa.has_value());
  std::printf("E/l = %.6e J/m, PFA %.6e J/m, ratio %.4f, %zu frequencies\n", s.total.value,
              pfa->energy, s.total.value / pfa->energy, s.terms.size());
  EXPECT_LT(s.total.value, 0.0);
  EXPECT_LT(pfa->energy, 0.0);
}

// Convergence in m (vector path): the automatic cut-off against twice as many orders (derived
// from the tail bound: the difference must be below rel_tol of |log det|, 10 rel_tol for d/dL
// which weighs high orders more). Drude gold cylinder over silicon-like eps = 11.7.
TEST(CylinderMaterials, VectorPathOrderCutOffMeetsItsTolerance) {
  const double R = 5e-6, L = 0.5e-6;
  const auto vac = make_vacuum();
  const auto cyl = drude_gold();
  const auto plate = make_half_space(make_constant("si-like", 11.7));
  const double tol = 1e-6;
  for (double xi : {0.0, 6e14})
    for (double kzL : {0.05, 1.0}) {
      const auto at = plate->at(xi, *vac);
      int m = 0;
      const Spectral a = cylinder_plate_vector_logdet(*cyl, *at, *vac, xi, kzL / L, R, R + L,
                                                      DerivativeOrder::kForce, tol, 0, &m);
      const Spectral b = cylinder_plate_vector_logdet(*cyl, *at, *vac, xi, kzL / L, R, R + L,
                                                      DerivativeOrder::kForce, tol, 2 * m);
      EXPECT_NEAR(a.value / b.value, 1.0, tol) << "m = " << m << " xi = " << xi;
      EXPECT_NEAR(a.d1 / b.d1, 1.0, 10 * tol) << "m = " << m;
    }
}

}  // namespace
}  // namespace roundtrip
