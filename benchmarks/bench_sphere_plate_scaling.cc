// Scaling study (timing harness, not Google Benchmark): one imaginary frequency xi = c/(2L) of a
// Drude-gold sphere over a Drude-gold plate with force and gradient, rel_tol 1e-4, against R/L;
// then the speed-up from 1 to 2 threads at the largest R/L. Prints wall time, peak resident
// memory (getrusage; monotone, so read it as "peak so far"), l_max and nodes, and the fitted
// exponent of time ~ (R/L)^p. Optional argument: the largest R/L (default 200).
//   ./build/benchmarks/roundtrip_bench_sphere_plate_scaling [max_R_over_L]
#include <omp.h>
#include <sys/resource.h>

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
double peak_mib() {
  rusage u{};
  getrusage(RUSAGE_SELF, &u);
  return u.ru_maxrss / 1024.0;
}
double time_one(const Geometry& g, double gap) {
  const auto t0 = std::chrono::steady_clock::now();
  const Spectral s = g.at_frequency(kSpeedOfLight / (2 * gap), gap, DerivativeOrder::kGradient);
  if (!std::isfinite(s.d2)) std::printf("non-finite result\n");
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}
}  // namespace

int main(int argc, char** argv) {
  const double max_ratio = argc > 1 ? std::atof(argv[1]) : 200.0;
  const double R = 20e-6;
  SpherePlateOptions o;
  o.radius = R;
  o.sphere = make_drude("gold-drude", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv);
  o.plate = make_half_space(o.sphere);
  o.rel_tol = 1e-4;
  const auto g = make_sphere_plate(o);
  std::printf("%8s %6s %6s %10s %10s   (threads: %d)\n", "R/L", "l_max", "nodes", "time[s]",
              "peak[MiB]", omp_get_max_threads());
  std::vector<double> lx, ly;
  double last_gap = 0;
  for (double ratio : {10.0, 20.0, 50.0, 100.0, 200.0, 500.0, 1000.0}) {
    if (ratio > max_ratio) break;
    const double gap = R / ratio;
    const double t = time_one(*g, gap);
    const auto tr = g->truncation(gap);
    std::printf("%8.0f %6.0f %6.0f %10.3f %10.1f\n", ratio, tr.at("l_max"),
                tr.at("quadrature_nodes"), t, peak_mib());
    std::fflush(stdout);
    if (ratio >= 50) {
      lx.push_back(std::log(ratio));
      ly.push_back(std::log(t));
    }
    last_gap = gap;
  }
  if (lx.size() >= 2) {
    const double n = lx.size();
    double sx = 0, sy = 0, sxx = 0, sxy = 0;
    for (std::size_t i = 0; i < lx.size(); ++i) {
      sx += lx[i];
      sy += ly[i];
      sxx += lx[i] * lx[i];
      sxy += lx[i] * ly[i];
    }
    std::printf("fitted exponent (R/L >= 50): time ~ (R/L)^%.2f\n",
                (n * sxy - sx * sy) / (n * sxx - sx * sx));
  }
  omp_set_num_threads(1);
  const double t1 = time_one(*g, last_gap);
  omp_set_num_threads(2);
  const double t2 = time_one(*g, last_gap);
  std::printf("R/L = %.0f: 1 thread %.3f s, 2 threads %.3f s, speed-up %.2f\n", R / last_gap, t1,
              t2, t1 / t2);
  return 0;
}
