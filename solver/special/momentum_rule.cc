#include "solver/special/momentum_rule.h"

#include <boost/math/quadrature/gauss.hpp>
#include <cmath>
#include <map>
#include <memory>
#include <mutex>
#include <utility>

namespace roundtrip::special {
namespace {

constexpr int kPanelOrder = 10;  // Gauss-Legendre points per panel

std::unique_ptr<GaussLaguerreRule> build(int max_degree, int nodes_per_unit) {
  // Bumps of t^p e^{-t}: in u the peak is at sqrt(p + 1/2) with width 1/sqrt(2); 8 widths
  // past the largest peak the integrand is down by e^{-64}.
  const double umax = std::sqrt(max_degree + 0.5) + 8.0;
  const double panel = double(kPanelOrder) / nodes_per_unit;
  const int panels = static_cast<int>(std::ceil(umax / panel));
  using GL = boost::math::quadrature::gauss<double, kPanelOrder>;
  const auto& x = GL::abscissa();
  const auto& w = GL::weights();
  auto rule = std::make_unique<GaussLaguerreRule>();
  for (int p = 0; p < panels; ++p) {
    const double a = p * panel, half = 0.5 * panel, mid = a + half;
    auto add = [&](double xi, double wi) {
      const double u = mid + half * xi;
      rule->nodes.push_back(u * u);
      // dt e^{-t} = 2u e^{-u^2} du
      rule->log_weights.push_back(std::log(wi * half * 2.0 * u) - u * u);
    };
    // Boost stores the non-negative abscissae of the symmetric rule (x[0] = 0 for odd order).
    for (std::size_t i = 0; i < x.size(); ++i) {
      if (x[i] == 0.0) {
        add(0.0, w[i]);
      } else {
        add(-x[i], w[i]);
        add(x[i], w[i]);
      }
    }
  }
  return rule;
}

}  // namespace

const GaussLaguerreRule& momentum_rule(int max_degree, int nodes_per_unit) {
  static std::mutex mu;
  static std::map<std::pair<int, int>, std::unique_ptr<GaussLaguerreRule>> cache;
  std::lock_guard<std::mutex> lock(mu);
  auto& slot = cache[{max_degree, nodes_per_unit}];
  if (!slot) slot = build(max_degree, nodes_per_unit);
  return *slot;
}

}  // namespace roundtrip::special
