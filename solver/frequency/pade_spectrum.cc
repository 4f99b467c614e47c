// Pade spectrum decomposition poles and weights (formulas in pade_spectrum.h).
#include "solver/frequency/pade_spectrum.h"

#include <fmt/format.h>

#include <Eigen/Eigenvalues>
#include <algorithm>
#include <cmath>
#include <map>
#include <mutex>
#include <stdexcept>

namespace roundtrip {
namespace {

// Residue of the convergent P_{2n}/Q_{2n} of phi(w) = 1/(b_1 + w/(b_2 + w/(b_3 + ...))), b_k =
// 2k+1, at the simple pole w: P/Q'. Three-term recurrences X_k = b_k X_{k-1} + w X_{k-2} with
// P_{-1} = 1, P_0 = 0, Q_{-1} = 0, Q_0 = 1 (for k = 1 the partial numerator is 1, not w);
// Q'_k = b_k Q'_{k-1} + Q_{k-2} + w Q'_{k-2}. All three are rescaled together (the ratio is what
// counts), since they grow like (4n+1)!!.
double residue(int n, double w) {
  double p2 = 1.0, p1 = 0.0;  // P_{k-2}, P_{k-1}
  double q2 = 0.0, q1 = 1.0;
  double d2 = 0.0, d1 = 0.0;  // Q'
  for (int k = 1; k <= 2 * n; ++k) {
    const double b = 2.0 * k + 1.0;
    const double a = k == 1 ? 1.0 : w;
    const double p = b * p1 + a * p2;
    const double q = b * q1 + a * q2;
    const double d = b * d1 + (k == 1 ? 0.0 : q2 + w * d2);
    p2 = p1, p1 = p;
    q2 = q1, q1 = q;
    d2 = d1, d1 = d;
    const double scale = std::max({std::abs(p1), std::abs(q1), std::abs(d1)});
    if (scale > 1e100) {
      p1 /= scale, p2 /= scale, q1 /= scale, q2 /= scale, d1 /= scale, d2 /= scale;
    }
  }
  return p1 / d1;
}

}  // namespace

namespace {
PadePoles compute_poles(int n) {
  const int dim = 2 * n;
  Eigen::VectorXd diag = Eigen::VectorXd::Zero(dim);
  Eigen::VectorXd off(dim - 1);
  for (int i = 0; i < dim - 1; ++i) off[i] = 1.0 / std::sqrt((2.0 * i + 3.0) * (2.0 * i + 5.0));
  Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> es;
  es.computeFromTridiagonal(diag, off, Eigen::EigenvaluesOnly);
  if (es.info() != Eigen::Success)
    throw std::runtime_error("Pade spectrum decomposition: eigenvalue solver failed");
  // Eigenvalues come in pairs +-mu; the n largest are the positive ones, ascending, so that
  // y = 1/mu is descending along them.
  PadePoles out;
  out.y.resize(n);
  out.eta.resize(n);
  for (int j = 0; j < n; ++j) {
    const double mu = es.eigenvalues()[dim - 1 - j];
    out.y[j] = 1.0 / mu;
    // phi_N(w) ~ 2 eta / (w + y^2) near the pole: residue = 2 eta.
    out.eta[j] = 0.5 * residue(n, -out.y[j] * out.y[j]);
  }
  return out;
}
}  // namespace

// The poles depend on n only: computed once per n and process. Choosing the rule evaluates the
// model with n and 2n poles for a run of n at every gap, and the tridiagonal eigensolver was
// 55 % of the CPU time of cases/gold_plates.toml (perf, 1 thread) and most of a plate `check`.
PadePoles pade_spectrum_poles(int n) {
  if (n < 1 || n > kMaxPadePoles)
    throw std::invalid_argument(fmt::format(
        "Pade spectrum decomposition: {} poles requested, must be 1 .. {}", n, kMaxPadePoles));
  static std::mutex mutex;
  static std::map<int, PadePoles> cache;
  {
    const std::lock_guard<std::mutex> lock(mutex);
    if (const auto it = cache.find(n); it != cache.end()) return it->second;
  }
  PadePoles p = compute_poles(n);  // outside the lock: deterministic, a race only repeats it
  const std::lock_guard<std::mutex> lock(mutex);
  return cache.emplace(n, std::move(p)).first->second;
}

}  // namespace roundtrip
