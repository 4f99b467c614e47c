// Two equal gold (Drude) spheres at 300 K: E, F, F' at rel_tol 1e-4 for given R_eff/L
// (R_eff = R/2), L = 100 nm; prints wall time, peak memory (getrusage) and the thread speed-up
// of one frequency. Usage: roundtrip_bench_sphere_sphere [R_eff/L ...]   (default 100 1000)
#include <omp.h>
#include <sys/resource.h>

#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <vector>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/sphere_sphere.h"
#include "solver/materials/models.h"

using namespace roundtrip;

static double seconds_since(std::chrono::steady_clock::time_point t0) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

int main(int argc, char** argv) {
  std::vector<double> ratios;
  for (int i = 1; i < argc; ++i) ratios.push_back(std::atof(argv[i]));
  if (ratios.empty()) ratios = {100.0, 1000.0};
  const double gap = 100e-9;
  // Drude gold, omega_p = 9 eV, gamma = 35 meV (common practice; the built-in gold-drude values)
  const MaterialPtr gold =
      make_drude("gold-drude", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv);
  for (double ratio : ratios) {
    SphereSphereOptions o;
    o.radius1 = o.radius2 = 2.0 * ratio * gap;
    o.sphere1 = o.sphere2 = gold;
    o.rel_tol = 1e-4;
    const auto g = make_sphere_sphere(o);
    // thread speed-up of one frequency (xi = c/2L)
    const double xi = g->frequency_scale(gap);
    double t1 = 0, t2 = 0;
    for (int threads : {1, 2}) {
      omp_set_num_threads(threads);
      const auto t0 = std::chrono::steady_clock::now();
      g->at_frequency(xi, gap, DerivativeOrder::kGradient);
      (threads == 1 ? t1 : t2) = seconds_since(t0);
    }
    omp_set_num_threads(2);
    FrequencyRuleOptions fo;
    fo.temperature_K = 300.0;
    fo.rel_tol = 1e-4;
    const auto t0 = std::chrono::steady_clock::now();
    const FrequencySum sum = sum_over_frequencies(
        [&](double x, double tol) {
          return g->at_frequency_within(x, gap, DerivativeOrder::kGradient, tol);
        },
        g->frequency_scale(gap), fo);
    const double wall = seconds_since(t0);
    const auto pfa = g->pfa(gap, fo);
    rusage ru{};
    getrusage(RUSAGE_SELF, &ru);
    std::printf(
        "R_eff/L = %g (R = %g m, L = %g m): %zu frequencies, %.1f s (2 threads), peak %.0f MiB; "
        "one frequency 1 thread %.2f s, 2 threads %.2f s (x%.2f)\n"
        "  E = %.6e J, F = %.6e N, F' = %.6e N/m; E/E_PFA = %.6f, F/F_PFA = %.6f, "
        "F'/F'_PFA = %.6f\n",
        ratio, o.radius1, gap, sum.terms.size(), wall, ru.ru_maxrss / 1024.0, t1, t2, t1 / t2,
        sum.total.value, -sum.total.d1, -sum.total.d2, sum.total.value / pfa->energy,
        -sum.total.d1 / pfa->force, -sum.total.d2 / pfa->gradient);
    std::fflush(stdout);
  }
}
