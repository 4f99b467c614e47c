// Metal (Drude) ridges and substrates in the Fourier modal method at imaginary frequency
// (solver/scatterers/grating_fmm.h, "balanced basis"), from xi = 1e6 rad/s (eps_gold ~ 4e12) up.
#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>
#include <vector>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/grating_grating.h"
#include "solver/geometries/grating_plate.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/layered.h"
#include "solver/planar/planar.h"
#include "solver/scatterers/grating_fmm.h"

namespace roundtrip {
namespace {

constexpr double kPeriod = 400e-9;
constexpr double kRoundingTol = 1e-12;
// A homogeneous metal layer is represented by its x-TE and x-TM modes, whose per-order TM parts
// carry admittances ~ eps that cancel for a per-order TE wave: rounding grows like eps
// (measured 8e-18 eps for a gold film on silicon, 1e-18 eps for gold on gold, N = 6).
constexpr double kContrastRounding = 2e-17;

MaterialPtr gold() {  // Drude parameters of gold (from memory): 9 eV, 35 meV
  return make_drude("gold-drude", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv);
}

LamellarGrating lamellar(double f, double h, MaterialPtr ridge, MaterialPtr sub) {
  LamellarGrating g;
  g.period = kPeriod;
  g.filling = f;
  g.depth = h;
  g.ridge = std::move(ridge);
  g.substrate = std::move(sub);
  return g;
}

double max_abs_diff(const Eigen::MatrixXd& a, const Eigen::MatrixXd& b) {
  return (a - b).cwiseAbs().maxCoeff();
}

Eigen::MatrixXd plate_operator(PlanarPtr p, double xi, int N, double kx, double ky) {
  const auto vac = make_vacuum();
  auto at = p->at(xi, *vac);
  return planar_reflection_in_orders(*at, xi, kPeriod, N, kx, ky);
}

// R in the per-order (u, v) = (TE, TM) basis: R' = U^T R U (planar.h directions).
Eigen::MatrixXd to_uv(const Eigen::MatrixXd& r, int N, double kx, double ky) {
  const int m = 2 * N + 1;
  Eigen::MatrixXd U = Eigen::MatrixXd::Zero(2 * m, 2 * m);
  for (int i = 0; i < m; ++i) {
    const double kn = kx + (i - N) * 2 * kPi / kPeriod, kt = std::hypot(kn, ky);
    U(i, i) = -ky / kt;
    U(m + i, i) = kn / kt;
    U(i, m + i) = kn / kt;
    U(m + i, m + i) = ky / kt;
  }
  return U.transpose() * r * U;
}

TEST(GratingMetal, FillingZeroOneAndZeroDepthAreThePlanarMetalAtEveryFrequency) {
  // Fresnel and Airy (planar.h, layered.h; standard) for gold at xi = 1e6 ... 1e16 rad/s, the
  // range of the T = 0 rule's nodes and its Drude probes (before: the (k c/xi)^2 growth lost
  // 1e-2 of a dielectric film at 1e8 rad/s; a gold grating was refused).
  const auto vac = make_vacuum();
  const auto si = make_constant("si", 11.7);
  const int N = 6;
  const double kx = 1e6, ky = 5e5;
  for (double xi : {1e6, 1e8, 1e10, 1e12, 1e14, 1e16}) {
    // Below xi = 3.5e9 rad/s gold's eps exceeds the FMM's cap 1e9 (grating_fmm.cc, kEpsCap): the
    // reference is then the planar body of eps = 1e9, the medium the FMM represents.
    const auto au = xi < 3.5e9 ? make_constant("gold-capped", 1e9) : gold();
    const double tol = kRoundingTol + kContrastRounding * au->epsilon(xi);
    const auto hs = plate_operator(make_half_space(au), xi, N, kx, ky);
    EXPECT_LT(
        max_abs_diff(GratingAtFrequency(lamellar(1.0, 100e-9, au, au), xi, *vac, N).reflect(kx, ky),
                     hs),
        tol)
        << "f = 1, xi = " << xi;
    EXPECT_LT(max_abs_diff(
                  GratingAtFrequency(lamellar(0.5, 0.0, au, au), xi, *vac, N).reflect(kx, ky), hs),
              kRoundingTol)
        << "h = 0, xi = " << xi;
    const auto film = plate_operator(make_layered({{au, 100e-9}}, si), xi, N, kx, ky);
    EXPECT_LT(
        max_abs_diff(GratingAtFrequency(lamellar(1.0, 100e-9, au, si), xi, *vac, N).reflect(kx, ky),
                     film),
        tol)
        << "gold film on silicon, xi = " << xi;
    const auto kap = orders_decay(xi, 1.0, kPeriod, N, kx, ky);
    const Eigen::VectorXd e = (-kap * 100e-9).array().exp();
    EXPECT_LT(
        max_abs_diff(GratingAtFrequency(lamellar(0.0, 100e-9, au, au), xi, *vac, N).reflect(kx, ky),
                     e.asDiagonal() * hs * e.asDiagonal()),
        kRoundingTol)
        << "f = 0, xi = " << xi;
  }
}

TEST(GratingMetal, SmallFrequencyTmBlockIsTheElectrostaticGrating) {
  // Derived: as xi -> 0 the per-order TM block of R tends to the electrostatic reflection of the
  // potential (the xi = 0 path, its own generalized eigenproblem), carried to the tangential
  // field by e_v = -i k_t phi: R'_vv -> D R_static D^-1, D = diag(k_t,n), with corrections
  // O((xi/(c k))^2) (measured 7e-10 at 1e10, 7e-6 at 1e12 rad/s), and a dielectric's TE block
  // (mu = 1) tends to 0 like (eps - 1)(xi/(c k))^2 (measured 2e-10 at eps = 1e4, 1e8 rad/s).
  // Checked at xi = 1e6 and 1e8 rad/s for eps = 11.7 and 1e4, f = 0.3, 0.5, 0.8 (measured <=
  // 6e-13).
  const auto vac = make_vacuum();
  const int N = 6, m = 2 * N + 1;
  const double kx = 1e6, ky = 5e5;
  Eigen::VectorXd kt(m);
  for (int i = 0; i < m; ++i) kt[i] = std::hypot(kx + (i - N) * 2 * kPi / kPeriod, ky);
  for (double eps : {11.7, 1e4})
    for (double f : {0.3, 0.5, 0.8})
      for (double xi : {1e6, 1e8}) {
        const auto mat = make_constant("ridge", eps);
        const auto r =
            to_uv(GratingAtFrequency(lamellar(f, 100e-9, mat, mat), xi, *vac, N).reflect(kx, ky), N,
                  kx, ky);
        const auto rs =
            GratingAtFrequency(lamellar(f, 100e-9, mat, mat), 0.0, *vac, N).reflect(kx, ky);
        const Eigen::MatrixXd ref = kt.asDiagonal() * rs * kt.cwiseInverse().asDiagonal();
        EXPECT_LT(max_abs_diff(r.bottomRightCorner(m, m), ref), 1e-11)
            << eps << " " << f << " " << xi;
        // TE: the dielectric's Fresnel r_TE ~ (eps - 1)(xi/(c k))^2/4 (derived) bounds it.
        const double te = (eps - 1.0) * std::pow(xi / (kSpeedOfLight * kt.minCoeff()), 2);
        EXPECT_LT(r.topLeftCorner(m, m).cwiseAbs().maxCoeff(), te + 1e-12)
            << eps << " " << f << " " << xi;
      }
}

TEST(GratingMetal, ModerateEpsAgreesWithTheCoupledEigenproblem) {
  // The former c/xi formulation with the coupled 2M x 2M eigenproblem (reflect_coupled), an
  // independent path, trusted to 1e-13 (k c/xi)^2 (its conditioning, grating_fmm_test.cc): a
  // gold grating at xi = 1e14, 1e15, 1e16 rad/s (eps 1.2e4, 180, 2.9; measured <= 1.4e-11).
  const auto vac = make_vacuum();
  const auto au = gold();
  const int N = 6;
  const double G = 2 * kPi / kPeriod;
  for (double xi : {1e14, 1e15, 1e16}) {
    const GratingAtFrequency gf(lamellar(0.5, 100e-9, au, au), xi, *vac, N);
    for (double kx : {0.0, 0.3 * G})
      for (double ky : {0.0, 5e6}) {
        const double c2 = std::pow(std::hypot(kx + N * G, ky) * kSpeedOfLight / xi, 2);
        EXPECT_LT(max_abs_diff(gf.reflect(kx, ky), gf.reflect_coupled(kx, ky)),
                  std::max(kRoundingTol, 1e-13 * c2))
            << xi << " " << kx << " " << ky;
      }
  }
}

double grating_gold_plate(MaterialPtr ridge, int N, double xi, double L = 200e-9) {
  GratingPlateOptions o;
  o.orders = N;
  o.bloch_rel_tol = 1e-6;
  const GratingPlate gp(lamellar(0.5, 100e-9, ridge, ridge), make_half_space(gold()), nullptr, o);
  return gp.at_frequency(xi, L, DerivativeOrder::kEnergy).value;
}

// Richardson from three levels N, 2N, 4N with the observed rate (common practice).
double richardson(double a, double b, double c, double* rate) {
  *rate = std::log2((a - b) / (b - c));
  return c + (c - b) / (std::pow(2.0, *rate) - 1.0);
}

TEST(GratingMetal, LargeEpsTendsToThePerfectlyConductingGrating) {
  // eps -> infinity: the FMM grating tends to the grooves' modal method for a perfect conductor
  // (grating_pec.h, T = 0), per frequency against a gold plate (f = 0.5, h = 100 nm,
  // L = 200 nm, xi = 1e15 rad/s). At fixed N a huge eps converges slowly (N = 4, 8, 16 at
  // eps = 1e6: -8.33, -8.05, -7.91 e11; the perfect conductor -7.86, -7.84, -7.84 e11), so each
  // eps is extrapolated from N = 4, 8, 16 with its observed rate (measured: 1.5 at eps = 1e4,
  // 1.0 at 1e6). The deviation must fall with eps (skin depth c/(xi sqrt eps); measured 3.0 %
  // at 1e4, 0.9 % at 1e6) and be below 1.5 % at 1e6 (the extrapolation's own uncertainty).
  const double xi = 1e15;
  const double pec = grating_gold_plate(make_perfect_conductor(), 16, xi);
  std::vector<double> dev;
  for (double eps : {1e4, 1e6}) {
    const auto m = make_constant("metal-like", eps);
    double p = 0.0;
    const double ex = richardson(grating_gold_plate(m, 4, xi), grating_gold_plate(m, 8, xi),
                                 grating_gold_plate(m, 16, xi), &p);
    dev.push_back(std::abs(ex / pec - 1.0));
    std::printf("eps %.0e: extrapolated %.6e (rate %.2f), perfect conductor %.6e, dev %.2e\n", eps,
                ex, p, pec, dev.back());
  }
  EXPECT_LT(dev[1], dev[0]);
  EXPECT_LT(dev[1], 0.015);
}

TEST(GratingMetal, GoldGratingConvergesSlowlyInTheOrders) {
  // Li (1996): algebraic convergence for lamellar profiles; metals converge slowly in TM.
  // Measured (gold grating f = 0.5, h = 100 nm over a gold plate at L = 200 nm): N = 4, 8, 16, 32
  // at xi = 1e15 rad/s: changes 2.3e9, 9.6e8, 4.0e8 (of 6.36e11), rate 1.26; at 1e12 rad/s:
  // 7.4e10, 3.3e10, 1.5e10 (of 1.19e12), rate 1.1. Here N = 4, 8, 16 at 1e15 (seconds): the
  // changes must fall, at a rate between 0.8 and 2.
  std::vector<double> v;
  for (int N : {4, 8, 16}) v.push_back(grating_gold_plate(gold(), N, 1e15));
  double p = 0.0;
  richardson(v[0], v[1], v[2], &p);
  std::printf("gold: s(N = 4, 8, 16) = %.10e %.10e %.10e, rate %.2f\n", v[0], v[1], v[2], p);
  EXPECT_LT(std::abs(v[2] - v[1]), std::abs(v[1] - v[0]));
  EXPECT_GT(p, 0.8);
  EXPECT_LT(p, 2.0);
}

TEST(GratingMetal, FillingOneAndZeroGiveThePlatePlateIntegrandAtEveryFrequency) {
  // Lifshitz (1956) through PlatePlate: a gold grating with f = 1 is the gold half-space at L,
  // f = 0 the gold half-space at L + h, at xi = 1e7 ... 1e16 rad/s; Bloch tolerance 1e-7, so
  // agreement 2e-6 (as grating_plate_test.cc); N = 4 (orders beyond weigh e^{-2 k L} < 1e-13;
  // N = 3 missed 3.5e-6 of d/dL at 1e16 rad/s).
  // Below xi = 3.5e9 rad/s the reference is the medium of eps = 1e9 the FMM represents
  // (kEpsCap; against true gold it differs by the cap's effect, measured 4.9e-6 of s at
  // 1e7 rad/s for f = 1, 1.1e-5 for f = 0: TE reflection lost at k < q0 sqrt(eps)).
  const double L = 200e-9, h = 100e-9;
  for (double xi : {1e7, 1e10, 1e13, 1e16})
    for (double f : {1.0, 0.0}) {
      const auto au = xi < 3.5e9 ? make_constant("gold-capped", 1e9) : gold();
      const PlatePlate pp(make_half_space(au), make_half_space(au), nullptr);
      GratingPlateOptions o;
      o.orders = 4;
      o.bloch_rel_tol = 1e-7;
      const GratingPlate gp(lamellar(f, h, au, au), make_half_space(au), nullptr, o);
      const Spectral s = gp.at_frequency(xi, L, DerivativeOrder::kGradient);
      const Spectral ref = pp.at_frequency(xi, f == 1.0 ? L : L + h, DerivativeOrder::kGradient);
      EXPECT_NEAR(s.value, ref.value, 2e-6 * std::abs(ref.value)) << f << " " << xi;
      EXPECT_NEAR(s.d1, ref.d1, 2e-6 * std::abs(ref.d1)) << f << " " << xi;
    }
}

TEST(GratingMetal, DrudeStaticTermIsThePecGratingsDirichletHalf) {
  // The n = 0 term of a Drude gold grating (lamellar, ridges and substrate gold: one
  // equipotential, conductor_lamellar_static) in GratingPlate. Identity (derived): the perfect
  // conductor's static operator is diag(R_D, R_N) in (phi, psi) (grating_pec.h), a Drude
  // plate's is diag(-r_TM(0), -r_TE(0)) = diag(-1, 0), so ln det(1 - R M R_p M) splits into the
  // phi block alone: s0(PEC grating, Drude plate) = s0(Drude grating, Drude plate) =
  // s0(Drude grating, PEC plate) (the Drude grating reflects no psi). The same Bloch rule on the
  // same integrand: asked 1e-10. And the flat limits f = 1 (x = L) and f = 0 (x = L + h) against
  // the Lifshitz (1956) n = 0 term of Drude plates, -zeta(3)/(8 pi x^2) per unit s (half the
  // perfect mirrors'; standard), asked 1e-6 (Bloch tolerance 1e-8).
  const double L = 200e-9, h = 100e-9;
  GratingPlateOptions o;
  o.orders = 6;
  o.bloch_rel_tol = 1e-8;
  const auto au = gold(), pec = make_perfect_conductor();
  const auto s0 = [&](MaterialPtr grating, MaterialPtr plate, double f) {
    return GratingPlate(lamellar(f, h, grating, grating), make_half_space(plate), nullptr, o)
        .at_frequency(0.0, L, DerivativeOrder::kGradient);
  };
  const Spectral d = s0(au, au, 0.5), p = s0(pec, au, 0.5), q = s0(au, pec, 0.5);
  std::printf("s0: Drude-Drude %.12e, PEC-Drude %.12e, Drude-PEC %.12e\n", d.value, p.value,
              q.value);
  EXPECT_NEAR(d.value, p.value, 1e-10 * std::abs(p.value));
  EXPECT_NEAR(d.d1, p.d1, 1e-10 * std::abs(p.d1));
  EXPECT_NEAR(q.value, p.value, 1e-10 * std::abs(p.value));
  // Strictly between the flat conductors at L and L + h, and above the perfect mirrors' n = 0
  // (which adds the Neumann block).
  const double s0_pec = s0(pec, pec, 0.5).value;
  EXPECT_LT(s0_pec, d.value);
  for (double f : {1.0, 0.0}) {
    const double x = f == 1.0 ? L : L + h;
    const double ref = -kZeta3 / (8.0 * kPi * x * x);
    const Spectral s = s0(au, au, f);
    EXPECT_NEAR(s.value, ref, 1e-6 * std::abs(ref)) << f;
    EXPECT_NEAR(s.d1, -2.0 * ref / x, 1e-6 * std::abs(2.0 * ref / x)) << f;
  }
  // Plasma-model metals (a static TE reflection) and mixes are not built at xi = 0.
  const auto vac = make_vacuum();
  const auto plasma = make_plasma("gold-plasma-like", 9.0 * kRadPerSecondPerEv);
  EXPECT_THROW(GratingAtFrequency(lamellar(0.5, h, plasma, plasma), 0.0, *vac, 2),
               std::invalid_argument);
  EXPECT_THROW(
      GratingAtFrequency(lamellar(0.5, h, au, make_constant("si-like", 11.7)), 0.0, *vac, 2),
      std::invalid_argument);
  EXPECT_THROW(
      GratingAtFrequency(lamellar(0.5, h, make_constant("si-like", 11.7), au), 0.0, *vac, 2),
      std::invalid_argument);
  LamellarGrating sine = lamellar(0.5, h, au, au);
  sine.profile = GratingProfile::kSinusoidal;
  sine.amplitude = h / 2;
  EXPECT_THROW(GratingAtFrequency(sine, 0.0, *vac, 2), std::invalid_argument);
  // In the potential basis of the dielectric static path (dimension 2N + 1, no static pair).
  const GratingAtFrequency gf(lamellar(0.5, h, au, au), 0.0, *vac, 3);
  EXPECT_EQ(gf.dim(), 7);
  EXPECT_FALSE(gf.static_pair());
}

TEST(GratingMetal, DrudeGratingAtHighTemperatureIsItsStaticTerm) {
  // A T > 0 gold grating-plate run (Matsubara rule) against its own n = 0 term: at T = 4000 K and
  // L = 2 um, xi_1 L/c = 25, so the n >= 1 terms are ~e^{-50} (Lifshitz, standard): F =
  // k_B T s(0)/2 (as the perfect conductor's test in grating_pec_test.cc). Period 2 um, f = 0.5,
  // h = 1 um, N = 6 (fixed). Asked 1e-6 (rel_tol 1e-7).
  const double L = 2e-6, T = 4000.0;
  GratingPlateOptions o;
  o.orders = 6;
  o.bloch_rel_tol = 1e-8;
  LamellarGrating g = lamellar(0.5, 1e-6, gold(), gold());
  g.period = 2e-6;
  const GratingPlate gp(g, make_half_space(gold()), nullptr, o);
  FrequencyRuleOptions fo;
  fo.temperature_K = T;
  fo.rel_tol = 1e-7;
  const double f_t = sum_over_frequencies(
                         [&](double x, double t) {
                           return gp.at_frequency_within(x, L, DerivativeOrder::kEnergy, t);
                         },
                         gp.frequency_scale(L), fo)
                         .total.value;
  const double n0 = 0.5 * kBoltzmann * T * gp.at_frequency(0.0, L, DerivativeOrder::kEnergy).value;
  std::printf("T = %.0f K: F = %.8e J/m^2, k_B T s(0)/2 = %.8e\n", T, f_t, n0);
  EXPECT_NEAR(f_t, n0, 1e-6 * std::abs(n0));
}

TEST(GratingMetal, DrudeStaticTermOfTwoGratingsWithAFlatOneIsGratingPlate) {
  // grating-grating at xi = 0 with Drude gold gratings (the equipotential's potential basis): a
  // gold grating facing a flat gold "grating" (f = 1) is the gold grating facing a gold plate
  // (derived: the flat conductor's R_D is -1, a Drude plate's -r_TM(0) = -1), through the two
  // kinds' own Bloch integrals, N = 4, Bloch tolerance 1e-8, offsets 0 and 70 nm (nothing
  // depends on b with a flat partner); and a PEC grating partner (static pair basis: the gold
  // grating's psi block padded by zeros) is the PEC grating facing a gold plate. Asked 1e-6.
  const double L = 150e-9, h = 100e-9;
  const auto au = gold(), pec = make_perfect_conductor();
  GratingPlateOptions po;
  po.orders = 4;
  po.bloch_rel_tol = 1e-8;
  const auto gp = [&](MaterialPtr m) {
    return GratingPlate(lamellar(0.5, h, m, m), make_half_space(au), nullptr, po)
        .at_frequency(0.0, L, DerivativeOrder::kEnergy)
        .value;
  };
  const double ref = gp(au), ref_pec = gp(pec);
  for (double b : {0.0, 70e-9}) {
    GratingGratingOptions o;
    o.orders = 4;
    o.bloch_rel_tol = 1e-8;
    o.offset = b;
    const double v = GratingGrating(lamellar(0.5, h, au, au), lamellar(1.0, h, au, au), nullptr, o)
                         .spectral(0.0, L, DerivativeOrder::kEnergy, 1e-8)
                         .s.value;
    EXPECT_NEAR(v, ref, 1e-6 * std::abs(ref)) << "b " << b;
    const double w =
        GratingGrating(lamellar(0.5, h, pec, pec), lamellar(1.0, h, au, au), nullptr, o)
            .spectral(0.0, L, DerivativeOrder::kEnergy, 1e-8)
            .s.value;
    EXPECT_NEAR(w, ref_pec, 1e-6 * std::abs(ref_pec)) << "b " << b;
  }
}

}  // namespace
}  // namespace roundtrip
