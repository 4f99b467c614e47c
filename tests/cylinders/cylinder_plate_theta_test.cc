// Beyond-PFA coefficient of a perfectly conducting cylinder over a perfectly conducting plate at
// T = 0: E/E_PFA = 1 + theta x + ..., x = L/R (L the surface gap), with theta_EM = 7/36 -
// 20/(3 pi^2) = -0.48103 (Bordag, PRD 73, 125018 (2006); derivative expansion, Bimonte, Emig,
// Jaffe, Kardar, EPL 97, 50001 (2012)), and per channel theta_D = 7/36 (Dirichlet, TM) and
// theta_N = 7/36 - 40/(3 pi^2) (Neumann, TE; Bordag 2006: E_EM = E_D + E_N with PFA halves).
// Exact energies from the polar form E/l = (hbar c/4 pi) \int dp p log det (Emig, Jaffe, Kardar,
// Scardicchio, PRL 96, 080403 (2006)) through the plane-wave path at the small gaps.
#include <gtest/gtest.h>

#include <Eigen/Dense>
#include <cmath>
#include <cstdio>
#include <vector>

#include "solver/constants.h"
#include "solver/geometries/axial_integral.h"
#include "solver/geometries/cylinder_plate.h"

namespace roundtrip {
namespace {

// E/l of one channel, T = 0, vacuum: (hbar c / (4 pi L^2)) \int du u log det(p = u/L), on the
// DE trapezoid of axial_integral.h to rel_tol (the log det to rel_tol each).
double channel_energy(FieldKind ch, double R, double L, double rel_tol) {
  const Spectral s = cylinder::de_integrate(
      [&](double u) {
        u = std::max(u, 1e-3 * rel_tol / 30.0);  // floor as in cylinder_plate.cc kz_floor
        return Spectral{
            u * cylinder_plate_logdet(ch, u / L, R, R + L, DerivativeOrder::kEnergy, rel_tol).value,
            0.0, 0.0};
      },
      rel_tol, nullptr, nullptr, 2);
  return kHbarC / (4.0 * kPi * L * L) * s.value;
}

// Least squares of y = (E/E_PFA - 1)/x on the basis functions x^{e_k} (e_0 = 0: theta).
double fit_theta(const std::vector<double>& x, const std::vector<double>& y,
                 const std::vector<double>& powers) {
  Eigen::MatrixXd A(x.size(), powers.size());
  Eigen::VectorXd b(x.size());
  for (std::size_t i = 0; i < x.size(); ++i) {
    for (std::size_t k = 0; k < powers.size(); ++k) A(i, k) = std::pow(x[i], powers[k]);
    b(i) = y[i];
  }
  return A.colPivHouseholderQr().solve(b)(0);
}

// The fit of both models to (E/E_PFA - 1)/x at the gaps x = L/R, per channel and for EM, each
// channel's energy to rel_tol `tol`; expects the x^{1/2} model's theta within the models' spread.
void check_theta(const std::vector<double>& xs, double tol) {
  const double R = 1e-6;
  const double thD = 7.0 / 36.0, thN = 7.0 / 36.0 - 40.0 / (3.0 * kPi * kPi);
  const double thEM = 7.0 / 36.0 - 20.0 / (3.0 * kPi * kPi);
  std::vector<double> yD, yN, yEM;
  for (double x : xs) {
    const double L = x * R;
    const double pfa = cylinder_plate_pfa_pec(R, L).energy;  // EM; each channel half
    const double eD = channel_energy(FieldKind::kDirichlet, R, L, tol);
    const double eN = channel_energy(FieldKind::kNeumann, R, L, tol);
    yD.push_back((eD / (0.5 * pfa) - 1.0) / x);
    yN.push_back((eN / (0.5 * pfa) - 1.0) / x);
    yEM.push_back(((eD + eN) / pfa - 1.0) / x);
    std::printf("x = %.4f: (E/E_PFA - 1)/x  D %.6f  N %.6f  EM %.6f\n", x, yD.back(), yN.back(),
                yEM.back());
  }
  const std::vector<double> half{0.0, 0.5, 1.0}, integer{0.0, 1.0, 2.0};
  const auto check = [&](const char* name, const std::vector<double>& y, double published) {
    const double a = fit_theta(xs, y, half), b = fit_theta(xs, y, integer);
    const double tolerance = std::max(0.01, 2.0 * std::abs(a - b));
    std::printf("%s: theta = %.5f (x^1/2 model), %.5f (integer model); published %.5f\n", name, a,
                b, published);
    EXPECT_NEAR(a, published, tolerance) << name;
  };
  check("Dirichlet", yD, thD);
  check("Neumann", yN, thN);
  check("EM", yEM, thEM);
}

// Gaps x = L/R = 0.002 ... 0.032 (R/L up to 500, the plane-wave path), Dirichlet and Neumann
// channels to rel_tol 1e-8 each (the numerical error of y is then ~1e-8/x < 1e-5). Models
//   y = theta + a x^{1/2} + b x        (a half-integer power, as for spheres: Schoger, Spreng,
//                                       Ingold, Maia Neto, arXiv:2205.10819)
//   y = theta + b x + c x^2            (integer powers)
// The tolerance is the spread between the two models' theta (the systematic error of the
// truncated expansion over this range; the benchmark roundtrip_bench_cylinder_plate_theta fits
// 1e-3 ... 1e-1) times 2, at least 0.01.
// Disabled: runs minutes, not seconds (896 s at load ~15: the DE integral to rel_tol 1e-8 at five
// gaps). Measured once: theta_D 0.19453 / 0.19443, theta_N -1.15679 / -1.11577, theta_EM
// -0.48113 / -0.46067 (x^1/2 model / integer model). Run with --gtest_also_run_disabled_tests.
TEST(CylinderPlateTheta, DISABLED_PerfectConductorsFollowBordagsTheta) {
  check_theta({0.002, 0.004, 0.008, 0.016, 0.032}, 1e-8);
}

// The same at larger gaps, x = 0.01 ... 0.08 (R/L <= 100), each channel to rel_tol 1e-6 (the
// numerical error of y is then <= 1e-4): seconds. Over this wider range the truncated
// expansions differ more, and the tolerance (twice the two models' spread, at least 0.01) widens
// with it.
TEST(CylinderPlateTheta, PerfectConductorsFollowBordagsThetaAtModerateGaps) {
  check_theta({0.01, 0.02, 0.04, 0.08}, 1e-6);
}

}  // namespace
}  // namespace roundtrip
