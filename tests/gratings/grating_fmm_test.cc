// Fourier modal method for lamellar gratings (solver/scatterers/grating_fmm.h).
#include "solver/scatterers/grating_fmm.h"

#include <gtest/gtest.h>

#include <cmath>

#include "solver/constants.h"
#include "solver/materials/models.h"
#include "solver/planar/layered.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

// Homogeneous layers are exact in the FMM (diagonal Toeplitz matrices): only rounding remains.
constexpr double kRoundingTol = 1e-11;

LamellarGrating silicon_like(double f, double h) {
  LamellarGrating g;
  g.period = 400e-9;
  g.filling = f;
  g.depth = h;
  g.ridge = make_constant("ridge", 11.7);
  g.substrate = make_constant("ridge", 11.7);
  return g;
}

double max_abs_diff(const Eigen::MatrixXd& a, const Eigen::MatrixXd& b) {
  return (a - b).cwiseAbs().maxCoeff();
}

// The planar operator of the same stack, through the planar seam (Fresnel, layered.h).
Eigen::MatrixXd plate_operator(PlanarPtr p, double xi, double period, int N, double kx, double ky) {
  const auto vac = make_vacuum();
  auto at = p->at(xi, *vac);
  return planar_reflection_in_orders(*at, xi, period, N, kx, ky);
}

TEST(GratingFmm, ZeroDepthIsTheFresnelHalfSpaceInEveryOrder) {
  // Standard: Fresnel coefficients (planar.h); the operator is diagonal in the orders.
  const auto vac = make_vacuum();
  for (double xi : {0.0, 1e14, 3e15}) {
    const auto g = silicon_like(0.4, 0.0);
    GratingAtFrequency gf(g, xi, *vac, 4);
    const auto r = gf.reflect(2e6, 3e6);
    const auto ref = plate_operator(make_half_space(g.substrate), xi, g.period, 4, 2e6, 3e6);
    EXPECT_LT(max_abs_diff(r, ref), kRoundingTol) << "xi = " << xi;
  }
}

TEST(GratingFmm, FillingOneIsTheHalfSpaceOfTheRidgeMaterial) {
  // f = 1 with ridge = substrate: one homogeneous half-space (Fresnel, standard).
  const auto vac = make_vacuum();
  for (double xi : {0.0, 2e14, 5e15}) {
    const auto g = silicon_like(1.0, 150e-9);
    GratingAtFrequency gf(g, xi, *vac, 5);
    const auto r = gf.reflect(-3e6, 1e6);
    const auto ref = plate_operator(make_half_space(g.ridge), xi, g.period, 5, -3e6, 1e6);
    EXPECT_LT(max_abs_diff(r, ref), kRoundingTol) << "xi = " << xi;
  }
}

TEST(GratingFmm, FillingZeroIsAVacuumGapAboveTheSubstrate) {
  // f = 0: the substrate lies h below z = 0, so R = e^{-kappa h} r e^{-kappa h} (Fresnel with
  // propagation, standard); also a film of a different ridge material on the substrate at f = 1
  // against the layered planar body (Airy summation, layered.h).
  const auto vac = make_vacuum();
  const double h = 120e-9;
  for (double xi : {0.0, 4e14, 2e15}) {
    auto g = silicon_like(0.0, h);
    GratingAtFrequency gf(g, xi, *vac, 3);
    const auto r = gf.reflect(1e6, -2e6);
    const auto kap = orders_decay(xi, 1.0, g.period, 3, 1e6, -2e6);
    const Eigen::VectorXd e = (-kap * h).array().exp();
    const Eigen::MatrixXd ref =
        e.asDiagonal() * plate_operator(make_half_space(g.substrate), xi, g.period, 3, 1e6, -2e6) *
        e.asDiagonal();
    EXPECT_LT(max_abs_diff(r, ref), kRoundingTol) << "xi = " << xi;

    g.filling = 1.0;
    g.ridge = make_constant("film", 2.1);
    GratingAtFrequency gf1(g, xi, *vac, 3);
    const auto film = make_layered({{g.ridge, h}}, g.substrate);
    EXPECT_LT(
        max_abs_diff(gf1.reflect(1e6, -2e6), plate_operator(film, xi, g.period, 3, 1e6, -2e6)),
        kRoundingTol)
        << "film, xi = " << xi;
  }
}

TEST(GratingFmm, SmallFrequenciesKeepTheFilmToTheStatedConditioning) {
  // Airy film (layered.h) at xi = 1e12 and 1e13 rad/s. In the former c/xi form the layer
  // operator was a Gram matrix of size (k/q0)^2 plus 1 (q0 = xi/c), and rounding grew like
  // (G/q0)^2 eps_machine: 1.3e-6 at 1e10, 6e-10 at 1e12, 2e-13 at 1e14 rad/s (period 400 nm,
  // N = 4). The balanced basis (grating_fmm.h) measures <= 4e-16 from 1e6 rad/s up
  // (grating_metal_test.cc); this tolerance (1e-8) is the former bound, kept.
  const auto vac = make_vacuum();
  LamellarGrating g = silicon_like(1.0, 120e-9);
  g.ridge = make_constant("film", 2.1);
  const auto film = make_layered({{g.ridge, 120e-9}}, g.substrate);
  for (double xi : {1e12, 1e13}) {
    GratingAtFrequency gf(g, xi, *vac, 4);
    EXPECT_LT(max_abs_diff(gf.reflect(1e6, 5e5), plate_operator(film, xi, g.period, 4, 1e6, 5e5)),
              1e-8)
        << "xi = " << xi;
  }
}

