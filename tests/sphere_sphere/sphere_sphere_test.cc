// Two spheres: mirror identity, exchange symmetry, limits and closed forms.
// R1, R2 radii, L surface-to-surface gap, d = R1 + R2 + L; energies negative when attractive.
#include "solver/geometries/sphere_sphere.h"

#include <gtest/gtest.h>
#include <omp.h>

#include <cmath>
#include <string>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/sphere_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

constexpr double kR = 1e-6;
const double kGoldOmegaP = 9.0 * kRadPerSecondPerEv;  // common practice (as tests/sphere_plate)
const double kGoldGamma = 0.035 * kRadPerSecondPerEv;
MaterialPtr gold() { return make_drude("gold-drude", kGoldOmegaP, kGoldGamma); }

SphereSphereOptions spheres(double r1, MaterialPtr m1, double r2, MaterialPtr m2, double tol,
                            FieldKind f = FieldKind::kElectromagnetic) {
  SphereSphereOptions o;
  o.radius1 = r1;
  o.radius2 = r2;
  o.sphere1 = std::move(m1);
  o.sphere2 = std::move(m2);
  o.field = f;
  o.rel_tol = tol;
  return o;
}

double xi_of(double u, double gap) { return u * kSpeedOfLight / (2 * gap); }

// Relative agreement of value, d1, d2.
void expect_same(const Spectral& a, const Spectral& b, double tol, const std::string& what) {
  ASSERT_TRUE(std::isfinite(a.value) && std::isfinite(b.value)) << what;
  EXPECT_NEAR(a.value / b.value, 1.0, tol) << what;
  EXPECT_NEAR(a.d1 / b.d1, 1.0, tol) << what;
  EXPECT_NEAR(a.d2 / b.d2, 1.0, tol) << what;
}

TEST(SphereSphere, EqualSpheresEqualSphereFacingElectricAndMagneticMirrors) {
  // Derived (sphere_sphere.cc): det(1 - M_ss(L)) = det(1 - M_sp,PEC(L/2)) det(1 - M_sp,PMC(L/2)),
  // d/dL = (1/2) d/dL_sp. The sphere-plate side is the independent engine (plate reflection
  // coefficients, the multipole-space path for the magnetic mirror). Same l_max, m_max and
  // nodes on both sides, so the agreement is rounding: 1e-9 (the two sides are summed in
  // different orders over ~1e3 terms; measured ~1e-11).
  for (MaterialPtr m : {gold(), make_perfect_conductor()})
    for (double x : {1.0, 0.25})
      for (double u : {0.0, 0.4, 3.0}) {
        const double gap = x * kR;
        SphereSphereOptions o = spheres(kR, m, kR, m, 1e-6);
        o.l_max = 24;
        o.m_max = 24;
        o.nodes_per_unit = 4;
        const Spectral ss =
            make_sphere_sphere(o)->at_frequency(xi_of(u, gap), gap, DerivativeOrder::kGradient);
        Spectral sp;
        for (MirrorKind k : {MirrorKind::kElectric, MirrorKind::kMagnetic}) {
          SpherePlateOptions p;
          p.radius = kR;
          p.sphere = m;
          p.plate = make_ideal_mirror(k);
          p.rel_tol = 1e-6;
          p.l_max = 24;
          p.m_max = 24;
          p.nodes_per_unit = 4;
          const Spectral s = make_sphere_plate(p)->at_frequency(xi_of(u, gap), 0.5 * gap,
                                                                DerivativeOrder::kGradient);
          sp += Spectral{s.value, 0.5 * s.d1, 0.25 * s.d2};
        }
        expect_same(ss, sp, 1e-9,
                    m->name() + " L/R " + std::to_string(x) + " u " + std::to_string(u));
      }
}

TEST(SphereSphere, IdealElectricMirrorIsThePerfectConductorPlate) {
  // Sign check of the mirror (planar.h conventions): bitwise the same round trip.
  SpherePlateOptions p;
  p.radius = kR;
  p.sphere = gold();
  p.rel_tol = 1e-6;
  p.plate = make_ideal_mirror(MirrorKind::kElectric);
  const Spectral a = make_sphere_plate(p)->at_frequency(xi_of(0.5, 0.3 * kR), 0.3 * kR,
                                                        DerivativeOrder::kGradient);
  p.plate = make_half_space(make_perfect_conductor());
  const Spectral b = make_sphere_plate(p)->at_frequency(xi_of(0.5, 0.3 * kR), 0.3 * kR,
                                                        DerivativeOrder::kGradient);
  EXPECT_EQ(a.value, b.value);
  EXPECT_EQ(a.d2, b.d2);
}

