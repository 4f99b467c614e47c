// Conformal coatings on gratings (solver/scatterers/grating_coating.h) through the Fourier modal
// method (grating_fmm.h) and grating-plate (grating_plate.h).
#include "solver/scatterers/grating_coating.h"

#include <fmt/format.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "solver/constants.h"
#include "solver/geometries/grating_grating.h"
#include "solver/geometries/grating_plate.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/layered.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

// Identities that hold layer by layer (homogeneous layers, a layer split in two, equal
// Toeplitz matrices) leave only rounding (as in grating_fmm_test.cc).
constexpr double kRoundingTol = 1e-11;
// Bloch integral tolerance and the agreement asked of it (grating_plate_test.cc).
constexpr double kBlochTol = 1e-7;
constexpr double kPlateAgreement = 2e-6;

MaterialPtr silicon_like() { return make_constant("si-like", 11.7); }
MaterialPtr silica_like() { return make_constant("silica-like", 2.1); }
MaterialPtr gold_like() {
  return make_drude("gold-like", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv);
}

LamellarGrating lamellar(double f, double h, MaterialPtr ridge, MaterialPtr substrate) {
  LamellarGrating g;
  g.period = 400e-9;
  g.filling = f;
  g.depth = h;
  g.ridge = std::move(ridge);
  g.substrate = std::move(substrate);
  return g;
}

LamellarGrating coat(LamellarGrating g, MaterialPtr c, double t) {
  g.coating = std::move(c);
  g.coating_thickness = t;
  return g;
}

LamellarGrating sinusoid(double amplitude, int slices, MaterialPtr m) {
  LamellarGrating g = lamellar(0.5, 2 * amplitude, m, m);
  g.profile = GratingProfile::kSinusoidal;
  g.amplitude = amplitude;
  g.slices = slices;
  return g;
}

// The layer operator's conditioning (grating_fmm_test.cc, README): identities at large
// (k/q0)^2, q0 = xi/c, keep ~1e-13 (k/q0)^2 absolute.
double tolerance(double xi, double kx, double ky) {
  if (!(xi > 0.0)) return kRoundingTol;
  const double q0 = xi / kSpeedOfLight, k2 = (kx * kx + ky * ky) / (q0 * q0);
  return std::max(kRoundingTol, 1e-13 * k2);
}

double max_abs_diff(const Eigen::MatrixXd& a, const Eigen::MatrixXd& b) {
  return (a - b).cwiseAbs().maxCoeff();
}

Eigen::MatrixXd plate_operator(PlanarPtr p, double xi, double period, int N, double kx, double ky) {
  const auto vac = make_vacuum();
  auto at = p->at(xi, *vac);
  return planar_reflection_in_orders(*at, xi, period, N, kx, ky);
}

struct Bloch {
  double kx, ky;
};
const Bloch kBloch[] = {{5e5, 0.0}, {3e6, 1e6}, {-2e6, 4e7}};

