// The n = 0 (xi = 0) term of a Drude sphere over a Drude plate against the closed form of
// Bimonte & Emig, PRL 109, 160403 (2012), in bispherical coordinates (cosh mu = 1 + L/R,
// Z = e^-mu):
//   F_0/k_BT = 1/2 sum_{n>=0} (2n+1) ln(1 - Z^{2n+1}) + 1/2 ln(sinh mu sum_{n>=1} 1/sinh(n mu)).
// Timing harness: wall time and relative error per R/L.
//   ./build/benchmarks/roundtrip_bench_static_term [rel_tol] [R/L ...]
// Defaults: rel_tol 1e-10 (gives ~1e-8 and better), R/L = 10 100 300 1000.
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <vector>

#include "solver/constants.h"
#include "solver/geometries/sphere_plate.h"
#include "solver/materials/models.h"

using namespace roundtrip;

namespace {
double closed_form(double l_over_r) {
  const double mu = std::acosh(1 + l_over_r), Z = std::exp(-mu);
  double s = 0, c = 0;
  for (long n = 0;; ++n) {
    const double t = (2 * n + 1) * std::log1p(-std::pow(Z, 2 * n + 1));
    s += t;
    if (std::abs(t) < 1e-19 * std::abs(s)) break;
  }
  for (long n = 1;; ++n) {
    const double t = 1 / std::sinh(n * mu);
    c += t;
    if (t < 1e-19 * c) break;
  }
  return 0.5 * s + 0.5 * std::log(std::sinh(mu) * c);
}
}  // namespace

int main(int argc, char** argv) {
  const double tol = argc > 1 ? std::atof(argv[1]) : 1e-10;
  std::vector<double> ratios;
  for (int i = 2; i < argc; ++i) ratios.push_back(std::atof(argv[i]));
  if (ratios.empty()) ratios = {10, 100, 300, 1000};
  SpherePlateOptions o;
  o.radius = 50e-6;
  o.sphere = make_drude("gold-drude", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv);
  o.plate = make_half_space(o.sphere);
  o.rel_tol = tol;
  const auto g = make_sphere_plate(o);
  std::printf("n = 0 term, Drude sphere over Drude plate, rel_tol %g\n", tol);
  std::printf("%8s %22s %22s %10s %9s\n", "R/L", "F0/kT (roundtrip)", "F0/kT (closed form)",
              "rel.error", "time[s]");
  for (double ratio : ratios) {
    const double gap = o.radius / ratio;
    const auto t0 = std::chrono::steady_clock::now();
    const double f = 0.5 * g->at_frequency(0.0, gap, DerivativeOrder::kEnergy).value;
    const double dt = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    const double exact = closed_form(1.0 / ratio);
    std::printf("%8.0f %22.15g %22.15g %10.2e %9.2f\n", ratio, f, exact, f / exact - 1, dt);
    std::fflush(stdout);
  }
  return 0;
}
