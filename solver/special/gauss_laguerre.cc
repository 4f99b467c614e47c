#include "solver/special/gauss_laguerre.h"

#include <Eigen/Eigenvalues>
#include <cmath>
#include <map>
#include <memory>
#include <mutex>

namespace roundtrip::special {
namespace {

// L_n(t) and L_{n-1}(t) scaled by exp(-log_scale) to stay finite; returns log_scale.
double laguerre_pair(int n, double t, double& ln, double& lnm1) {
  double p0 = 1.0, p1 = 1.0 - t, log_scale = 0.0;
  if (n == 0) {
    ln = 1.0;
    lnm1 = 0.0;
    return 0.0;
  }
  for (int k = 1; k < n; ++k) {
    const double p2 = ((2.0 * k + 1.0 - t) * p1 - k * p0) / (k + 1.0);
    p0 = p1;
    p1 = p2;
    const double a = std::abs(p1);
    if (a > 1e100) {
      p0 /= a;
      p1 /= a;
      log_scale += std::log(a);
    }
  }
  ln = p1;
  lnm1 = p0;
  return log_scale;
}

std::unique_ptr<GaussLaguerreRule> build(int n) {
  auto rule = std::make_unique<GaussLaguerreRule>();
  Eigen::VectorXd diag(n), sub(std::max(n - 1, 0));
  for (int k = 0; k < n; ++k) diag[k] = 2.0 * k + 1.0;
  for (int k = 0; k + 1 < n; ++k) sub[k] = k + 1.0;
  Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> es;
  es.computeFromTridiagonal(diag, sub, Eigen::EigenvaluesOnly);
  rule->nodes.resize(n);
  rule->log_weights.resize(n);
  for (int j = 0; j < n; ++j) {
    double t = es.eigenvalues()[j];
    for (int it = 0; it < 3; ++it) {  // Newton on L_n: L_n' = n (L_n - L_{n-1}) / t
      double ln, lnm1;
      laguerre_pair(n, t, ln, lnm1);
      const double d = n * (ln - lnm1) / t;
      if (d == 0.0) break;
      t -= ln / d;
    }
    double lnp1, ln;
    const double log_scale = laguerre_pair(n + 1, t, lnp1, ln);
    rule->nodes[j] = t;
    rule->log_weights[j] =
        std::log(t) - 2.0 * std::log(n + 1.0) - 2.0 * (std::log(std::abs(lnp1)) + log_scale);
  }
  return rule;
}

}  // namespace

const GaussLaguerreRule& gauss_laguerre(int n) {
  static std::mutex mu;
  static std::map<int, std::unique_ptr<GaussLaguerreRule>> cache;
  std::lock_guard<std::mutex> lock(mu);
  auto& slot = cache[n];
  if (!slot) slot = build(n);
  return *slot;
}

}  // namespace roundtrip::special