TEST(GratingCoating, LamellarLayersAreTheTopSlabTheRidgeLayerAndTheFloor) {
  // The square-cornered coating of the header (derived): t < h gives slabs t, h - t, t; t > h a
  // coating film t - h between the top slab and the ridge layer.
  const auto si = silicon_like(), sio2 = silica_like();
  const double P = 400e-9;
  auto ly = grating_layers(coat(lamellar(0.4, 150e-9, si, si), sio2, 20e-9));
  ASSERT_EQ(ly.size(), 3u);
  EXPECT_NEAR(ly[0].thickness, 20e-9, 1e-20);
  EXPECT_NEAR(ly[1].thickness, 130e-9, 1e-20);
  EXPECT_NEAR(ly[2].thickness, 20e-9, 1e-20);
  const double w = 0.2 + 20e-9 / P;  // half-width of the coated ridge, units of the period
  ASSERT_EQ(ly[0].segments.size(), 1u);
  EXPECT_EQ(ly[0].segments[0].phase, GratingPhase::kCoating);
  EXPECT_NEAR(ly[0].segments[0].hi, w, 1e-15);
  ASSERT_EQ(ly[1].segments.size(), 3u);  // ridge, then the two walls
  EXPECT_EQ(ly[1].segments[0].phase, GratingPhase::kRidge);
  EXPECT_NEAR(ly[1].segments[0].hi, 0.2, 1e-15);
  EXPECT_NEAR(ly[1].segments[1].lo, -w, 1e-15);
  EXPECT_NEAR(ly[1].segments[2].hi, w, 1e-15);
  ASSERT_EQ(ly[2].segments.size(), 3u);  // ridge and coating to the period's ends
  EXPECT_NEAR(ly[2].segments[1].lo, -0.5, 1e-15);
  EXPECT_NEAR(ly[2].segments[2].hi, 0.5, 1e-15);
  ly = grating_layers(coat(lamellar(0.4, 10e-9, si, si), sio2, 30e-9));
  ASSERT_EQ(ly.size(), 3u);
  EXPECT_NEAR(ly[1].thickness, 20e-9, 1e-20);
  ASSERT_EQ(ly[1].segments.size(), 1u);
  EXPECT_EQ(ly[1].segments[0].phase, GratingPhase::kCoating);
  EXPECT_NEAR(ly[1].segments[0].hi - ly[1].segments[0].lo, 1.0, 1e-15);
  EXPECT_NEAR(grating_top(coat(lamellar(0.4, 10e-9, si, si), sio2, 30e-9)), 40e-9, 1e-20);
}

TEST(GratingCoating, CoatingOfTheRidgeMaterialIsTheThickenedGrating) {
  // Exact identity (derived): a coating of the ridge material on a grating whose substrate is the
  // ridge material is the uncoated grating of ridge width f Lambda + 2t and depth h (the floor's
  // coating joins the substrate), ξ = 0 and ξ > 0.
  const auto si = silicon_like();
  const auto vac = make_vacuum();
  const double t = 20e-9;
  const auto coated = coat(lamellar(0.4, 150e-9, si, si), si, t);
  const auto thick = lamellar(0.4 + 2 * t / 400e-9, 150e-9, si, si);
  for (double xi : {0.0, 2e14, 3e15}) {
    const GratingAtFrequency a(coated, xi, *vac, 5), b(thick, xi, *vac, 5);
    for (const Bloch& k : kBloch)
      EXPECT_LT(max_abs_diff(a.reflect(k.kx, k.ky), b.reflect(k.kx, k.ky)),
                tolerance(xi, k.kx, k.ky))
          << "xi = " << xi << " kx = " << k.kx;
  }
}

TEST(GratingCoating, CoatingOfTheGapMediumIsTheUncoatedGratingTLower) {
  // Exact identity (derived): a coating with the gap medium's eps changes nothing but the
  // reference plane, so R_coated = e^{-kappa t} R e^{-kappa t} per order (and the same through
  // the coupled eigenproblem).
  const auto si = silicon_like(), vac = make_vacuum();
  const double t = 25e-9;
  const auto plain = lamellar(0.35, 120e-9, si, silica_like());
  const auto coated = coat(plain, make_constant("vacuum-like", 1.0), t);
  for (double xi : {0.0, 4e14, 2e15}) {
    const GratingAtFrequency a(coated, xi, *vac, 4), b(plain, xi, *vac, 4);
    for (const Bloch& k : kBloch) {
      const auto kap = orders_decay(xi, 1.0, plain.period, 4, k.kx, k.ky);
      const Eigen::VectorXd e = (-kap * t).array().exp();
      const Eigen::MatrixXd ref = e.asDiagonal() * b.reflect(k.kx, k.ky) * e.asDiagonal();
      const double tol = tolerance(xi, k.kx, k.ky);
      EXPECT_LT(max_abs_diff(a.reflect(k.kx, k.ky), ref), tol) << "xi = " << xi;
      EXPECT_LT(max_abs_diff(a.reflect_coupled(k.kx, k.ky), ref), tol) << "xi = " << xi;
    }
  }
}

