// Evaluations of s(xi) the T = 0 frequency rule needs, and its accuracy, against the exp-sinh
// rule it replaced (zero_temperature_exp_sinh_rule). The cost of a sphere-plate energy at large
// R/L is the number of evaluations, so this counts them (no timing).
//   ./build/benchmarks/roundtrip_bench_t0_rule [rel_tol ...]       (default 1e-4 1e-7)
// Cases: perfect-mirror plates (Casimir 1948 closed form), Drude gold plates at 100 nm and 1 um,
// the PFA sphere-plate mirror model s ~ Li_3(e^-u) (integral zeta(4)), PEC and Drude gold
// sphere-plate at R/L = 10 and 50 (reference: the new rule at 1e-11 on the same s).
#include <fmt/format.h>

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <functional>
#include <map>
#include <memory>
#include <string>
#include <vector>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/plate_plate.h"
#include "solver/geometries/sphere_plate.h"
#include "solver/materials/models.h"
#include "solver/special/polylog.h"

using namespace roundtrip;

namespace {

struct Case {
  std::string name;
  SpectralFunction s;
  double xi_scale;
  Spectral exact;  // if known (value != 0), else the reference is computed
};

double worst_error(const Spectral& a, const Spectral& ref) {
  double w = 0.0;
  const double x[3] = {a.value, a.d1, a.d2}, r[3] = {ref.value, ref.d1, ref.d2};
  for (int c = 0; c < 3; ++c)
    if (r[c] != 0.0) w = std::max(w, std::abs(x[c] / r[c] - 1.0));
  return w;
}

}  // namespace

int main(int argc, char** argv) {
  std::vector<double> tols;
  for (int i = 1; i < argc; ++i) tols.push_back(std::atof(argv[i]));
  if (tols.empty()) tols = {1e-4, 1e-7};
  const auto pec = make_perfect_conductor();
  const auto gold = make_drude("gold-drude", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv);
  std::vector<Case> cases;
  const double L = 100e-9;
  {
    auto pp = std::make_shared<PlatePlate>(make_half_space(pec), make_half_space(pec), nullptr);
    // E/A = -pi^2 hbar c / (720 L^3) (Casimir 1948); d/dL: -3E/L, 12E/L^2.
    const double e = -kPi * kPi * kHbarC / (720.0 * L * L * L);
    cases.push_back(
        {"PEC plates 100 nm",
         [pp, L](double xi) { return pp->at_frequency(xi, L, DerivativeOrder::kGradient); },
         pp->frequency_scale(L),
         {e, -3.0 * e / L, 12.0 * e / (L * L)}});
  }
  for (double gap : {100e-9, 1e-6}) {
    auto pp = std::make_shared<PlatePlate>(make_half_space(gold), make_half_space(gold), nullptr);
    cases.push_back({"", nullptr, 0, {}});
    cases.back().name = gap < 5e-7 ? "Drude plates 100 nm" : "Drude plates 1 um";
    cases.back().s = [pp, gap](double xi) {
      return pp->at_frequency(xi, gap, DerivativeOrder::kGradient);
    };
    cases.back().xi_scale = pp->frequency_scale(gap);
  }
  {
    // PFA model: s = Li_3(e^-u) (value), with d1, d2 set to the plate model G, a G' - 2 G.
    const double z4 = kPi * kPi * kPi * kPi / 90.0;
    cases.push_back({"PFA model Li3",
                     [](double u) {
                       const double x = std::exp(-u);
                       const double g = u * special::dilog(x) + special::trilog(x);
                       const double g1 = u == 0.0 ? 0.0 : u * std::log(-std::expm1(-u));
                       return Spectral{special::trilog(x), g, u * g1 - 2.0 * g};
                     },
                     1.0,
                     {z4 * 2.0 / (kHbar), 0, 0}});
    cases.back().exact = {};  // closed forms are in tests; here the reference is computed
  }
  for (int drude = 0; drude < 2; ++drude)
    for (double ratio : {10.0, 50.0}) {
      SpherePlateOptions o;
      o.radius = ratio * L;
      o.sphere = drude ? gold : pec;
      o.plate = make_half_space(o.sphere);
      o.rel_tol = 1e-9;
      auto g = std::shared_ptr<Geometry>(make_sphere_plate(o));
      auto cache = std::make_shared<std::map<double, Spectral>>();
      cases.push_back({fmt::format("{} sphere-plate R/L={:g}", drude ? "Drude" : "PEC", ratio),
                       [g, cache, L](double xi) {
                         auto it = cache->find(xi);
                         if (it != cache->end()) return it->second;
                         return (*cache)[xi] = g->at_frequency(xi, L, DerivativeOrder::kGradient);
                       },
                       g->frequency_scale(L),
                       {}});
    }
  std::printf("%-26s %8s %6s %10s %6s %10s %10s\n", "case", "rel_tol", "old n", "old err", "new n",
              "new err", "new est");
  for (auto& c : cases) {
    for (bool energy_only : {false, true}) {
      int count = 0;
      const SpectralFunction counted = [&](double xi) {
        ++count;
        Spectral v = c.s(xi);
        if (energy_only) v.d1 = v.d2 = 0.0;
        return v;
      };
      Spectral ref = c.exact;
      if (ref.value == 0.0) {
        FrequencyRuleOptions o;
        o.rel_tol = 1e-11;
        ref = sum_over_frequencies(c.s, c.xi_scale, o).total;
      }
      if (energy_only) ref.d1 = ref.d2 = 0.0;
      for (double tol : tols) {
        FrequencyRuleOptions o;
        o.rel_tol = tol;
        count = 0;
        const FrequencySum a = zero_temperature_exp_sinh_rule(counted, c.xi_scale, o);
        const int n_old = count;
        count = 0;
        const FrequencySum b = sum_over_frequencies(counted, c.xi_scale, o);
        const int n_new = count;
        std::printf("%-26s %2s %8.0e %6d %10.2e %6d %10.2e %10.2e%s\n", c.name.c_str(),
                    energy_only ? "E" : "EF", tol, n_old, worst_error(a.total, ref), n_new,
                    worst_error(b.total, ref), b.abs_error / std::abs(b.total.value),
                    b.converged ? "" : " (not converged)");
        std::fflush(stdout);
      }
    }
  }
}