TEST(SphereSphere, GeneralPathEqualsMirrorPathForEqualSpheres) {
  // Derived: G1 G2 with G1 = G2 against det(1 - G) det(1 + G); LU against two Cholesky
  // factorisations, so rounding only: 1e-9 (measured <= 3e-11).
  struct Case {
    FieldKind f;
    MaterialPtr m;
  };
  for (const Case& c : {Case{FieldKind::kElectromagnetic, gold()},
                        Case{FieldKind::kElectromagnetic, make_perfect_conductor()},
                        Case{FieldKind::kDirichlet, nullptr}, Case{FieldKind::kNeumann, nullptr}})
    for (double x : {1.0, 0.2})
      for (double u : {0.0, 0.3, 2.0}) {
        const double gap = x * kR;
        SphereSphereOptions o = spheres(kR, c.m, kR, c.m, 1e-6, c.f);
        const Spectral a =
            make_sphere_sphere(o)->at_frequency(xi_of(u, gap), gap, DerivativeOrder::kGradient);
        o.method = SphereSphereMethod::kGeneral;
        const Spectral b =
            make_sphere_sphere(o)->at_frequency(xi_of(u, gap), gap, DerivativeOrder::kGradient);
        expect_same(b, a, 1e-9,
                    to_string(c.f) + " L/R " + std::to_string(x) + " u " + std::to_string(u));
      }
}

TEST(SphereSphere, ExchangeOfTheSpheresLeavesTheResultUnchanged) {
  // Standard (det(1 - G1 G2) = det(1 - G2 G1)); rounding: 1e-10.
  const MaterialPtr diel = make_constant("eps4", 4.0);
  for (double u : {0.0, 0.5, 2.0}) {
    const double gap = 0.3 * kR;
    const Spectral a = make_sphere_sphere(spheres(kR, gold(), 2.5 * kR, diel, 1e-6))
                           ->at_frequency(xi_of(u, gap), gap, DerivativeOrder::kGradient);
    const Spectral b = make_sphere_sphere(spheres(2.5 * kR, diel, kR, gold(), 1e-6))
                           ->at_frequency(xi_of(u, gap), gap, DerivativeOrder::kGradient);
    expect_same(a, b, 1e-10, "u " + std::to_string(u));
  }
}

// Two-sphere bispherical parameters (derived from the geometry of bispherical coordinates):
// cosh mu_1 = (d^2 + R1^2 - R2^2) / (2 d R1), and 1 <-> 2.
void bispherical(double r1, double r2, double gap, double& mu1, double& mu2) {
  const double d = r1 + r2 + gap;
  mu1 = std::acosh((d * d + r1 * r1 - r2 * r2) / (2 * d * r1));
  mu2 = std::acosh((d * d + r2 * r2 - r1 * r1) / (2 * d * r2));
}
// n = 0, Dirichlet spheres: the bispherical modes (n, m) separate, each with the round trip
// e^{-(2n+1)(mu1 + mu2)}:  log det(1 - M) = sum_n (2n+1) log(1 - e^{-(2n+1)(mu1+mu2)})
// (derived; mu2 = 0 is the sphere-plate form of Bimonte & Emig, PRL 109, 160403 (2012)).
double dirichlet_closed_form(double mu) {
  double s = 0;
  for (int n = 0; n < 100000; ++n) {
    const double t = (2 * n + 1) * std::log1p(-std::exp(-(2 * n + 1) * mu));
    s += t;
    if (std::abs(t) < 1e-19 * std::abs(s)) break;
  }
  return s;
}
// n = 0, Drude spheres (neutral floating conductors, l >= 1): the Dirichlet form plus
// log det(C) / (R1 R2), C the 2x2 capacitance matrix (derived: Schur complement of the two
// monopoles, as Bimonte & Emig 2012 do for one sphere and a grounded plate, where it gives
// their log(C/R)). Coefficients in bispherical coordinates, a = R_i sinh mu_i, mu = mu1 + mu2:
// C11 = a sum_{n>=0} csch(n mu + mu1), C22 likewise, C12 = -a sum_{n>=1} csch(n mu)
// (standard, Smythe, Static and Dynamic Electricity (1950); from memory, checked here against
// the sphere-plate limit mu2 -> 0 and the isolated limit C11 -> R1, C12 -> -R1 R2 / d).
double drude_closed_form(double r1, double mu1, double mu2) {
  const double mu = mu1 + mu2, a = r1 * std::sinh(mu1);
  auto series = [&](double offset, int n0) {
    double s = 0;
    for (int n = n0; n < 100000; ++n) {
      const double t = 1 / std::sinh(n * mu + offset);
      s += t;
      if (t < 1e-19 * s) break;
    }
    return a * s;
  };
  const double c11 = series(mu1, 0), c22 = series(mu2, 0), c12 = -series(0.0, 1);
  const double r2 = a / std::sinh(mu2);
  return dirichlet_closed_form(mu) + std::log((c11 * c22 - c12 * c12) / (r1 * r2));
}