TEST(GratingCoating, FillingOneAndZeroAreThePlanarStacks) {
  // Airy summation of the layered planar body (layered.h, standard): f = 1 is a coating film on a
  // ridge film on the substrate (three layers); f = 0 is a coating film t on the substrate, h
  // below the ridge-top plane (e^{-kappa h} per order).
  const auto si = silicon_like(), sio2 = silica_like(), sub = make_constant("sub", 5.0);
  const double t = 30e-9, h = 100e-9, P = 400e-9;
  for (double xi : {0.0, 3e14, 2e15}) {
    const auto vac = make_vacuum();
    const GratingAtFrequency one(coat(lamellar(1.0, h, si, sub), sio2, t), xi, *vac, 4);
    const GratingAtFrequency zero(coat(lamellar(0.0, h, si, sub), sio2, t), xi, *vac, 4);
    for (const Bloch& k : kBloch) {
      const auto r1 = plate_operator(make_layered({{sio2, t}, {si, h}}, sub), xi, P, 4, k.kx, k.ky);
      const double tol = tolerance(xi, k.kx, k.ky);
      EXPECT_LT(max_abs_diff(one.reflect(k.kx, k.ky), r1), tol) << "xi = " << xi;
      const auto kap = orders_decay(xi, 1.0, P, 4, k.kx, k.ky);
      const Eigen::VectorXd e = (-kap * h).array().exp();
      const Eigen::MatrixXd r0 =
          e.asDiagonal() * plate_operator(make_layered({{sio2, t}}, sub), xi, P, 4, k.kx, k.ky) *
          e.asDiagonal();
      EXPECT_LT(max_abs_diff(zero.reflect(k.kx, k.ky), r0), tol) << "xi = " << xi;
    }
  }
}

TEST(GratingCoating, FillingOneGratingPlateIsTheLifshitzIntegrandOfTheThreeLayerStack) {
  // Lifshitz (1956) through PlatePlate with the layered plate (coating, ridge film, substrate)
  // against grating-plate at f = 1, xi = 0 and xi > 0, with the L derivatives.
  const auto si = silicon_like(), sio2 = silica_like(), sub = make_constant("sub", 5.0);
  const double t = 30e-9, h = 100e-9, L = 200e-9;
  GratingPlateOptions o;
  o.orders = 4;
  o.bloch_rel_tol = kBlochTol;
  const GratingPlate gp(coat(lamellar(1.0, h, si, sub), sio2, t), make_half_space(gold_like()),
                        nullptr, o);
  const PlatePlate pp(make_layered({{sio2, t}, {si, h}}, sub), make_half_space(gold_like()),
                      nullptr);
  for (double xi : {0.0, 3e14, 2e15}) {
    const Spectral s = gp.at_frequency(xi, L, DerivativeOrder::kGradient);
    const Spectral r = pp.at_frequency(xi, L, DerivativeOrder::kGradient);
    EXPECT_NEAR(s.value, r.value, kPlateAgreement * std::abs(r.value)) << xi;
    EXPECT_NEAR(s.d1, r.d1, kPlateAgreement * std::abs(r.d1)) << xi;
    EXPECT_NEAR(s.d2, r.d2, kPlateAgreement * std::abs(r.d2)) << xi;
  }
}

