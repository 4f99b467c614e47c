#include "solver/pfa/theta_fit.h"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>

namespace roundtrip {
namespace {

// Least squares y = sum_k c_k x^{p_k}; returns coefficients and the covariance scaled by the
// residual variance (zero when the fit is exact).
void fit_powers(const std::vector<double>& x, const std::vector<double>& y,
                const std::vector<double>& powers, Eigen::VectorXd& c, Eigen::MatrixXd& cov) {
  const int n = static_cast<int>(x.size()), k = static_cast<int>(powers.size());
  Eigen::MatrixXd A(n, k);
  Eigen::VectorXd b(n);
  for (int i = 0; i < n; ++i) {
    for (int j = 0; j < k; ++j) A(i, j) = std::pow(x[i], powers[j]);
    b[i] = y[i];
  }
  c = A.colPivHouseholderQr().solve(b);
  const double dof = n - k;
  const double s2 = dof > 0 ? (A * c - b).squaredNorm() / dof : 0.0;
  cov = (A.transpose() * A).inverse() * s2;
}

}  // namespace

ThetaFit fit_theta(const std::vector<double>& x, const std::vector<double>& ratio, double rel_tol) {
  ThetaFit f;
  std::vector<double> xs, ys;
  for (std::size_t i = 0; i < x.size() && i < ratio.size(); ++i)
    if (x[i] > 0.0 && std::isfinite(ratio[i])) {
      xs.push_back(x[i]);
      ys.push_back((ratio[i] - 1.0) / x[i]);
    }
  f.points = static_cast<int>(xs.size());
  if (f.points < 3) {
    f.message = "needs at least 3 gaps with a PFA value";
    return f;
  }
  f.x_min = *std::min_element(xs.begin(), xs.end());
  f.x_max = *std::max_element(xs.begin(), xs.end());
  // One model for any number of gaps: y = theta + theta2 x, i.e. Q/Q_PFA = 1 + theta x +
  // theta2 x^2 (a cubic term with 5 or more gaps only made theta jump with the gap count).
  // Alternatives for the systematic estimate: y = theta + theta2 x + theta3 x^2, and
  // y = theta + a sqrt(x) + b x (an x^{3/2} term in Q/Q_PFA), each when the points leave at
  // least one degree of freedom.
  Eigen::VectorXd c;
  Eigen::MatrixXd v;
  fit_powers(xs, ys, std::vector<double>{0, 1}, c, v);
  f.theta = c[0];
  f.theta2 = c[1];
  f.model = "1 + theta x + theta2 x^2";
  double sys = 0.0;
  const std::vector<std::vector<double>> alternatives{{0, 0.5, 1}, {0, 1, 2}};
  for (const auto& powers : alternatives) {
    if (f.points < static_cast<int>(powers.size()) + 1) continue;
    Eigen::VectorXd ca;
    Eigen::MatrixXd va;
    fit_powers(xs, ys, powers, ca, va);
    sys = std::max(sys, std::abs(ca[0] - f.theta));
  }
  const double stat2 = std::max(0.0, v(0, 0));
  const double num = rel_tol / f.x_min;  // error of y at the smallest x dominates the intercept
  f.uncertainty = std::sqrt(stat2 + num * num + sys * sys);
  f.valid = std::isfinite(f.theta) && std::isfinite(f.uncertainty);
  if (!f.valid) f.message = "fit is not finite";
  if (f.valid && f.uncertainty > kThetaMeaningful * std::abs(f.theta))
    f.note = "too few gaps for a meaningful theta (uncertain by " +
             std::to_string(static_cast<int>(
                 std::lround(100.0 * f.uncertainty / std::max(std::abs(f.theta), 1e-300)))) +
             " %): add gaps at smaller L/R";
  return f;
}

}  // namespace roundtrip
