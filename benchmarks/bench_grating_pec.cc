// A perfectly conducting lamellar grating (ridges and substrate perfect conductors; the grooves'
// modal method, solver/scatterers/grating_pec.h) against a perfectly conducting plate at T = 0.
//   scan:     E / E_PFA against period/H at fixed gap L and depth h (H = L + (1 - f) h, the
//             distance from the plate to the profile's mean plane), with
//             E_PFA = f E_pp(L) + (1 - f) E_pp(L + h) (grating PFA, Bao et al., PRL 105, 250402
//             (2010)) and E_pp(x) = -pi^2 hbar c / (720 x^3) (Casimir 1948).
//   exponent: the correction dE = E - E_pp(H) against H at fixed period and depth, and its
//             local exponent p = -d ln|dE| / d ln H between successive H: Emig, Hanke,
//             Golestanian, Kardar, PRL 87, 260402 (2001) report |dE| ~ H^-5 for period >> H
//             (the PFA regime, pairwise-like) and ~ H^-4 for period << H; with dE/dE_PFA, the
//             ratio to the grating PFA's own correction (-> 1 for period >> H).
//   profile:  per Bloch node, the grating's reflection operator alone and the whole node
//             (operator + plate + round trip), one thread, against N; then one frequency
//             (xi = c/2L) of grating-plate at fixed N: Bloch nodes and wall time.
// Usage: roundtrip_bench_grating_pec [scan|exponent|profile] [rel_tol]
#include <fmt/format.h>
#include <omp.h>

#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <tuple>
#include <vector>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/grating_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"
#include "solver/scatterers/grating_pec.h"

using namespace roundtrip;

namespace {

double seconds_since(std::chrono::steady_clock::time_point t0) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

double e_pp(double x) { return -kPi * kPi * kHbar * kSpeedOfLight / (720.0 * x * x * x); }

struct Run {
  double energy;
  int orders;
  double seconds;
};

// E per area (J/m^2) of the grating at gap L against a perfect mirror, orders from the
// convergence study (numerics as a case file sets them, io/kinds/grating_plate.cc).
Run energy(double period, double f, double h, double L, double rel_tol) {
  LamellarGrating g;
  g.period = period;
  g.filling = f;
  g.depth = h;
  g.ridge = g.substrate = make_perfect_conductor();
  GratingPlateOptions o;
  o.bloch_rel_tol = 0.3 * rel_tol;
  o.rel_tol = rel_tol;
  o.max_orders = 32;
  const GratingPlate gp(g, make_half_space(make_perfect_conductor()), nullptr, o);
  FrequencyRuleOptions fo;
  fo.temperature_K = 0.0;
  fo.rel_tol = rel_tol;
  const auto t0 = std::chrono::steady_clock::now();
  const FrequencySum s = sum_over_frequencies(
      [&](double x, double tol) {
        return gp.at_frequency_within(x, L, DerivativeOrder::kEnergy, tol);
      },
      gp.frequency_scale(L), fo);
  return {s.total.value, gp.orders_at(L), seconds_since(t0)};
}

}  // namespace