TEST(GratingCoating, VanishingCoatingTendsToTheUncoatedGratingLinearly) {
  // Limit (derived): the coating's effect is first order in t (a film of thickness t and a
  // reference plane t higher), so the specular block (order 0, both polarizations; kappa_0 t <
  // 0.02 here, so its O(t^2) part is small) changes like t: ratios for t = 4 -> 2 -> 1 nm within
  // 1.7-2.3. The whole matrix is not used: its evanescent orders carry e^{-kappa_n t} with
  // kappa_n t up to 0.3 (not yet linear). Lamellar and a 16-slice sinusoid.
  const auto si = silicon_like(), sio2 = silica_like(), vac = make_vacuum();
  const int N = 5;
  const auto specular = [&](const Eigen::MatrixXd& r) {
    const int m = 2 * N + 1;
    Eigen::Matrix2d b;
    b << r(N, N), r(N, m + N), r(m + N, N), r(m + N, m + N);
    return b;
  };
  for (const auto& plain : {lamellar(0.4, 150e-9, si, si), sinusoid(50e-9, 16, si)}) {
    const double xi = 5e14;
    const GratingAtFrequency b(plain, xi, *vac, N);
    const Eigen::Matrix2d rb = specular(b.reflect(3e6, 1e6));
    double prev = 0.0;
    for (double t : {4e-9, 2e-9, 1e-9}) {
      const GratingAtFrequency a(coat(plain, sio2, t), xi, *vac, N);
      const double d = (specular(a.reflect(3e6, 1e6)) - rb).cwiseAbs().maxCoeff();
      std::printf("profile %d, t = %g nm: specular max |R - R_uncoated| = %.4e%s\n",
                  static_cast<int>(plain.profile), t * 1e9, d,
                  prev > 0.0 ? fmt::format(" (ratio {:.3f})", prev / d).c_str() : "");
      if (prev > 0.0) {
        EXPECT_GT(prev / d, 1.7);
        EXPECT_LT(prev / d, 2.3);
      }
      prev = d;
    }
  }
}

TEST(GratingCoating, OuterSurfaceIsTheNormalOffsetOfTheProfile) {
  // Derived (parallel curves): a triangle's flanks move up by t sqrt(1 + s^2) (slope s), its
  // apex becomes the arc H + sqrt(t^2 - x^2) for |x| < t s/sqrt(1 + s^2); a sinusoid's point
  // (x0, h(x0)) moves to (x0, h(x0)) + t n(x0) with n = (-h', 1)/sqrt(1 + h'^2) where the
  // radius of curvature exceeds t (here everywhere: 81 nm > 20 nm).
  const auto si = silicon_like();
  const double t = 20e-9, P = 400e-9, H = 100e-9;
  LamellarGrating tri = lamellar(0.5, H, si, si);
  tri.profile = GratingProfile::kTriangular;
  tri = coat(tri, silica_like(), t);
  const double s = 2 * H / P, edge = t * s / std::sqrt(1 + s * s);
  for (double x : {0.0, 0.3 * edge, 0.9 * edge, 1.1 * edge, 50e-9, 150e-9, 199e-9, 200e-9}) {
    const double ref =
        x < edge ? H + std::sqrt(t * t - x * x) : H * (1 - 2 * x / P) + t * std::sqrt(1 + s * s);
    EXPECT_NEAR(coated_height_at(tri, x), ref, 1e-9 * t) << "x = " << x;
  }
  const auto sn = coat(sinusoid(50e-9, 8, si), silica_like(), t);
  const double k = 2 * kPi / P;
  for (double x0 : {0.0, 30e-9, 100e-9, 170e-9, 200e-9}) {
    const double hp = -50e-9 * k * std::sin(k * x0), nn = std::sqrt(1 + hp * hp);
    const double x = x0 - t * hp / nn, z = 50e-9 * (1 + std::cos(k * x0)) + t / nn;
    EXPECT_NEAR(coated_height_at(sn, x), z, 1e-9 * t) << "x0 = " << x0;
  }
  // The coated set at z is where the outer surface is above z (tabulated: dx = period/1024).
  const auto set = coated_set(sn, 60e-9);
  ASSERT_EQ(set.size(), 1u);
  EXPECT_NEAR(coated_height_at(sn, set[0].second * P), 60e-9, 1e-3 * t);
}

