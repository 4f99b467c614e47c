#pragma once
// The k_z (and PFA profile) integral shared by the cylinder geometries (cylinder_plate.cc,
// cylinder_cylinder.cc): a double-exponential trapezoid over u in (0, inf), u = exp(t - e^{-t})
// (the map for integrands decaying like e^{-u}; Takahasi & Mori 1974, the form of
// solver/frequency), levels h = 1/2, 1/4, ... . Header-only (a template over the integrand).
//
// Block items (solver/blocks/chunk.h): every node lies on t = -4.5 + k 2^-9, so a node has a
// fixed index (axial_node_index: the level-0 nodes t = -4.5, -4, ..., 8.5 first, then the nodes
// of each refinement level in order of t, each level with room for the widest march), and the
// serial evaluation order is increasing index. Which nodes the integral needs depends on the
// values (the level-0 march stops on negligible nodes, the levels stop when two agree), so a
// frequency cut into node chunks is replayed (replay_de_integrate) on the gathered values with
// stand-ins for missing nodes: the replay asks for every node a stand-in led it to, and the
// integral is formed only when no stand-in was needed, then from the serial values with the
// serial additions and stopping tests (de_core runs both), so it is de_integrate's bit for bit.
#include <algorithm>
#include <cmath>
#include <exception>
#include <functional>
#include <optional>
#include <utility>
#include <vector>

#include "solver/blocks/chunk.h"
#include "solver/guards.h"
#include "solver/spectral.h"