TEST(SphereSphereStatic, DirichletSpheresMatchTheBisphericalClosedForm) {
  // rel_tol 1e-10 of the multipole path; 1e-8 checks it with margin.
  for (double r2 : {1.0, 2.5})
    for (double x : {1.0, 0.3}) {
      const double gap = x * kR;
      for (SphereSphereMethod method : {SphereSphereMethod::kAuto, SphereSphereMethod::kGeneral}) {
        SphereSphereOptions o =
            spheres(kR, nullptr, r2 * kR, nullptr, 1e-10, FieldKind::kDirichlet);
        o.method = method;
        const double s =
            make_sphere_sphere(o)->at_frequency(0.0, gap, DerivativeOrder::kEnergy).value;
        double mu1, mu2;
        bispherical(kR, r2 * kR, gap, mu1, mu2);
        EXPECT_NEAR(s / dirichlet_closed_form(mu1 + mu2), 1.0, 1e-8)
            << "R2/R1 " << r2 << " L/R1 " << x << " general "
            << (method == SphereSphereMethod::kGeneral);
      }
    }
}

TEST(SphereSphereStatic, DrudeSpheresMatchTheCapacitanceClosedForm) {
  for (double r2 : {1.0, 2.5})
    for (double x : {1.0, 0.3}) {
      const double gap = x * kR;
      const double s = make_sphere_sphere(spheres(kR, gold(), r2 * kR, gold(), 1e-10))
                           ->at_frequency(0.0, gap, DerivativeOrder::kEnergy)
                           .value;
      double mu1, mu2;
      bispherical(kR, r2 * kR, gap, mu1, mu2);
      EXPECT_NEAR(s / drude_closed_form(kR, mu1, mu2), 1.0, 1e-8)
          << "R2/R1 " << r2 << " L/R1 " << x;
    }
}

// T = 0 energy by the frequency rule.
double energy_t0(const SphereSphereOptions& o, double gap, double tol) {
  const auto g = make_sphere_sphere(o);
  FrequencyRuleOptions fo;
  fo.rel_tol = tol;
  const auto sum = sum_over_frequencies(
      [&](double xi) { return g->at_frequency(xi, gap, DerivativeOrder::kEnergy); },
      g->frequency_scale(gap), fo);
  return sum.total.value;
}

TEST(SphereSphere, PecSpheresFarApartFollowFeinbergSucher) {
  // T = 0, d >> R: E -> -143 hbar c R^6 / (16 pi d^7) (alpha_E = R^3, alpha_M = -R^3/2 in the
  // two-body retarded law; Feinberg & Sucher, PRA 2, 2395 (1970); Emig, Graham, Jaffe, Kardar,
  // PRL 99, 170403 (2007)). The deviation must fall like (R/d)^2 (next multipole order).
  double scaled[2];
  int i = 0;
  for (double d_over_r : {20.0, 40.0}) {
    const double d = d_over_r * kR, gap = d - 2 * kR;
    const MaterialPtr pec = make_perfect_conductor();
    const double e = energy_t0(spheres(kR, pec, kR, pec, 1e-8), gap, 1e-8);
    const double fs = -143 * kHbarC * std::pow(kR, 6) / (16 * kPi * std::pow(d, 7));
    scaled[i++] = (e / fs - 1) * d_over_r * d_over_r;
    EXPECT_NEAR(e / fs, 1.0, 20.0 / (d_over_r * d_over_r)) << d_over_r;
  }
  EXPECT_NEAR(scaled[1] / scaled[0], 1.0, 0.15);
}

