#pragma once
// The k_z (and PFA profile) integral shared by the cylinder geometries (cylinder_plate.cc,
// cylinder_cylinder.cc): a double-exponential trapezoid over u in (0, inf), u = exp(t - e^{-t})
// (the map for integrands decaying like e^{-u}; Takahasi & Mori 1974, the form of
// solver/frequency), levels h = 1/2, 1/4, ... . Header-only (a template over the integrand).
#include <cmath>
#include <vector>

#include "solver/guards.h"
#include "solver/spectral.h"

namespace roundtrip::cylinder {

// Vector-valued DE trapezoid over u in (0, inf) of f(u) (decaying like e^{-u} or faster, or
// algebraically like u^-3 and faster): u = exp(t - e^{-t}), h = 1/2, 1/4, ... until two levels
// agree to tol (per component, relative to the integral of |.|). Returns the integral; `nodes`
// counts the evaluations, `error` receives the last change of the value component.
template <class F>
Spectral de_integrate(F&& f, double tol, int* nodes, double* error, int min_level = 1) {
  constexpr double t_left = -4.5;
  const auto u_of = [](double t) { return std::exp(t - std::exp(-t)); };
  const auto du_of = [&](double t) { return u_of(t) * (1.0 + std::exp(-t)); };
  struct Node {
    double t;
    Spectral w;  // f(u) du/dt
  };
  std::vector<Node> pts;
  Spectral absint;
  int count = 0;
  const auto eval = [&](double t) {
    throw_if_cancelled();
    ++count;
    Spectral v = f(u_of(t)) * du_of(t);
    return v;
  };
  // Level h = 1/2: march right until two nodes past u = 1 are negligible.
  double h = 0.5;
  Spectral sum;
  int small = 0;
  double t_right = t_left;
  for (double t = t_left;; t += h) {
    const Spectral v = eval(t);
    pts.push_back({t, v});
    sum += v;
    absint.value += std::abs(v.value);
    absint.d1 += std::abs(v.d1);
    absint.d2 += std::abs(v.d2);
    t_right = t;
    const bool negligible = std::abs(v.value) <= 1e-3 * tol * absint.value &&
                            std::abs(v.d1) <= 1e-3 * tol * absint.d1 &&
                            std::abs(v.d2) <= 1e-3 * tol * absint.d2;
    small = (u_of(t) > 1.0 && negligible) ? small + 1 : 0;
    if (small >= 2 || t > 8.0) break;
  }
  Spectral integral = sum * h;
  Spectral change;
  for (int level = 1; level <= 8; ++level) {
    const double hn = h / 2.0;
    Spectral added;
    for (double t = t_left + hn; t < t_right; t += h) added += eval(t);
    Spectral next = integral * 0.5;
    next += added * hn;
    change = {next.value - integral.value, next.d1 - integral.d1, next.d2 - integral.d2};
    integral = next;
    h = hn;
    // The integral of |.| from the h = 1/2 nodes.
    const Spectral scale = absint * 0.5;
    if (level >= min_level && std::abs(change.value) <= tol * scale.value &&
        std::abs(change.d1) <= tol * scale.d1 && std::abs(change.d2) <= tol * scale.d2)
      break;
  }
  if (nodes) *nodes = count;
  if (error) *error = std::abs(change.value);
  return integral;
}
}  // namespace roundtrip::cylinder