TEST(GratingCoating, CoatedStaircaseConvergesInSlices) {
  // Staircase slicing of both surfaces (Moharam & Gaylord, JOSA 72, 1385 (1982)): the coated
  // sinusoid (A = 50 nm, 20 nm of an eps = 2.1 coating, period 400 nm, L = 150 nm, N = 4,
  // xi = 6e14 rad/s) converges in S: the change must fall at each doubling and the last one be
  // below 1e-2 of s. Observed (slices aligned on the ridge's crest, grating_coating.cc):
  // relative changes 6.6e-3, 2.0e-3, 4.2e-4 for S = 4 -> 8 -> 16 -> 32 (rates 1.7, 2.3), and
  // 1.5e-4 to S = 64 (rate 1.5) in a manual run; the uncoated sinusoid gives 1.5-2.5 (the slice
  // study of grating-plate uses the observed rate, not an assumed one).
  const double L = 150e-9, xi = 6e14;
  LamellarGrating g = coat(sinusoid(50e-9, 1, silicon_like()), silica_like(), 20e-9);
  GratingPlateOptions o;
  o.orders = 4;
  o.bloch_rel_tol = 1e-8;
  const GratingPlate gp(g, make_half_space(gold_like()), nullptr, o);
  const auto v = gp.levels_at(xi, L, DerivativeOrder::kEnergy, 1e-8,
                              {{4, 4}, {4, 8}, {4, 16}, {4, 32}}, {0, 0, 0, 1});
  const double d1 = v[2].value - v[1].value, d2 = v[3].value - v[2].value,
               d3 = v[4].value - v[3].value;
  std::printf(
      "coated sinusoid, slices 4, 8, 16, 32: s = %.10e %.10e %.10e %.10e; rates %.3f %.3f\n",
      v[1].value, v[2].value, v[3].value, v[4].value, std::log2(std::abs(d1 / d2)),
      std::log2(std::abs(d2 / d3)));
  EXPECT_LT(std::abs(d2), std::abs(d1));
  EXPECT_LT(std::abs(d3), std::abs(d2));
  EXPECT_LT(std::abs(d3), 1e-2 * std::abs(v[4].value));
}

TEST(GratingCoating, PfaColumnsOfTheCoatedLamellarGrating) {
  // Derived: ridge (f, coating t on the ridge h), walls (2t/Lambda, coating h + t) and groove
  // (the rest, coating t, h lower); the weights sum to 1.
  const auto si = silicon_like();
  const auto c = grating_columns(coat(lamellar(0.4, 150e-9, si, si), silica_like(), 20e-9), 64);
  ASSERT_EQ(c.size(), 3u);
  EXPECT_NEAR(c[0].weight + c[1].weight + c[2].weight, 1.0, 1e-15);
  EXPECT_NEAR(c[1].weight, 0.1, 1e-15);
  EXPECT_NEAR(c[1].coating, 170e-9, 1e-20);
  EXPECT_NEAR(c[2].below_top, 150e-9, 1e-20);
  EXPECT_NEAR(c[0].ridge, 150e-9, 1e-20);
}

TEST(GratingCoating, UnsupportedCoatingsAreRefused) {
  // A coating that closes the grooves, a non-positive thickness, a coated perfect conductor.
  const auto si = silicon_like(), sio2 = silica_like(), vac = make_vacuum();
  EXPECT_NE(coating_problem(coat(lamellar(0.5, 100e-9, si, si), sio2, 100e-9)).find("fills"),
            std::string::npos);
  EXPECT_TRUE(coating_problem(coat(lamellar(0.5, 100e-9, si, si), sio2, 99e-9)).empty());
  EXPECT_TRUE(coating_problem(coat(lamellar(1.0, 100e-9, si, si), sio2, 300e-9)).empty());
  EXPECT_NE(coating_problem(coat(lamellar(0.5, 100e-9, si, si), sio2, 0.0)).find("> 0"),
            std::string::npos);
  EXPECT_NE(coating_problem(coat(sinusoid(50e-9, 4, si), sio2, 200e-9)).find("half the period"),
            std::string::npos);
  EXPECT_THROW(GratingAtFrequency(coat(lamellar(0.5, 100e-9, si, si), sio2, 120e-9), 1e14, *vac, 2),
               std::invalid_argument);
  const auto pec = make_perfect_conductor();
  EXPECT_THROW(
      GratingAtFrequency(coat(lamellar(0.5, 100e-9, pec, pec), sio2, 10e-9), 1e14, *vac, 2),
      std::invalid_argument);
}