TEST(SphereSphere, DielectricSpheresFarApartFollowCasimirPolder) {
  // T = 0, d >> R: E -> -23 hbar c alpha1 alpha2 / (4 pi d^7), alpha = R^3 (eps - 1)/(eps + 2)
  // (Gaussian polarisability volume, m^3; Casimir & Polder, Phys. Rev. 73, 360 (1948)), for
  // non-dispersive eps (static polarisabilities at every frequency). Unequal spheres: the
  // general path. Deviation falls like (R/d)^2.
  const MaterialPtr e4 = make_constant("eps4", 4.0), e2 = make_constant("eps2.5", 2.5);
  const double r2 = 1.5 * kR;
  const double a1 = std::pow(kR, 3) * 3.0 / 6.0, a2 = std::pow(r2, 3) * 1.5 / 4.5;
  double scaled[2];
  int i = 0;
  for (double d_over_r : {25.0, 50.0}) {
    const double d = d_over_r * kR, gap = d - kR - r2;
    const double e = energy_t0(spheres(kR, e4, r2, e2, 1e-8), gap, 1e-8);
    const double cp = -23 * kHbarC * a1 * a2 / (4 * kPi * std::pow(d, 7));
    scaled[i++] = (e / cp - 1) * d_over_r * d_over_r;
    EXPECT_NEAR(e / cp, 1.0, 20.0 / (d_over_r * d_over_r)) << d_over_r;
  }
  EXPECT_NEAR(scaled[1] / scaled[0], 1.0, 0.15);
}

TEST(SphereSphere, LargeSecondSphereTendsToTheSpherePlateResult) {
  // R2 -> infinity at fixed gap: sphere 2 becomes a plate of its material (standard). One
  // frequency; the deviation must fall with R2 (like R1/R2 or L/R2: measured in the comment).
  const double gap = 0.5 * kR, xi = xi_of(0.5, gap);
  SpherePlateOptions p;
  p.radius = kR;
  p.sphere = gold();
  p.plate = make_half_space(p.sphere);
  p.rel_tol = 1e-6;
  const double sp = make_sphere_plate(p)->at_frequency(xi, gap, DerivativeOrder::kEnergy).value;
  double prev = 1.0;
  for (double r2 : {4.0, 16.0, 64.0}) {
    const double s = make_sphere_sphere(spheres(kR, gold(), r2 * kR, gold(), 1e-6))
                         ->at_frequency(xi, gap, DerivativeOrder::kEnergy)
                         .value;
    const double dev = std::abs(s / sp - 1);
    std::printf("R2/R1 %g: s_ss/s_sp - 1 = %.3e\n", r2, s / sp - 1);
    EXPECT_LT(dev, 0.5 * prev) << r2;
    prev = dev;
  }
  EXPECT_LT(prev, 2.0 / 64.0);
}

TEST(SphereSphere, SmallGapApproachesPfaLinearlyInLOverReff) {
  // PFA with R_eff = R1 R2/(R1 + R2) (Derjaguin 1934); the first correction is linear in
  // L/R_eff (derivative expansion: Bimonte, Emig, Jaffe, Kardar, EPL 97, 50001 (2012)), so
  // E/E_PFA - 1 halves when L halves (to 20 %, the next order). PEC, T = 0, equal spheres.
  const MaterialPtr pec = make_perfect_conductor();
  const SphereSphereOptions o = spheres(kR, pec, kR, pec, 1e-6);
  const auto g = make_sphere_sphere(o);
  double dev[2];
  int i = 0;
  for (double x : {0.1, 0.05}) {
    const double gap = x * 0.5 * kR;  // L/R_eff = x
    FrequencyRuleOptions fo;
    fo.rel_tol = 1e-6;
    const double e = energy_t0(o, gap, 1e-6);
    const double pfa = g->pfa(gap, fo)->energy;
    dev[i++] = e / pfa - 1;
    std::printf("L/R_eff %g: E/E_PFA - 1 = %.5e\n", x, e / pfa - 1);
    EXPECT_LT(std::abs(e / pfa - 1), 2.0 * x);
  }
  EXPECT_NEAR(dev[0] / dev[1], 2.0, 0.4);
}

