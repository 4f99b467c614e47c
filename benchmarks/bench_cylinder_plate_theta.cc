// Validation run (not a Google Benchmark): the beyond-PFA coefficient of a perfectly conducting
// cylinder over a perfectly conducting plate at T = 0, per channel and electromagnetic.
// Published: theta_EM = 7/36 - 20/(3 pi^2) = -0.48103 (Bordag, PRD 73, 125018 (2006); Bimonte,
// Emig, Jaffe, Kardar, EPL 97, 50001 (2012)); theta_D = 7/36, theta_N = 7/36 - 40/(3 pi^2).
//   ./build/benchmarks/roundtrip_bench_cylinder_plate_theta [rel_tol] [x1 x2 ...]
// x = L/R (L the surface gap). Default x = 1e-3 ... 1e-1 (9 gaps, factor ~1.8), rel_tol 1e-9.
// Energies by the polar form E/l = (hbar c/4 pi) \int dp p log det (Emig, Jaffe, Kardar,
// Scardicchio, PRL 96, 080403 (2006)), p on the DE trapezoid of axial_integral.h. Prints
// y = (E/E_PFA - 1)/x per gap with timings, then least-squares fits of y over three models
// (integer powers; with x^{1/2}; with x^{1/2} and x^{3/2}) over the whole range and over x <= 0.03.
#include <Eigen/Dense>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <vector>

#include "solver/constants.h"
#include "solver/geometries/axial_integral.h"
#include "solver/geometries/cylinder_plate.h"

using namespace roundtrip;

namespace {
double channel_energy(FieldKind ch, double R, double L, double rel_tol, int* m, int* j) {
  const Spectral s = cylinder::de_integrate(
      [&](double u) {
        u = std::max(u, 1e-3 * rel_tol / 30.0);  // floor as in cylinder_plate.cc kz_floor
        int mm = 0, jj = 0;
        const double v = cylinder_plate_logdet(ch, u / L, R, R + L, DerivativeOrder::kEnergy,
                                               rel_tol, 0, &mm, RoundTripBasis::kAuto, &jj)
                             .value;
        if (std::abs(u - 1.0) < 0.3) *m = std::max(*m, mm), *j = std::max(*j, jj);
        return Spectral{u * v, 0.0, 0.0};
      },
      rel_tol, nullptr, nullptr, 2);
  return kHbarC / (4.0 * kPi * L * L) * s.value;
}

Eigen::VectorXd fit(const std::vector<double>& x, const std::vector<double>& y,
                    const std::vector<double>& powers, double x_max, double* rms) {
  std::vector<int> use;
  for (std::size_t i = 0; i < x.size(); ++i)
    if (x[i] <= x_max) use.push_back(static_cast<int>(i));
  Eigen::MatrixXd A(use.size(), powers.size());
  Eigen::VectorXd b(use.size());
  for (std::size_t r = 0; r < use.size(); ++r) {
    for (std::size_t k = 0; k < powers.size(); ++k) A(r, k) = std::pow(x[use[r]], powers[k]);
    b(r) = y[use[r]];
  }
  const Eigen::VectorXd c = A.colPivHouseholderQr().solve(b);
  *rms = std::sqrt((A * c - b).squaredNorm() / use.size());
  return c;
}
}  // namespace

int main(int argc, char** argv) {
  const double tol = argc > 1 ? std::atof(argv[1]) : 1e-9;
  std::vector<double> xs;
  for (int i = 2; i < argc; ++i) xs.push_back(std::atof(argv[i]));
  if (xs.empty()) xs = {0.001, 0.0018, 0.0032, 0.0056, 0.01, 0.018, 0.032, 0.056, 0.1};
  const double R = 1e-6;
  std::vector<double> yD, yN, yEM;
  std::printf("%8s %7s %5s %12s %12s %12s %8s\n", "L/R", "m_max", "J", "y_D", "y_N", "y_EM",
              "time[s]");
  for (double x : xs) {
    const double L = x * R;
    const auto t0 = std::chrono::steady_clock::now();
    int m = 0, j = 0;
    const double pfa = cylinder_plate_pfa_pec(R, L).energy;
    const double eD = channel_energy(FieldKind::kDirichlet, R, L, tol, &m, &j);
    const double eN = channel_energy(FieldKind::kNeumann, R, L, tol, &m, &j);
    const double dt = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    yD.push_back((eD / (0.5 * pfa) - 1.0) / x);
    yN.push_back((eN / (0.5 * pfa) - 1.0) / x);
    yEM.push_back(((eD + eN) / pfa - 1.0) / x);
    std::printf("%8.4f %7d %5d %12.7f %12.7f %12.7f %8.1f\n", x, m, j, yD.back(), yN.back(),
                yEM.back(), dt);
    std::fflush(stdout);
  }
  const double thD = 7.0 / 36.0, thN = thD - 40.0 / (3.0 * kPi * kPi),
               thEM = thD - 20.0 / (3.0 * kPi * kPi);
  struct Model {
    const char* name;
    std::vector<double> powers;  // of x in y = (E/E_PFA - 1)/x
  };
  const Model models[] = {{"theta + b x + c x^2", {0.0, 1.0, 2.0}},
                          {"theta + a x^1/2 + b x", {0.0, 0.5, 1.0}},
                          {"theta + a x^1/2 + b x + c x^3/2", {0.0, 0.5, 1.0, 1.5}}};
  for (double x_max : {1.0, 0.035}) {
    std::printf("fits over x <= %g:\n", x_max);
    for (const Model& mo : models) {
      double rD, rN, rE;
      const Eigen::VectorXd cD = fit(xs, yD, mo.powers, x_max, &rD);
      const Eigen::VectorXd cN = fit(xs, yN, mo.powers, x_max, &rN);
      const Eigen::VectorXd cE = fit(xs, yEM, mo.powers, x_max, &rE);
      std::printf(
          "  %-32s theta_D %.5f (rms %.1e)  theta_N %.5f (rms %.1e)  theta_EM %.5f (rms %.1e)"
          "  next coeff. EM %.4f\n",
          mo.name, cD(0), rD, cN(0), rN, cE(0), rE, cE(1));
    }
  }
  std::printf("published: theta_D %.5f, theta_N %.5f, theta_EM %.5f\n", thD, thN, thEM);
  return 0;
}
