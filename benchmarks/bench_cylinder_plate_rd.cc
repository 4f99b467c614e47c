// Speed of the cylinder-plate geometry at large R/d (issue 14): a Drude gold cylinder over a
// Drude gold plate (omega_p = 9 eV, gamma = 35 meV; common practice, Bordag, Mohideen,
// Mostepanenko, Phys. Rep. 353, 1 (2001)) in vacuum, T = 300 K, rel_tol 1e-4, energy and force
// per unit length, d = 1 um, R = (R/d) d.
//   ./build/benchmarks/roundtrip_bench_cylinder_plate_rd [basis=auto|orders|waves] [R/d ...]
// Default R/d = 1e2 and 1e3 with the automatic basis. Prints per R/d: E/l, F/l, the number of
// frequencies, k_z nodes (summed over frequencies), the largest order cut-off m_max and plane-wave
// node count J met, wall and CPU time of this process, its peak resident memory and the load
// average (/proc/loadavg) before and after.
#include <sys/resource.h>

#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <ctime>
#include <fstream>
#include <string>
#include <vector>

#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/cylinder_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace {
std::string load() {
  std::ifstream f("/proc/loadavg");
  std::string a, b, c;
  f >> a >> b >> c;
  return a + " " + b + " " + c;
}
double cpu_seconds() {
  rusage u{};
  getrusage(RUSAGE_SELF, &u);
  return u.ru_utime.tv_sec + u.ru_stime.tv_sec + 1e-6 * (u.ru_utime.tv_usec + u.ru_stime.tv_usec);
}
double peak_mb() {
  rusage u{};
  getrusage(RUSAGE_SELF, &u);
  return u.ru_maxrss / 1024.0;  // Linux: kilobytes
}
}  // namespace

int main(int argc, char** argv) {
  using namespace roundtrip;
  RoundTripBasis basis = RoundTripBasis::kAuto;
  std::vector<double> ratios;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    if (a == "orders")
      basis = RoundTripBasis::kOrders;
    else if (a == "waves")
      basis = RoundTripBasis::kPlaneWaves;
    else if (a != "auto")
      ratios.push_back(std::atof(argv[i]));
  }
  if (ratios.empty()) ratios = {1e2, 1e3};
  const double ev = 1.519267447e15;  // rad/s per eV
  const double d = 1e-6;
  const MaterialPtr gold = make_drude("gold-drude", 9.0 * ev, 0.035 * ev);
  for (double rd : ratios) {
    CylinderPlateOptions o;
    o.radius = rd * d;
    o.cylinder = gold;
    o.plate = make_half_space(gold);
    o.rel_tol = 1e-4;
    o.basis = basis;
    o.counters = std::make_shared<CylinderPlateCounters>();
    const auto g = make_cylinder_plate(o);
    FrequencyRuleOptions opts;
    opts.temperature_K = 300.0;
    opts.rel_tol = 1e-4;
    const std::string load0 = load();
    const double c0 = cpu_seconds();
    const auto t0 = std::chrono::steady_clock::now();
    const FrequencySum s = sum_over_frequencies(
        [&](double xi) { return g->at_frequency(xi, d, DerivativeOrder::kForce); },
        g->frequency_scale(d), opts);
    const double wall =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    const double cpu = cpu_seconds() - c0;
    std::printf(
        "R/d = %g (R = %g m, d = %g m): E/l = %.6e J/m, F/l = %.6e N/m, converged %d\n"
        "  %zu frequencies, %ld k_z nodes, m_max %d, J %d\n"
        "  wall %.1f s, CPU %.1f s, peak RSS %.1f MB, load %s -> %s\n",
        rd, o.radius, d, s.total.value, -s.total.d1, int(s.converged), s.terms.size(),
        o.counters->kz_nodes.load(), o.counters->m_max.load(), o.counters->plane_wave_nodes.load(),
        wall, cpu, peak_mb(), load0.c_str(), load().c_str());
    std::fflush(stdout);
  }
  return 0;
}