TEST(SphereSphere, DerivativesMatchFiniteDifferences) {
  // Central differences with fixed truncation, h = 1e-4 L: error ~ h^2 s''' ~ 1e-8 relative.
  const MaterialPtr diel = make_constant("eps4", 4.0);
  for (SphereSphereOptions o :
       {spheres(kR, gold(), kR, gold(), 1e-6), spheres(kR, gold(), 2 * kR, diel, 1e-6)})
    for (double u : {0.0, 0.7}) {
      o.l_max = 30;
      o.m_max = 30;
      o.nodes_per_unit = 4;
      const auto g = make_sphere_sphere(o);
      const double gap = 0.4 * kR, h = 1e-4 * gap, xi = xi_of(u, gap);
      const Spectral s = g->at_frequency(xi, gap, DerivativeOrder::kGradient);
      const Spectral p = g->at_frequency(xi, gap + h, DerivativeOrder::kForce);
      const Spectral m = g->at_frequency(xi, gap - h, DerivativeOrder::kForce);
      EXPECT_NEAR((p.value - m.value) / (2 * h) / s.d1, 1.0, 1e-7) << u;
      EXPECT_NEAR((p.d1 - m.d1) / (2 * h) / s.d2, 1.0, 1e-7) << u;
    }
}

TEST(SphereSphere, ConvergesInLmaxAndNodes) {
  // Automatic truncation at rel_tol 1e-5 against a much finer one (l_max x 1.6, 6 nodes per
  // unit): within 1e-5 (the requested accuracy) for E, F, F'.
  const MaterialPtr diel = make_constant("eps4", 4.0);
  for (SphereSphereOptions o :
       {spheres(kR, gold(), kR, gold(), 1e-5), spheres(kR, gold(), 2 * kR, diel, 1e-5)}) {
    const double gap = 0.1 * kR, xi = xi_of(0.5, gap);
    const auto g = make_sphere_sphere(o);
    const Spectral a = g->at_frequency(xi, gap, DerivativeOrder::kGradient);
    const int l = static_cast<int>(g->truncation(gap).at("l_max2"));
    o.l_max = l * 8 / 5 + 10;
    o.nodes_per_unit = 6;
    const Spectral b = make_sphere_sphere(o)->at_frequency(xi, gap, DerivativeOrder::kGradient);
    expect_same(a, b, 1e-5, o.sphere2->name());
  }
}

TEST(SphereSphere, OneAndTwoThreadsGiveBitwiseTheSameResult) {
  const MaterialPtr diel = make_constant("eps4", 4.0);
  for (const SphereSphereOptions& o :
       {spheres(kR, gold(), kR, gold(), 1e-5), spheres(kR, gold(), 2 * kR, diel, 1e-5)}) {
    const auto g = make_sphere_sphere(o);
    const double gap = 0.05 * kR, xi = xi_of(0.5, gap);
    omp_set_num_threads(1);
    const Spectral a = g->at_frequency(xi, gap, DerivativeOrder::kGradient);
    omp_set_num_threads(2);
    const Spectral b = g->at_frequency(xi, gap, DerivativeOrder::kGradient);
    EXPECT_EQ(a.value, b.value);
    EXPECT_EQ(a.d1, b.d1);
    EXPECT_EQ(a.d2, b.d2);
  }
}

TEST(SphereSphere, InvalidOptionsAreRejected) {
  SphereSphereOptions o = spheres(kR, gold(), -1.0, gold(), 1e-5);
  EXPECT_THROW(make_sphere_sphere(o), std::invalid_argument);
  o = spheres(kR, gold(), kR, nullptr, 1e-5);
  EXPECT_THROW(make_sphere_sphere(o), std::invalid_argument);
}

}  // namespace
}  // namespace roundtrip
