// Cylinder-plate per unit length (perfect conductors, 300 K, rel_tol 1e-4): wall time of one gap
// at R/L = 1e2 and 1e3 (R = 10 um), E and F. Usage: roundtrip_bench_cylinder_plate [R/L ...]
// Memory: the largest working set is three (M+1)^2 matrices (M the m cut-off, printed).
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <vector>

#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/cylinder_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

int main(int argc, char** argv) {
  using namespace roundtrip;
  std::vector<double> ratios;
  for (int i = 1; i < argc; ++i) ratios.push_back(std::atof(argv[i]));
  if (ratios.empty()) ratios = {1e2, 1e3};
  const double R = 10e-6;
  for (double rl : ratios) {
    CylinderPlateOptions o;
    o.radius = R;
    o.cylinder = make_perfect_conductor();
    o.plate = make_half_space(make_perfect_conductor());
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
                s.total.value, s.terms.size(), M, secs, 3.0 * 8.0 * (M + 1) * (M + 1) / 1e6);
  }
}
