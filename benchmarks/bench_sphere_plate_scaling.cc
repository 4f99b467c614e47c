// Scaling study (timing harness, not Google Benchmark): one imaginary frequency xi = c/(2L) of a
// Drude-gold sphere over a Drude-gold plate with force and gradient, against R/L, each R/L in a
// child process of its own so that its peak resident memory (wait4 rusage) is its own. Then the
// speed-up from 1 to 2 threads at one R/L. Prints a table, the fitted exponents of time and
// memory ~ (R/L)^p (R/L >= 50), and optionally writes them as CSV for
// benchmarks/plot_scaling.py.
//   ./build/benchmarks/roundtrip_bench_sphere_plate_scaling [max_R_over_L] [--tol T]
//       [--csv FILE] [--threads-at R_OVER_L]
// Defaults: max 200, tol 1e-4, thread speed-up at the largest R/L <= 1000.
#include <omp.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <string>
#include <vector>

#include "solver/constants.h"
#include "solver/geometries/sphere_plate.h"
#include "solver/materials/models.h"

using namespace roundtrip;

namespace {

constexpr double kRadius = 20e-6;

struct Point {
  double ratio = 0, seconds = 0, peak_mib = 0, l_max = 0, nodes = 0;
  int threads = 0;
  bool ok = false;
};

// Runs one frequency at R/L = ratio with `threads` threads in a child process.
Point measure(double ratio, double tol, int threads) {
  Point p;
  p.ratio = ratio;
  p.threads = threads;
  int fd[2];
  if (pipe(fd) != 0) return p;
  const pid_t pid = fork();
  if (pid == 0) {
    close(fd[0]);
    omp_set_num_threads(threads);
    SpherePlateOptions o;
    o.radius = kRadius;
    o.sphere = make_drude("gold-drude", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv);
    o.plate = make_half_space(o.sphere);
    o.rel_tol = tol;
    const auto g = make_sphere_plate(o);
    const double gap = kRadius / ratio;
    const auto t0 = std::chrono::steady_clock::now();
    const Spectral s = g->at_frequency(kSpeedOfLight / (2 * gap), gap, DerivativeOrder::kGradient);
    double out[3] = {std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count(),
                     g->truncation(gap).at("l_max"), g->truncation(gap).at("quadrature_nodes")};
    if (!std::isfinite(s.d2)) out[0] = -1.0;
    if (write(fd[1], out, sizeof out) != static_cast<ssize_t>(sizeof out)) _exit(2);
    _exit(0);
  }
  close(fd[1]);
  double in[3] = {-1, 0, 0};
  const bool got = read(fd[0], in, sizeof in) == static_cast<ssize_t>(sizeof in);
  close(fd[0]);
  int status = 0;
  rusage u{};
  wait4(pid, &status, 0, &u);
  p.ok = got && WIFEXITED(status) && WEXITSTATUS(status) == 0 && in[0] >= 0;
  p.seconds = in[0];
  p.l_max = in[1];
  p.nodes = in[2];
  p.peak_mib = u.ru_maxrss / 1024.0;
  return p;
}

double slope(const std::vector<Point>& pts, double Point::*y) {
  double n = 0, sx = 0, sy = 0, sxx = 0, sxy = 0;
  for (const auto& p : pts) {
    if (!p.ok || p.ratio < 50) continue;
    const double lx = std::log(p.ratio), ly = std::log(p.*y);
    n += 1, sx += lx, sy += ly, sxx += lx * lx, sxy += lx * ly;
  }
  return n >= 2 ? (n * sxy - sx * sy) / (n * sxx - sx * sx) : NAN;
}

}  // namespace

int main(int argc, char** argv) {
  double max_ratio = 200.0, tol = 1e-4, threads_at = 0.0;
  std::string csv;
  for (int i = 1; i < argc; ++i) {
    if (!std::strcmp(argv[i], "--tol") && i + 1 < argc) {
      tol = std::atof(argv[++i]);
    } else if (!std::strcmp(argv[i], "--csv") && i + 1 < argc) {
      csv = argv[++i];
    } else if (!std::strcmp(argv[i], "--threads-at") && i + 1 < argc) {
      threads_at = std::atof(argv[++i]);
    } else {
      max_ratio = std::atof(argv[i]);
    }
  }
  const int threads = omp_get_max_threads();
  std::printf(
      "one frequency xi = c/2L, Drude gold sphere-plate, E, F, F', rel_tol %g, %d threads\n", tol,
      threads);
  std::printf("%8s %7s %6s %10s %10s\n", "R/L", "l_max", "nodes", "time[s]", "peak[MiB]");
  std::vector<Point> pts;
  for (double ratio : {10.0, 20.0, 50.0, 100.0, 200.0, 500.0, 1000.0, 2000.0, 5000.0, 10000.0}) {
    if (ratio > max_ratio) break;
    const Point p = measure(ratio, tol, threads);
    pts.push_back(p);
    if (!p.ok) {
      std::printf("%8.0f  failed\n", ratio);
      continue;
    }
    std::printf("%8.0f %7.0f %6.0f %10.3f %10.1f\n", ratio, p.l_max, p.nodes, p.seconds,
                p.peak_mib);
    std::fflush(stdout);
  }
  const double t_exp = slope(pts, &Point::seconds), m_exp = slope(pts, &Point::peak_mib);
  std::printf("fitted exponents (R/L >= 50): time ~ (R/L)^%.2f, peak memory ~ (R/L)^%.2f\n", t_exp,
              m_exp);
  if (threads_at <= 0.0)
    for (const auto& p : pts)
      if (p.ok && p.ratio <= 1000.0) threads_at = p.ratio;
  Point one, two;
  if (threads_at > 0.0) {
    one = measure(threads_at, tol, 1);
    two = measure(threads_at, tol, 2);
    std::printf("R/L = %.0f: 1 thread %.3f s, 2 threads %.3f s, speed-up %.2f\n", threads_at,
                one.seconds, two.seconds, one.seconds / two.seconds);
  }
  if (!csv.empty()) {
    FILE* f = std::fopen(csv.c_str(), "w");
    if (!f) {
      std::fprintf(stderr, "cannot write %s\n", csv.c_str());
      return 1;
    }
    std::fprintf(f, "# rel_tol %g; threads %d; time exponent %.3f; memory exponent %.3f\n", tol,
                 threads, t_exp, m_exp);
    std::fprintf(f, "study,R_over_L,l_max,nodes,threads,seconds,peak_MiB\n");
    for (const auto& p : pts)
      if (p.ok)
        std::fprintf(f, "scaling,%g,%g,%g,%d,%.6g,%.6g\n", p.ratio, p.l_max, p.nodes, p.threads,
                     p.seconds, p.peak_mib);
    for (const auto* p : {&one, &two})
      if (p->ok)
        std::fprintf(f, "threads,%g,%g,%g,%d,%.6g,%.6g\n", p->ratio, p->l_max, p->nodes, p->threads,
                     p->seconds, p->peak_mib);
    std::fclose(f);
  }
  return 0;
}
