// The convergence test in diffraction orders of the grating kinds (formulas and sources in
// grating_orders.h).
#include "solver/geometries/grating_orders.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "solver/constants.h"

namespace roundtrip {

double observed_rate(double n1, double n2, double n3, double d_prev, double d) {
  if (!(d_prev * d > 0.0) || !(std::abs(d) < std::abs(d_prev))) return 0.0;
  const double target = d_prev / d;
  // The right side grows monotonically with p for n1 < n2 < n3.
  const auto ratio = [&](double p) {
    return (std::pow(n1, -p) - std::pow(n2, -p)) / (std::pow(n2, -p) - std::pow(n3, -p));
  };
  double lo = 0.1, hi = 8.0;
  if (!(ratio(lo) < target && ratio(hi) > target)) return 0.0;
  for (int i = 0; i < 100; ++i) {
    const double mid = 0.5 * (lo + hi);
    (ratio(mid) < target ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

// 4, 6, 8, 11, 16, 23, 32, 45, 64, ...: three successive levels cost little more than the last.
int next_orders(int n) {
  return std::max(n + 1, static_cast<int>(std::lround(n * std::sqrt(2.0))));
}

int model_orders(double period, double gap) {
  const double G = 2.0 * kPi / period;
  const double n = std::ceil(std::log(1e6) / (2.0 * G * gap));
  return static_cast<int>(std::clamp(n, 8.0, 100.0));
}

GratingStudy study_orders(GratingStudy st, double period, double gap, double rel_tol,
                          int max_orders, const std::function<double(int)>& single,
                          const std::function<std::pair<double, double>(int, int)>& pair) {
  const double tau = rel_tol;
  // N_0 = max(4, a quarter of the damping model), then factors ~sqrt(2).
  int n0 = 4;
  while (4 * n0 < model_orders(period, gap) && n0 < 32) n0 *= 2;
  double d_prev = 0.0, p_prev = 0.0, r_prev = 0.0;
  int n_prev = 0, n_prev2 = 0;
  bool have_r = false;
  for (int N = n0;; N = next_orders(N)) {
    if (N == n0) {
      const double s = single(N);
      st.levels.emplace_back(N, s);
      st.orders = N;
      st.error = 1.0;
      n_prev = N;
      continue;
    }
    const auto [lo, hi] = pair(n_prev, N);
    const double s = hi;
    st.levels.emplace_back(N, s);
    st.orders = N;
    const double d = hi - lo;
    const double p = n_prev2 > 0 ? observed_rate(n_prev2, n_prev, N, d_prev, d) : 0.0;
    if (p > 0.0) {
      // Richardson with the level ratio r = N/N_prev: R = s + d/(r^p - 1).
      const double c = 1.0 / (std::pow(static_cast<double>(N) / n_prev, p) - 1.0);
      const double plain = 1.25 * std::abs(d) * c / std::abs(s);
      const double r = s + d * c;
      st.rate = p;
      if (plain <= 0.3 * tau) {
        st.error = plain;
        st.orders_low = 0;
        st.verified = st.slice_error <= 0.2 * tau;
        return st;
      }
      if (have_r && std::abs(p - p_prev) <= 0.5 &&
          std::abs(r - r_prev) <= 0.3 * tau * std::abs(r)) {
        st.error = std::abs(r - r_prev) / std::abs(r);
        st.orders_low = n_prev;
        st.verified = st.slice_error <= 0.2 * tau;
        return st;
      }
      st.error = plain;
      r_prev = r;
      have_r = true;
      p_prev = p;
    } else {
      st.error = std::abs(d / s);
      have_r = false;
    }
    if (next_orders(N) > max_orders) break;
    d_prev = d;
    n_prev2 = n_prev;
    n_prev = N;
  }
  st.orders_low = 0;
  st.verified = false;
  return st;
}

std::pair<std::vector<int>, std::vector<double>> study_levels(const GratingStudy& st) {
  if (st.orders_low > 0) {
    // Richardson in N with the observed rate (grating_orders.h).
    const double c =
        1.0 / (std::pow(static_cast<double>(st.orders) / st.orders_low, st.rate) - 1.0);
    return {{st.orders_low, st.orders}, {-c, 1.0 + c}};
  }
  return {{st.orders}, {1.0}};
}

std::map<std::string, double> study_truncation(const GratingStudy& st, double bloch_rel_tol,
                                               bool slices) {
  std::map<std::string, double> t{{"orders", static_cast<double>(st.orders)},
                                  {"orders_low", static_cast<double>(st.orders_low)},
                                  {"order_rate", st.rate},
                                  {"order_error", st.error},
                                  {"bloch_rel_tol", bloch_rel_tol}};
  if (slices) {
    t["slices"] = st.slices;
    t["slice_rate"] = st.slice_rate;
    t["slice_error"] = st.slice_error;
  }
  return t;
}

std::string study_unverified(const GratingStudy& st, bool orders_set, int max_orders) {
  if (st.verified) return {};
  if (orders_set)
    return fmt::format(
        "diffraction orders -{0}..{0} as set (numerics.orders), not a convergence test: the "
        "truncation error is not verified against rel_tol (lamellar profiles converge like "
        "N^-1.7; leave orders unset for the automatic test)",
        st.orders);
  return fmt::format(
      "the convergence test in diffraction orders stopped at N = {} (numerics limit {}) with an "
      "estimated relative error {:.2g} (observed rate N^-{:.2g}){}, above its share of rel_tol",
      st.orders, max_orders, st.error, st.rate,
      st.slices > 0
          ? fmt::format("; staircase slices {} with error {:.2g}", st.slices, st.slice_error)
          : std::string());
}

}  // namespace roundtrip
