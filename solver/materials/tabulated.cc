// Kramers-Kronig transform of tabulated eps''(omega) to eps(i xi) (formulas in tabulated.h).
#include "solver/materials/tabulated.h"

#include <fmt/format.h>

#include <cmath>
#include <stdexcept>

#include "solver/constants.h"

namespace roundtrip {
namespace {

constexpr int kMinPoints = 4;  // fewer cannot carry a resonance or a fit

// g(x) = 1 - atan(x)/x >= 0, by its Taylor series where the difference would cancel.
double one_minus_atan_ratio(double x) {
  if (std::abs(x) < 0.1) {
    const double x2 = x * x;
    // x^2/3 - x^4/5 + ... ; truncation below 1e-13 relative for |x| < 0.1.
    double term = x2, sum = 0.0;
    for (int n = 1; n <= 7; ++n) {
      sum += (n % 2 == 1 ? 1.0 : -1.0) * term / (2 * n + 1);
      term *= x2;
    }
    return sum;
  }
  return 1.0 - std::atan(x) / x;
}

// f(a) = atan(w1/a)/a and its derivative, for the Drude extension below w1.
double f_atan(double a, double w1) { return std::atan(w1 / a) / a; }
double df_atan(double a, double w1) {
  return -w1 / (a * (a * a + w1 * w1)) - std::atan(w1 / a) / (a * a);
}

}  // namespace

std::string to_string(LowFrequencyModel m) {
  return m == LowFrequencyModel::kDrude ? "drude" : "none";
}

TabulatedMaterial::TabulatedMaterial(std::string name, OpticalData data,
                                     KramersKronigOptions options, std::string source)
    : name_(std::move(name)), source_(std::move(source)), d_(std::move(data)), o_(options) {
  const auto fail = [&](const std::string& why) {
    throw std::invalid_argument(fmt::format("table {}: {}", d_.origin, why));
  };
  const std::size_t n = d_.omega.size();
  if (d_.eps1.size() != n || d_.eps2.size() != n) fail("columns of unequal length");
  if (n < static_cast<std::size_t>(kMinPoints))
    fail(fmt::format("{} points; at least {} are needed", n, kMinPoints));
  bool any_loss = false;
  for (std::size_t i = 0; i < n; ++i) {
    if (!std::isfinite(d_.omega[i]) || !(d_.omega[i] > 0.0)) fail("frequencies must be > 0");
    if (i > 0 && !(d_.omega[i] > d_.omega[i - 1])) fail("frequencies must increase strictly");
    if (!std::isfinite(d_.eps1[i]) || !std::isfinite(d_.eps2[i]) || !(d_.eps2[i] >= 0.0))
      fail(fmt::format("point {}: eps2 = {} must be finite and >= 0", i, d_.eps2[i]));
    any_loss = any_loss || d_.eps2[i] > 0.0;
  }
  if (!any_loss) fail("eps2 = 0 everywhere: no absorption, Kramers-Kronig gives eps = 1");
  if (!(o_.xi_max > o_.xi_min && o_.xi_min > 0.0 && o_.points_per_decade >= 4))
    fail("interpolation grid: need 0 < xi_min < xi_max and points_per_decade >= 4");

  if (o_.low == LowFrequencyModel::kDrude) {
    if (o_.plasma_frequency.has_value() != o_.damping.has_value())
      fail("give both Drude plasma frequency and damping, or neither");
    if (o_.plasma_frequency) {
      wp_ = *o_.plasma_frequency;
      gamma_ = *o_.damping;
      if (!(wp_ > 0.0) || !(gamma_ > 0.0)) fail("Drude parameters must be > 0");
    } else {
      // eps' = 1 - wp^2/(w^2+g^2), eps'' w = g wp^2/(w^2+g^2): g = eps'' w/(1-eps'), averaged.
      const int m = std::min<int>(o_.fit_points, static_cast<int>(n));
      double g_sum = 0.0, wp2_sum = 0.0;
      for (int i = 0; i < m; ++i) {
        const double w = d_.omega[i], one_minus = 1.0 - d_.eps1[i];
        if (!(one_minus > 0.0) || !(d_.eps2[i] > 0.0))
          fail(fmt::format(
              "cannot fit a Drude term: at {:.6g} eV eps1 = {:.6g}, eps2 = {:.6g} (a metal needs "
              "eps1 < 1, eps2 > 0); give plasma_frequency and damping, or low_frequency = none",
              w / kRadPerSecondPerEv, d_.eps1[i], d_.eps2[i]));
        const double g = d_.eps2[i] * w / one_minus;
        g_sum += g;
        wp2_sum += one_minus * (w * w + g * g);
      }
      gamma_ = g_sum / m;
      wp_ = std::sqrt(wp2_sum / m);
      fitted_ = true;
    }
  } else {
    static_eps_ = epsilon_direct(0.0);
  }

  // Grid in ln xi; natural cubic spline of ln(eps - 1).
  const double lo = std::log(o_.xi_min), hi = std::log(o_.xi_max);
  const int count =
      static_cast<int>(std::ceil((hi - lo) / std::log(10.0) * o_.points_per_decade)) + 1;
  grid_x_.resize(count);
  grid_y_.resize(count);
  for (int i = 0; i < count; ++i) {
    grid_x_[i] = lo + (hi - lo) * i / (count - 1);
    const double em1 = epsilon_direct(std::exp(grid_x_[i])) - 1.0;
    if (!(em1 > 0.0)) fail("eps(i xi) - 1 is not positive on the grid");
    grid_y_[i] = std::log(em1);
  }
  // Tridiagonal solve for second derivatives, natural end conditions (uniform spacing h).
  const double h = grid_x_[1] - grid_x_[0];
  grid_m_.assign(count, 0.0);
  std::vector<double> c(count, 0.0), r(count, 0.0);
  for (int i = 1; i < count - 1; ++i) {
    const double rhs = 6.0 * (grid_y_[i + 1] - 2.0 * grid_y_[i] + grid_y_[i - 1]) / (h * h);
    const double denom = 4.0 - c[i - 1];
    c[i] = 1.0 / denom;
    r[i] = (rhs - r[i - 1]) / denom;
  }
  for (int i = count - 2; i >= 1; --i) grid_m_[i] = r[i] - c[i] * grid_m_[i + 1];
}

double TabulatedMaterial::epsilon_direct(double xi) const {
  const std::size_t n = d_.omega.size();
  const double xi2 = xi * xi;
  double integral = 0.0;  // \int_0^inf omega eps''/(omega^2 + xi^2)
  // Below the table: Drude, wp^2 g \int_0^{w1} dw / ((w^2+g^2)(w^2+xi^2)).
  if (o_.low == LowFrequencyModel::kDrude && xi > 0.0) {
    const double w1 = d_.omega[0], g = gamma_;
    double dd;  // (f(g) - f(xi)) / (xi^2 - g^2)
    if (std::abs(xi - g) < 1e-4 * g) {
      const double mid = 0.5 * (xi + g);
      dd = -df_atan(mid, w1) / (2.0 * mid);
    } else {
      dd = (f_atan(g, w1) - f_atan(xi, w1)) / (xi2 - g * g);
    }
    integral += wp_ * wp_ * g * dd;
  }
  // Table: eps'' linear between points, written with non-negative endpoint weights.
  for (std::size_t i = 0; i + 1 < n; ++i) {
    const double a = d_.omega[i], b = d_.omega[i + 1], w = b - a;
    const double L = 0.5 * std::log1p((b * b - a * a) / (a * a + xi2));  // \int w/(w^2+xi^2)
    const double den = xi2 + a * b;
    const double x = xi * w / den;  // atan(b/xi) - atan(a/xi) = atan(x)
    const double M = w * (a * b / den + xi2 / den * one_minus_atan_ratio(x));  // \int w^2/(...)
    integral += (d_.eps2[i] * (b * L - M) + d_.eps2[i + 1] * (M - a * L)) / w;
  }
  // Above the table: eps'' = eps''_N (w_N/w)^3.
  const double wn = d_.omega[n - 1], en = d_.eps2[n - 1];
  integral += xi > 0.0 ? en * wn * wn * one_minus_atan_ratio(xi / wn) / xi2 : en / 3.0;
  return 1.0 + 2.0 / kPi * integral;
}

double TabulatedMaterial::epsilon(double xi) const {
  const double x = std::log(xi);
  if (!(x > grid_x_.front() && x < grid_x_.back())) return epsilon_direct(xi);
  const double h = grid_x_[1] - grid_x_[0];
  const std::size_t i =
      std::min(static_cast<std::size_t>((x - grid_x_[0]) / h), grid_x_.size() - 2);
  const double t = (x - grid_x_[i]) / h, s = 1.0 - t;
  const double y = s * grid_y_[i] + t * grid_y_[i + 1] +
                   h * h / 6.0 * ((s * s * s - s) * grid_m_[i] + (t * t * t - t) * grid_m_[i + 1]);
  return 1.0 + std::exp(y);
}

StaticLimit TabulatedMaterial::static_limit() const {
  if (o_.low == LowFrequencyModel::kDrude) return {StaticClass::kDrudeConductor, 0.0, 0.0};
  return {StaticClass::kDielectric, static_eps_, 0.0};
}

std::string TabulatedMaterial::description() const {
  const double ev = kRadPerSecondPerEv;
  std::string s = fmt::format("table {} ({} points, {:.6g}-{:.6g} eV), Kramers-Kronig; ", d_.origin,
                              d_.omega.size(), d_.omega.front() / ev, d_.omega.back() / ev);
  if (o_.low == LowFrequencyModel::kDrude)
    s += fmt::format("below: Drude omega_p = {:.6g} eV, gamma = {:.6g} meV ({}); ", wp_ / ev,
                     1e3 * gamma_ / ev,
                     fitted_ ? fmt::format("fitted to the lowest {} points",
                                           std::min<std::size_t>(o_.fit_points, d_.omega.size()))
                             : "given");
  else
    s += fmt::format("below: eps'' = 0 (insulator, eps(0) = {:.6g}); ", static_eps_);
  return s + "above: eps'' ~ omega^-3";
}

}  // namespace roundtrip
