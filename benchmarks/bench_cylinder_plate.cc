// Cylinder-plate per unit length (300 K, rel_tol 1e-4): wall time of one gap, E and F, R = 10 um.
// Usage: roundtrip_bench_cylinder_plate [gold] [R/L ...]   (default: perfect conductors at R/L =
// 1e2 and 1e3; "gold": Drude gold cylinder over a Drude gold plate, omega_p = 9 eV, gamma = 35
// meV, through the vector path, default R/L = 5 and 10).
// Memory: the scalar path holds three (M+1)^2 matrices, the vector path three (2M+1)^2 per
// parity block (M the m cut-off at p = 1/2L, printed).
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <vector>

#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/cylinder_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

int main(int argc, char** argv) {
  using namespace roundtrip;
  std::vector<double> ratios;
  bool gold = false;
  for (int i = 1; i < argc; ++i) {
    if (std::string(argv[i]) == "gold")
      gold = true;
    else
      ratios.push_back(std::atof(argv[i]));
  }
  if (ratios.empty()) ratios = gold ? std::vector<double>{5, 10} : std::vector<double>{1e2, 1e3};
  const double ev = 1.519267447e15;  // rad/s per eV
  const double R = 10e-6;
  for (double rl : ratios) {
    CylinderPlateOptions o;
    o.radius = R;
    const MaterialPtr m =
        gold ? make_drude("gold-drude", 9.0 * ev, 0.035 * ev) : make_perfect_conductor();
    o.cylinder = m;
    o.plate = make_half_space(m);
    o.rel_tol = 1e-4;
    const auto g = make_cylinder_plate(o);
    const double L = R / rl;
    FrequencyRuleOptions opts;
    opts.temperature_K = 300.0;
    opts.rel_tol = 1e-4;
    const auto t0 = std::chrono::steady_clock::now();
    const FrequencySum s = sum_over_frequencies(
        [&](double xi) { return g->at_frequency(xi, L, DerivativeOrder::kForce); },
        g->frequency_scale(L), opts);
    const double secs =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    const double M = g->truncation(L).at("m_max");
    std::printf("R/L = %g: E/l = %.6e J/m, %zu frequencies, m_max %.0f, %.1f s, ~%.1f MB\n", rl,
                s.total.value, s.terms.size(), M, secs,
                3.0 * 8.0 * (gold ? (2 * M + 1) * (2 * M + 1) : (M + 1) * (M + 1)) / 1e6);
  }
}
