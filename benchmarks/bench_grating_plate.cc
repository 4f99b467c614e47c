// Lamellar silicon grating (period 400 nm, filling 0.5, depth 200 nm) below a gold (Drude) plate
// at 300 K, gap 200 nm, rel_tol 1e-4: E and F with wall time, frequencies and time per
// frequency; then the cost of one frequency (xi = c/2L, E and F) against the order count N.
// Usage: roundtrip_bench_grating_plate [N ...]   (default: automatic N, then 4 8 11 16 23)
#include <fmt/format.h>
#include <omp.h>

#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <vector>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/grating_plate.h"
#include "solver/materials/library.h"
#include "solver/planar/planar.h"

using namespace roundtrip;

static double seconds_since(std::chrono::steady_clock::time_point t0) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

int main(int argc, char** argv) {
  std::vector<int> orders;
  for (int i = 1; i < argc; ++i) orders.push_back(std::atoi(argv[i]));
  if (orders.empty()) orders = {4, 8, 11, 16, 23};
  const double gap = 200e-9, rel_tol = 1e-4;
  LamellarGrating g;
  g.period = 400e-9;
  g.filling = 0.5;
  g.depth = 200e-9;
  g.ridge = g.substrate = builtin_material("silicon");
  const PlanarPtr plate = make_half_space(builtin_material("gold-drude"));
  FrequencyRuleOptions fo;
  fo.temperature_K = 300.0;
  fo.rel_tol = rel_tol;
  omp_set_num_threads(2);
  {
    GratingPlateOptions o;
    o.bloch_rel_tol = 0.3 * rel_tol;  // as the case file sets it (io/kinds/grating_plate.cc)
    o.rel_tol = rel_tol;
    const GratingPlate gp(g, plate, nullptr, o);
    const auto t0 = std::chrono::steady_clock::now();
    const GratingStudy st = gp.study(gap);
    const double t_study = seconds_since(t0);
    std::printf("order study at xi* = c/2L (%.2f s):", t_study);
    for (const auto& [N, v] : st.levels) std::printf(" N = %d: %.8e;", N, v);
    std::printf(
        "\n  chosen N = %d%s, rate N^-%.3f, estimated error %.2e, verified %d\n", st.orders,
        st.orders_low > 0 ? fmt::format(" with N = {} (Richardson)", st.orders_low).c_str() : "",
        st.rate, st.error, st.verified);
    const FrequencySum sum = sum_over_frequencies(
        [&](double x, double tol) {
          return gp.at_frequency_within(x, gap, DerivativeOrder::kForce, tol);
        },
        gp.frequency_scale(gap), fo);
    const double wall = seconds_since(t0);
    const auto pfa = gp.pfa(gap, fo);
    std::printf(
        "grating-plate 300 K, L = 200 nm, period 400 nm, N = %d (automatic): E = %.6e J/m^2, "
        "P = %.6e Pa, E/E_PFA = %.4f; %zu frequencies, %.2f s on 2 threads (study included), "
        "%.3f s per frequency after the study\n",
        gp.orders_at(gap), sum.total.value, -sum.total.d1, sum.total.value / pfa->energy,
        sum.terms.size(), wall, (wall - t_study) / sum.terms.size());
  }
  const double xi = kSpeedOfLight / (2.0 * gap);
  double prev = 0.0;
  for (int N : orders) {
    GratingPlateOptions o;
    o.orders = N;
    o.bloch_rel_tol = 0.3 * rel_tol;
    const GratingPlate gp(g, plate, nullptr, o);
    const auto t0 = std::chrono::steady_clock::now();
    const Spectral s = gp.at_frequency(xi, gap, DerivativeOrder::kForce);
    const double wall = seconds_since(t0);
    const int nodes = GratingPlate::last_node_count();
    std::printf("N = %3d: s(c/2L) = %.8e, change %.2e, %d Bloch nodes, %.3f s (%.2f ms per node)\n",
                N, s.value, prev != 0.0 ? std::abs(s.value / prev - 1.0) : 0.0, nodes, wall,
                1e3 * wall / nodes);
    prev = s.value;
  }
  return 0;
}