TEST(GratingFmm, MirrorSymmetryOfAnEvenProfile) {
  // Derived: an even profile is invariant under x -> -x, which maps order n at k_x to order -n
  // at -k_x and E_x -> -E_x; likewise y -> -y maps k_y -> -k_y and E_y -> -E_y.
  const auto vac = make_vacuum();
  const auto g = silicon_like(0.35, 180e-9);
  const int N = 6, m = 2 * N + 1;
  GratingAtFrequency gf(g, 1e15, *vac, N);
  const auto a = gf.reflect(2.5e6, 4e6);
  const auto b = gf.reflect(-2.5e6, 4e6);
  Eigen::MatrixXd S = Eigen::MatrixXd::Zero(2 * m, 2 * m);
  for (int i = 0; i < m; ++i) {
    S(i, m - 1 - i) = -1.0;
    S(m + i, 2 * m - 1 - i) = 1.0;
  }
  EXPECT_LT(max_abs_diff(S * a * S.transpose(), b), 1e-10 * a.cwiseAbs().maxCoeff());
  const auto c = gf.reflect(2.5e6, -4e6);
  Eigen::VectorXd sy(2 * m);
  sy << Eigen::VectorXd::Ones(m), -Eigen::VectorXd::Ones(m);
  EXPECT_LT(max_abs_diff(sy.asDiagonal() * a * sy.asDiagonal(), c),
            1e-10 * a.cwiseAbs().maxCoeff());
}

TEST(GratingFmm, ReflectionIsContractingAtImaginaryFrequency) {
  // Passive body at imaginary frequency: the round trip with a perfect mirror is below 1 in
  // every eigenvalue (standard: positivity of 1 - M in the scattering formula; derived here as
  // a necessary condition, spectral radius < 1).
  const auto vac = make_vacuum();
  const auto g = silicon_like(0.5, 200e-9);
  GratingAtFrequency gf(g, 5e14, *vac, 8);
  const auto r = gf.reflect(1e6, 0.5e6);
  Eigen::EigenSolver<Eigen::MatrixXd> es(r);
  EXPECT_LT(es.eigenvalues().cwiseAbs().maxCoeff(), 1.0);
}

TEST(GratingFmm, SpecularOrderConvergesWithTheOrderCount) {
  // Li's rules give algebraic convergence for lamellar profiles (Li, JOSA A 13, 1870 (1996));
  // the specular TM element at N = 10, 20, 40, 80: the differences must shrink (common practice).
  // Observed: 8.3e-5, 1.8e-5, 3.7e-6, i.e. about N^-2.2.
  const auto vac = make_vacuum();
  const auto g = silicon_like(0.5, 200e-9);
  std::vector<double> v;
  for (int N : {10, 20, 40, 80}) {
    GratingAtFrequency gf(g, 1e15, *vac, N);
    const auto r = gf.reflect(1e6, 0.0);
    v.push_back(r(N, N));  // E_x of order 0 (TM at k_y = 0)
  }
  const double d1 = std::abs(v[1] - v[0]), d2 = std::abs(v[2] - v[1]), d3 = std::abs(v[3] - v[2]);
  std::printf("specular TM: %.12f %.12f %.12f %.12f; diffs %.3e %.3e %.3e\n", v[0], v[1], v[2],
              v[3], d1, d2, d3);
  EXPECT_LT(d2, d1);
  EXPECT_LT(d3, d2);
}

}  // namespace
}  // namespace roundtrip

namespace roundtrip {
namespace {

TEST(GratingFmm, ConicalDecouplingEqualsTheCoupledEigenproblem) {
  // The layer is invariant in y and z, so its modes are TE/TM with respect to x with
  // lambda^2 = gamma^2 + k_y^2 (derived; grating_fmm.h, Line): the per-line modes must give the
  // operator of the coupled 2M x 2M eigenproblem at every (k_x, k_y) up to rounding. Both forms
  // hold matrices of size (k/q0)^2 (q0 = xi/c, k the largest |k_n|, k_y; README: conditioning),
  // so the rounding allowed is kConditioned (k/q0)^2 (measured: 3.8e-10 at (k/q0)^2 = 2e4,
  // <= 1e-14 at (k/q0)^2 < 100). Lamellar and a sliced sinusoid (several layers), xi = 0 and
  // xi > 0, k_x at the zone centre, inside and at the edge.
  constexpr double kConditioned = 1e-13;
  const auto vac = make_vacuum();
  LamellarGrating lam = silicon_like(0.4, 150e-9);
  lam.substrate = make_constant("substrate", 4.0);
  LamellarGrating sine = lam;
  sine.profile = GratingProfile::kSinusoidal;
  sine.amplitude = 60e-9;
  sine.slices = 5;
  const double G = 2.0 * kPi / lam.period;
  for (const LamellarGrating& g : {lam, sine})
    for (double xi : {0.0, 2e14, 3e15}) {
      const GratingAtFrequency gf(g, xi, *vac, 5);
      for (double kx : {0.0, 0.17 * G, 0.5 * G}) {
        const auto line = gf.line(kx);
        for (double ky : {0.0, 3e6, 4e7}) {
          const auto a = gf.reflect(line, ky);
          const auto b = gf.reflect_coupled(kx, ky);
          const double kmax = std::hypot(std::abs(kx) + 5 * G, ky);
          const double c2 = xi > 0.0 ? std::pow(kmax * kSpeedOfLight / xi, 2) : 1.0;
          EXPECT_LT(max_abs_diff(a, b), std::max(kRoundingTol, kConditioned * c2))
              << xi << " " << kx << " " << ky;
        }
      }
    }
}

}  // namespace
}  // namespace roundtrip