namespace roundtrip::cylinder {

inline constexpr double kAxialTLeft = -4.5;
inline constexpr int kAxialLevel0Nodes = 27;  // t = -4.5 .. 8.5 (the march stops past t = 8)
inline constexpr int kAxialMaxLevel = 8;

/// Index of node i of level `level` (0: t = -4.5 + 0.5 i; l >= 1: t = -4.5 + h/2 + i h with
/// h = 2^-l, i < 26 2^(l-1)).
inline int axial_node_index(int level, int i) {
  return level == 0 ? i : kAxialLevel0Nodes + 26 * ((1 << (level - 1)) - 1) + i;
}
/// Number of node indices (levels 0 .. kAxialMaxLevel).
inline int axial_node_count() { return axial_node_index(kAxialMaxLevel + 1, 0); }
/// t of node index g (exact: every node is a multiple of 2^-9 below 16 in magnitude).
inline double axial_node_t(int g) {
  if (g < kAxialLevel0Nodes) return kAxialTLeft + 0.5 * g;
  int level = 1;
  while (g >= axial_node_index(level + 1, 0)) ++level;
  const double h = 0.5 / (1 << (level - 1));
  return kAxialTLeft + h / 2.0 + static_cast<double>(g - axial_node_index(level, 0)) * h;
}
inline double axial_u_of(double t) { return std::exp(t - std::exp(-t)); }
inline double axial_du_of(double t) { return axial_u_of(t) * (1.0 + std::exp(-t)); }

/// f(u(t)) du/dt, the node value at t, in a function of its own (not inlined): the product is
/// rounded before any caller adds it, so a node computed alone (a chunk) and a node summed at
/// once are the same double (with -march=native the compiler may otherwise fuse the product into
/// the caller's addition, which differs in the last bit).
template <class F>
[[gnu::noinline]] Spectral axial_node_value(F& f, double t) {
  throw_if_cancelled();
  Spectral v = f(axial_u_of(t)) * axial_du_of(t);
  return v;
}

/// The trapezoid's additions and stopping tests on node values node(g, t) (g the node index):
/// level 0 marches right until two nodes past u = 1 are negligible; the levels h = 1/4, ...
/// stop when two agree to tol (per component, relative to the integral of |.|): when
/// stop(level, change, scale, test) says so (the serial run passes `test` on; a replay may
/// decide otherwise on a level with stand-ins). Returns the integral; `change` receives the
/// last change of the value component.
template <class Node, class Stop>
Spectral de_core(Node&& node, Stop&& stop, double tol, int min_level, double* change_out) {
  Spectral absint;
  // Level h = 1/2: march right until two nodes past u = 1 are negligible.
  double h = 0.5;
  Spectral sum;
  int small = 0;
  double t_right = kAxialTLeft;
  for (int k = 0;; ++k) {
    const double t = kAxialTLeft + 0.5 * k;
    const Spectral v = node(k, t);
    sum += v;
    absint.value += std::abs(v.value);
    absint.d1 += std::abs(v.d1);
    absint.d2 += std::abs(v.d2);
    t_right = t;
    const bool negligible = std::abs(v.value) <= 1e-3 * tol * absint.value &&
                            std::abs(v.d1) <= 1e-3 * tol * absint.d1 &&
                            std::abs(v.d2) <= 1e-3 * tol * absint.d2;
    small = (axial_u_of(t) > 1.0 && negligible) ? small + 1 : 0;
    if (small >= 2 || t > 8.0) break;
  }
  Spectral integral = sum * h;
  Spectral change;
  for (int level = 1; level <= kAxialMaxLevel; ++level) {
    const double hn = h / 2.0;
    Spectral added;
    int i = 0;
    for (double t = kAxialTLeft + hn; t < t_right; t += h, ++i)
      added += node(axial_node_index(level, i), t);
    Spectral next = integral * 0.5;
    next += added * hn;
    change = {next.value - integral.value, next.d1 - integral.d1, next.d2 - integral.d2};
    integral = next;
    h = hn;
    // The integral of |.| from the h = 1/2 nodes.
    const Spectral scale = absint * 0.5;
    const bool test = level >= min_level && std::abs(change.value) <= tol * scale.value &&
                      std::abs(change.d1) <= tol * scale.d1 &&
                      std::abs(change.d2) <= tol * scale.d2;
    if (stop(level, change, scale, test)) break;
  }
  if (change_out) *change_out = std::abs(change.value);
  return integral;
}

// Vector-valued DE trapezoid over u in (0, inf) of f(u) (decaying like e^{-u} or faster, or
// algebraically like u^-3 and faster): u = exp(t - e^{-t}), h = 1/2, 1/4, ... until two levels
// agree to tol (per component, relative to the integral of |.|). Returns the integral times
// `factor`; `nodes` counts the evaluations, `error` receives the last change of the value
// component. Under a blocks::ChunkScope: computes the chunk's nodes only (block items, file
// comment), records tol, min_level and factor, and returns zero.
template <class F>
Spectral de_integrate(F&& f, double tol, int* nodes, double* error, int min_level = 1,
                      double factor = 1.0) {
  const auto eval = [&](double t) { return axial_node_value(f, t); };
  if (blocks::Chunk* c = blocks::current_chunk()) {
    blocks::claim_chunk(*c, blocks::BlockSum::kAxial);
    c->tol = tol;
    c->min_level = min_level;
    c->factor = factor;
    const int end = std::min(c->end, axial_node_count());
    for (int g = c->begin; g < end; ++g) {
      try {
        c->values.push_back(eval(axial_node_t(g)));
      } catch (const std::exception& e) {  // as the serial run, once the replay reaches it
        c->failed_at = g;
        c->failure = e.what();
        break;
      }
    }
    if (nodes) *nodes = static_cast<int>(c->values.size());
    if (error) *error = 0.0;
    return Spectral{};
  }
  int count = 0;
  const Spectral integral = de_core(
      [&](int, double t) {
        ++count;
        return eval(t);
      },
      [](int, const Spectral&, const Spectral&, bool test) { return test; }, tol, min_level, error);
  if (nodes) *nodes = count;
  return integral * factor;
}

/// Node g of a replayed integral: its value, or nothing if not computed yet; a failed node
/// throws.
using AxialNodeValue = std::function<std::optional<Spectral>(int g)>;

/// de_integrate replayed on node values computed elsewhere (chunks): the same additions and
/// stopping tests, so the result is de_integrate's bit for bit. Returns the integral times
/// factor, or nothing and appends to *missing (increasing) the nodes the replay needed and did
/// not know. It goes on past a missing node on a stand-in (the nearest known node's value
/// scaled by the model e^{-u} du/dt, else that model), so that one replay asks for about every
/// node the integral will need: the march's extent follows the stand-ins, and a level holding
/// stand-ins stops where the trapezoid's usual convergence predicts, the relative change
/// squaring from level to level (the double-exponential rule's error falls like exp(-c/h);
/// Takahasi & Mori 1974), after at most kAxialLookahead such levels; with no measured level yet,
/// at the first level allowed to stop.
inline constexpr int kAxialLookahead = 2;

inline std::optional<Spectral> replay_de_integrate(double tol, int min_level, double factor,
                                                   const AxialNodeValue& value,
                                                   std::vector<int>* missing) {
  const auto model = [](double t) { return std::exp(-axial_u_of(t)) * axial_du_of(t); };
  std::vector<std::pair<double, Spectral>> known;
  bool complete = true;
  int ahead = 0;  // levels decided on stand-ins so far
  // Relative change of the last level, measured or predicted; before any level is known, 0:
  // the first level allowed to stop is taken to stop (smooth k_z integrands do, at h = 1/4),
  // so a first ask is the march and that level, and the measured change decides further ones.
  double last_rel = 0.0;
  const auto rel_change = [](const Spectral& change, const Spectral& scale) {
    double r = 0.0;
    for (const auto& [c, s] :
         {std::pair{change.value, scale.value}, {change.d1, scale.d1}, {change.d2, scale.d2}})
      if (s > 0.0) r = std::max(r, std::abs(c) / s);
    return r;
  };
  const Spectral integral = de_core(
      [&](int g, double t) -> Spectral {
        if (const std::optional<Spectral> v = value(g)) {
          known.emplace_back(t, *v);
          return *v;
        }
        complete = false;
        if (missing) missing->push_back(g);
        const std::pair<double, Spectral>*near = nullptr, *last = nullptr, *prev = nullptr;
        for (const auto& k : known) {
          if (!near || std::abs(k.first - t) < std::abs(near->first - t)) near = &k;
          if (!last || k.first > last->first)
            prev = last, last = &k;
          else if (!prev || k.first > prev->first)
            prev = &k;
        }
        const double m = model(t);
        if (!near) return Spectral{m, m, m};
        const double m0 = model(near->first);
        Spectral v = m0 > 0.0 ? near->second * (m / m0) : Spectral{m, m, m};
        // Beyond the known nodes, where they still fall: their geometric trend in t, if slower
        // than the model's (an algebraic tail u^-p falls like e^{-(p-1) t}).
        if (prev && t > last->first) {
          const double k = (t - last->first) / (last->first - prev->first);
          const auto trend = [&](double a, double b, double& out) {
            if (a != 0.0 && std::abs(a) < std::abs(b)) {
              const double x = a * std::pow(std::abs(a / b), k);
              if (std::abs(x) > std::abs(out)) out = x;
            }
          };
          trend(last->second.value, prev->second.value, v.value);
          trend(last->second.d1, prev->second.d1, v.d1);
          trend(last->second.d2, prev->second.d2, v.d2);
        }
        return v;
      },
      [&](int level, const Spectral& change, const Spectral& scale, bool test) {
        if (complete) {  // no stand-in so far: the serial decision
          last_rel = rel_change(change, scale);
          return test;
        }
        ++ahead;
        last_rel = last_rel * last_rel;
        return ahead >= kAxialLookahead || (level >= min_level && last_rel <= tol);
      },
      tol, min_level, nullptr);
  if (missing) std::sort(missing->begin(), missing->end());
  if (!complete) return std::nullopt;
  return integral * factor;
}

}  // namespace roundtrip::cylinder
