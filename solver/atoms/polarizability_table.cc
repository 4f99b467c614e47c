// alpha(i xi) from a table (polarizability.h: read_polarizability_csv, make_table_polarizability).
//
// Interpolation: 1/alpha linear in xi^2 between the rows. For one oscillator
// alpha = a w^2/(w^2 + xi^2), 1/alpha = (w^2 + xi^2)/(a w^2) is linear in xi^2, so the rule is
// exact for it (derived) and keeps alpha positive and monotone between monotone rows. Beyond the
// last row xi_N: alpha = alpha_N (xi_N/xi)^2, the 1/xi^2 fall of any sum of oscillators (the
// Thomas-Reiche-Kuhn tail; standard), continuous at xi_N.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <utility>

#include "solver/atoms/polarizability.h"
#include "solver/constants.h"
#include "solver/materials/decreasing_table.h"

namespace roundtrip {
namespace {

class TablePolarizability final : public Polarizability {
 public:
  TablePolarizability(PolarizabilityTable t) : t_(std::move(t)) {
    for (std::size_t i = 0; i < t_.xi.size(); ++i) {
      x_.push_back(t_.xi[i] * t_.xi[i]);
      inv_.push_back(1.0 / t_.alpha[i]);
    }
    // The half-value frequency (alpha(i w) = alpha(0)/2) as the scale; the last row if the
    // table stops before.
    const double half = 2.0 / t_.alpha.front();
    w_ = t_.xi.back();
    for (std::size_t i = 1; i < x_.size(); ++i)
      if (inv_[i] >= half) {
        const double f = (half - inv_[i - 1]) / (inv_[i] - inv_[i - 1]);
        w_ = std::sqrt(x_[i - 1] + f * (x_[i] - x_[i - 1]));
        break;
      }
  }
  double alpha(double xi) const override {
    const double x = xi * xi;
    if (x >= x_.back()) {
      const double r = t_.xi.back() / xi;
      return t_.alpha.back() * r * r;
    }
    const auto it = std::upper_bound(x_.begin(), x_.end(), x);
    const std::size_t i = static_cast<std::size_t>(it - x_.begin());  // x_[i-1] <= x < x_[i]
    const double f = (x - x_[i - 1]) / (x_[i] - x_[i - 1]);
    return 1.0 / (inv_[i - 1] + f * (inv_[i] - inv_[i - 1]));
  }
  double characteristic_frequency() const override { return w_; }
  std::string name() const override { return "table"; }
  std::string description() const override {
    return fmt::format(
        "table {} ({} rows, xi up to {:.4g} eV), alpha(0) = {:.6g} m^3 ({:.6g} a.u.); 1/alpha "
        "linear in xi^2 between rows, alpha ~ 1/xi^2 beyond",
        t_.origin, t_.xi.size(), t_.xi.back() / kRadPerSecondPerEv, t_.alpha.front(),
        t_.alpha.front() / kBohrVolume);
  }

 private:
  PolarizabilityTable t_;
  std::vector<double> x_, inv_;
  double w_ = 0.0;
};

}  // namespace

PolarizabilityTable read_polarizability_csv(const std::filesystem::path& path) {
  DecreasingTable d = read_decreasing_csv(
      path, {{"xi_eV", kRadPerSecondPerEv}, {"xi_rad/s", 1.0}, {"xi_au", kHartreeFrequency}},
      {{"alpha_au", kBohrVolume}, {"alpha_m^3", 1.0}, {"alpha_A^3", 1e-30}, {"alpha_Å^3", 1e-30}},
      "polarizability");
  return {std::move(d.xi), std::move(d.value), std::move(d.origin)};
}

PolarizabilityPtr make_table_polarizability(PolarizabilityTable table) {
  const auto& xi = table.xi;
  const auto& a = table.alpha;
  if (xi.size() < 2 || xi.size() != a.size() || xi.front() != 0.0)
    throw std::invalid_argument(
        "a polarizability table needs at least 2 rows, the first at xi = 0");
  for (std::size_t i = 0; i < xi.size(); ++i) {
    if (!(a[i] > 0.0) || !std::isfinite(a[i]))
      throw std::invalid_argument("polarizability table: alpha must be finite and > 0");
    if (i > 0 && (!(xi[i] > xi[i - 1]) || a[i] > a[i - 1]))
      throw std::invalid_argument(
          "polarizability table: xi must increase and alpha must not increase");
  }
  return std::make_shared<TablePolarizability>(std::move(table));
}

}  // namespace roundtrip