TEST(GratingCoating, CoatedGratingGratingLimitsSymmetryAndPfaColumns) {
  // Lifshitz (1956) through PlatePlate: two coated f = 1 gratings are the two layered plates at
  // L; a coated f = 0 upper grating is its coating film on its substrate h2 above (grating-plate
  // at L + h2 with that plate, the independent GratingPlate engine). Symmetry (derived): ds/db
  // vanishes at b = 0 and Lambda/2. PFA columns (derived): the pair weights sum to 1 and their b
  // derivatives to 0 at any b.
  const auto si = silicon_like(), sio2 = silica_like(), sub = make_constant("sub", 5.0);
  const double L = 180e-9, h2 = 90e-9, t1 = 20e-9, t2 = 30e-9, P = 400e-9;
  GratingGratingOptions o;
  o.bloch_rel_tol = kBlochTol;
  const auto gg = [&](const LamellarGrating& a, const LamellarGrating& b, double off, int n) {
    GratingGratingOptions q = o;
    q.orders = n;
    q.offset = off;
    return GratingGrating(a, b, nullptr, q);
  };
  const auto lower = coat(lamellar(0.5, 100e-9, si, si), sio2, t1);
  for (double xi : {0.0, 3e14}) {
    SCOPED_TRACE(xi);
    const PlatePlate pp(make_layered({{sio2, t1}}, si),
                        make_layered({{sio2, t2}, {si, 70e-9}}, sub), nullptr);
    const Spectral ref = pp.at_frequency(xi, L, DerivativeOrder::kGradient);
    // N = 4 carries the orders up to e^{-2 (4.5 G) L} ~ 3e-12 (grating_grating_test.cc).
    const auto s = gg(coat(lamellar(1.0, 50e-9, si, si), sio2, t1),
                      coat(lamellar(1.0, 70e-9, si, sub), sio2, t2), 90e-9, 4)
                       .spectral(xi, L, DerivativeOrder::kGradient, kBlochTol);
    EXPECT_NEAR(s.s.value, ref.value, kPlateAgreement * std::abs(ref.value));
    EXPECT_NEAR(s.s.d1, ref.d1, kPlateAgreement * std::abs(ref.d1));
    GratingPlateOptions po;
    po.orders = 2;
    po.bloch_rel_tol = kBlochTol;
    const GratingPlate gp(lower, make_layered({{sio2, t2}}, sub), nullptr, po);
    const Spectral ref2 = gp.at_frequency(xi, L + h2, DerivativeOrder::kGradient);
    const auto u = gg(lower, coat(lamellar(0.0, h2, si, sub), sio2, t2), 55e-9, 2)
                       .spectral(xi, L, DerivativeOrder::kGradient, kBlochTol);
    EXPECT_NEAR(u.s.value, ref2.value, kPlateAgreement * std::abs(ref2.value));
    EXPECT_NEAR(u.s.d1, ref2.d1, kPlateAgreement * std::abs(ref2.d1));
  }
  const auto upper = coat(lamellar(0.3, 60e-9, si, sub), sio2, t2);
  const double xi = 4e14;
  const auto s0 = gg(lower, upper, 0.0, 2).spectral(xi, L, DerivativeOrder::kGradient, 1e-5);
  const double scale = 2.0 * kPi / P * std::abs(s0.s.value);
  EXPECT_LE(std::abs(s0.d_offset), 1e-12 * scale);
  EXPECT_LE(
      std::abs(
          gg(lower, upper, 0.5 * P, 2).spectral(xi, L, DerivativeOrder::kGradient, 1e-5).d_offset),
      1e-12 * scale);
  const auto g = gg(lower, upper, 0.0, 2);
  for (double b : {0.0, 37e-9, 110e-9, 200e-9, 333e-9}) {
    double w = 0.0, dw = 0.0;
    for (const auto& term : g.coated_pfa_terms(b)) {
      w += term.weight;
      dw += term.d_weight;
    }
    EXPECT_NEAR(w, 1.0, 1e-14) << b;
    EXPECT_NEAR(dw, 0.0, 1e-6 / P) << b;
  }
}

}  // namespace
}  // namespace roundtrip
