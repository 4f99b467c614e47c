// How long does a 100-separation gold plate-plate sweep take?
// Drude gold (omega_p = 9 eV, gamma = 35 meV; common practice, Svetovoy et al.,
// PRB 77, 035439 (2008)), gaps
// 50 nm - 5 um log-spaced, rel_tol 1e-6, energy + force + gradient, at 300 K and at T = 0.
// Run: build/benchmarks/roundtrip_bench_plate_sweep --benchmark_min_time=2
// Measured 2026-12-01 (2 cores, Release, mean of 3): 300 K 106 ms (1 thread), 55 ms (2 threads),
// 4351 Matsubara terms in all; T = 0 261 ms and 136 ms, 10332 quadrature nodes in all.
#include <benchmark/benchmark.h>

#include <cmath>
#include <vector>

#include "solver/constants.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"
#include "solver/run.h"

namespace {

using namespace roundtrip;

std::vector<double> sweep_gaps() {
  std::vector<double> g(100);
  for (int i = 0; i < 100; ++i) g[i] = 50e-9 * std::pow(100.0, i / 99.0);
  return g;
}

void BM_GoldPlateSweep(benchmark::State& state) {
  const double temperature = static_cast<double>(state.range(0));
  const int threads = static_cast<int>(state.range(1));
  auto gold = make_half_space(
      make_drude("gold-drude", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv));
  auto geometry = make_plate_plate(gold, gold, nullptr);
  RunOptions o;
  o.frequency.temperature_K = temperature;
  o.frequency.rel_tol = 1e-6;
  o.quantities.gradient = true;
  o.threads = threads;
  const std::vector<double> gaps = sweep_gaps();
  std::size_t frequencies = 0;
  for (auto _ : state) {
    const RunResult r = run_sweep(*geometry, gaps, o);
    frequencies = 0;
    for (const auto& p : r.points) frequencies += p.frequencies.terms.size();
    benchmark::DoNotOptimize(r.points.back().energy);
  }
  state.counters["gaps"] = static_cast<double>(gaps.size());
  state.counters["frequencies"] = static_cast<double>(frequencies);
  // Wall seconds per gap (shown with an SI prefix, e.g. 2.5m = 2.5 ms).
  state.counters["s_per_gap"] = benchmark::Counter(
      static_cast<double>(gaps.size()),
      benchmark::Counter::kIsIterationInvariantRate | benchmark::Counter::kInvert);
}

}  // namespace

BENCHMARK(BM_GoldPlateSweep)
    ->ArgNames({"T_K", "threads"})
    ->Args({300, 1})
    ->Args({300, 2})
    ->Args({0, 1})
    ->Args({0, 2})
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime();

BENCHMARK_MAIN();
