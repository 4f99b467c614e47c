// Per-frequency cost of the daily sweep (issue 17): a gold sphere over gold, Drude and plasma,
// E, F, F' at rel_tol 1e-4, at one gap: CPU time of s(xi) at xi = 0 and at the first few
// Matsubara frequencies of 300 K, per material. Shows where a scan point's time goes (the
// n = 0 term against the others) and how much Drude and plasma cost apart.
//   ./build/benchmarks/roundtrip_bench_sweep_terms [R_um] [L_nm] [n_terms] [rel_tol]
// Defaults: R = 150 um, L = 150 nm, 4 terms (n = 0 ... 3), rel_tol 1e-4. Threads: OpenMP
// default (OMP_NUM_THREADS); CPU time is over all threads.
#include <omp.h>

#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <ctime>

#include "solver/constants.h"
#include "solver/geometries/sphere_plate.h"
#include "solver/materials/library.h"
#include "solver/planar/planar.h"

using namespace roundtrip;

namespace {
double cpu_seconds() {
  timespec t;
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
  return t.tv_sec + 1e-9 * t.tv_nsec;
}
}  // namespace

int main(int argc, char** argv) {
  const double radius = (argc > 1 ? std::atof(argv[1]) : 150.0) * 1e-6;
  const double gap = (argc > 2 ? std::atof(argv[2]) : 150.0) * 1e-9;
  const int terms = argc > 3 ? std::atoi(argv[3]) : 4;
  const double tol = argc > 4 ? std::atof(argv[4]) : 1e-4;
  // Matsubara frequencies xi_n = 2 pi n k_B T / hbar at 300 K (common practice).
  const double xi1 = 2.0 * kPi * kBoltzmann * 300.0 / kHbar;
  std::printf("R = %g um, L = %g nm (R/L = %.0f), rel_tol %g, %d threads\n", radius * 1e6,
              gap * 1e9, radius / gap, tol, omp_get_max_threads());
  std::printf("%-12s %4s %12s %10s %10s %14s\n", "material", "n", "xi[rad/s]", "wall[s]", "cpu[s]",
              "s");
  for (const char* name : {"gold-drude", "gold-plasma"}) {
    SpherePlateOptions o;
    o.radius = radius;
    o.sphere = builtin_material(name);
    o.plate = make_half_space(o.sphere);
    o.rel_tol = tol;
    const auto g = make_sphere_plate(o);
    for (int n = 0; n < terms; ++n) {
      const double xi = n * xi1;
      const auto t0 = std::chrono::steady_clock::now();
      const double c0 = cpu_seconds();
      const Spectral s = g->at_frequency(xi, gap, DerivativeOrder::kGradient);
      const double wall =
          std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
      std::printf("%-12s %4d %12.4e %10.3f %10.3f %14.8g\n", name, n, xi, wall, cpu_seconds() - c0,
                  s.value);
      std::fflush(stdout);
    }
  }
  return 0;
}
