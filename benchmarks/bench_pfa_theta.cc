// Validation run (not a Google Benchmark): the beyond-PFA coefficient of a perfectly conducting
// sphere over a perfectly conducting plate at T = 0, fitted from exact energies over L/R.
// Published: theta_EM = 1/3 - 20/pi^2 = -1.6931 (Bimonte, Emig, Jaffe, Kardar, EPL 97, 50001
// (2012); Teo, Bordag, Nikolaev, PRD 84, 125037 (2011)); theta_D = 1/3 for the Dirichlet field.
//   ./build/benchmarks/roundtrip_bench_pfa_theta [field=em|dirichlet] [rel_tol] [x1 x2 ...]
// Prints E/E_PFA per gap with timings, then the fit (solver/pfa/theta_fit.h).
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <vector>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/sphere_plate.h"
#include "solver/materials/models.h"
#include "solver/pfa/theta_fit.h"

using namespace roundtrip;

int main(int argc, char** argv) {
  const std::string field = argc > 1 ? argv[1] : "em";
  const double tol = argc > 2 ? std::atof(argv[2]) : 1e-5;
  std::vector<double> xs;
  for (int i = 3; i < argc; ++i) xs.push_back(std::atof(argv[i]));
  if (xs.empty()) xs = {0.1, 0.07, 0.05, 0.035, 0.025, 0.0175};
  const double R = 1e-6;
  SpherePlateOptions o;
  o.radius = R;
  o.rel_tol = tol;
  if (field == "dirichlet") {
    o.field = FieldKind::kDirichlet;
  } else {
    o.sphere = make_perfect_conductor();
    o.plate = make_half_space(o.sphere);
  }
  const auto g = make_sphere_plate(o);
  FrequencyRuleOptions fo;
  fo.rel_tol = tol;
  std::vector<double> ratios;
  std::printf("%8s %6s %6s %14s %12s %8s\n", "L/R", "l_max", "nodes", "E/E_PFA", "(E/E_PFA-1)/x",
              "time[s]");
  for (double x : xs) {
    const double L = x * R;
    const auto t0 = std::chrono::steady_clock::now();
    const auto sum = sum_over_frequencies(
        [&](double xi) { return g->at_frequency(xi, L, DerivativeOrder::kEnergy); },
        g->frequency_scale(L), fo);
    const double dt = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    const double e_pfa =
        -std::pow(kPi, 3) * kHbarC * R / (720 * L * L) * (field == "dirichlet" ? 0.5 : 1.0);
    const double r = sum.total.value / e_pfa;
    ratios.push_back(r);
    const auto tr = g->truncation(L);
    std::printf("%8.4f %6.0f %6.0f %14.8f %12.5f %8.1f\n", x, tr.at("l_max"),
                tr.at("quadrature_nodes"), r, (r - 1) / x, dt);
    std::fflush(stdout);
  }
  const ThetaFit f = fit_theta(xs, ratios, tol);
  const double expected = field == "dirichlet" ? 1.0 / 3.0 : 1.0 / 3.0 - 20.0 / (kPi * kPi);
  std::printf("fit: theta = %.4f +- %.4f (%s, %d points, x in [%.4g, %.4g]); published %.4f\n",
              f.theta, f.uncertainty, f.model.c_str(), f.points, f.x_min, f.x_max, expected);
  return 0;
}