int main(int argc, char** argv) {
  const std::string mode = argc > 1 ? argv[1] : "scan";
  const double rel_tol = argc > 2 ? std::atof(argv[2]) : 1e-4;
  omp_set_num_threads(2);
  const double f = 0.5;
  if (mode == "scan") {
    const double L = 100e-9, h = 100e-9, H = L + (1 - f) * h;
    std::printf("f = %.2f, L = %.0f nm, h = %.0f nm, H = %.0f nm, rel_tol %.0e\n", f, L * 1e9,
                h * 1e9, H * 1e9, rel_tol);
    std::printf("%10s %10s %14s %10s %10s %4s %8s\n", "period/H", "period/h", "E (J/m^2)",
                "E/E_PFA", "E/E_pp(L)", "N", "time s");
    const double pfa = f * e_pp(L) + (1 - f) * e_pp(L + h);
    for (double ratio : {0.125, 0.5, 2.0, 8.0}) {
      const double period = ratio * H;
      const Run r = energy(period, f, h, L, rel_tol);
      std::printf("%10.3f %10.3f %14.6e %10.6f %10.6f %4d %8.1f\n", ratio, period / h, r.energy,
                  r.energy / pfa, r.energy / e_pp(L), r.orders, r.seconds);
      std::fflush(stdout);
    }
    return 0;
  }
  if (mode == "profile") {
    for (const auto& [period, L, h] :
         {std::tuple{18.75e-9, 100e-9, 100e-9}, std::tuple{400e-9, 200e-9, 200e-9}}) {
      std::printf("period %.2f nm, L = %.0f nm, h = %.0f nm, f = %.2f\n", period * 1e9, L * 1e9,
                  h * 1e9, f);
      std::printf("%4s %14s %14s %8s %10s\n", "N", "R us/node", "node us", "nodes", "xi* wall s");
      const double xi = kSpeedOfLight / (2.0 * L);
      for (int N : {4, 8, 16, 32, 64}) {
        omp_set_num_threads(1);
        const int reps = N <= 16 ? 400 : 40;
        auto t0 = std::chrono::steady_clock::now();
        double sink = 0.0;
        for (int i = 0; i < reps; ++i)
          sink += pec_lamellar_reflection({period, f, h}, xi, 1.0, N, 1e6 + i, 2e6)(0, 0);
        const double t_r = seconds_since(t0) / reps * 1e6;
        LamellarGrating g;
        g.period = period;
        g.filling = f;
        g.depth = h;
        g.ridge = g.substrate = make_perfect_conductor();
        GratingPlateOptions o;
        o.orders = N;
        o.bloch_rel_tol = 1e-6;
        const GratingPlate gp(g, make_half_space(make_perfect_conductor()), nullptr, o);
        t0 = std::chrono::steady_clock::now();
        const double s1 = gp.at_frequency(xi, L, DerivativeOrder::kEnergy).value;
        const double t_f = seconds_since(t0);
        const int nodes = GratingPlate::last_node_count();
        omp_set_num_threads(2);
        t0 = std::chrono::steady_clock::now();
        const double s2 = gp.at_frequency(xi, L, DerivativeOrder::kEnergy).value;
        const double t_f2 = seconds_since(t0);
        std::printf("%4d %14.1f %14.1f %8d %10.3f  (s = %.10e, %s)\n", N, t_r, t_f / nodes * 1e6,
                    nodes, t_f2, s2,
                    s1 == s2 && sink != 0.0 ? "same on 1 and 2 threads" : "DIFFERS");
        std::fflush(stdout);
      }
    }
    return 0;
  }
  if (mode == "exponent") {
    // period << H: 25 nm with a = 10 nm; period >> H: 1500 nm with a = 20 nm (a/H not small
    // there: dE is compared with the PFA's own dE, which holds every order in a/H).
    for (const auto& [period, h, hs] :
         {std::tuple{25e-9, 20e-9, std::vector<double>{150e-9, 300e-9, 600e-9}},
          std::tuple{1500e-9, 40e-9, std::vector<double>{60e-9, 120e-9}}}) {
      std::printf("period %.0f nm, f = %.2f, depth %.0f nm, rel_tol %.0e\n", period * 1e9, f,
                  h * 1e9, rel_tol);
      std::printf("%10s %10s %14s %14s %8s %10s %4s %8s\n", "H (nm)", "period/H", "E",
                  "dE = E-E_pp(H)", "p", "dE/dE_PFA", "N", "time s");
      double prev_h = 0.0, prev_de = 0.0;
      for (double Hm : hs) {
        const double L = Hm - (1 - f) * h;
        const Run r = energy(period, f, h, L, rel_tol);
        const double de = r.energy - e_pp(Hm);
        const double de_pfa = f * e_pp(L) + (1 - f) * e_pp(L + h) - e_pp(Hm);
        std::string p = "-";
        if (prev_h > 0.0)
          p = fmt::format("{:.3f}", -std::log(std::abs(de / prev_de)) / std::log(Hm / prev_h));
        std::printf("%10.0f %10.3f %14.6e %14.6e %8s %10.4f %4d %8.1f\n", Hm * 1e9, period / Hm,
                    r.energy, de, p.c_str(), de / de_pfa, r.orders, r.seconds);
        std::fflush(stdout);
        prev_h = Hm;
        prev_de = de;
      }
    }
    return 0;
  }
  std::fprintf(stderr, "usage: roundtrip_bench_grating_pec [scan|exponent|profile] [rel_tol]\n");
  return 2;
}
