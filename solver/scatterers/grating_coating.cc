// Layers with several materials per period and the conformal coating of a grating
// (grating_coating.h).
#include "solver/scatterers/grating_coating.h"

#include <fmt/format.h>

#include <algorithm>
#include <boost/math/special_functions/sin_pi.hpp>
#include <cmath>
#include <functional>
#include <limits>
#include <set>
#include <stdexcept>

#include "solver/constants.h"

namespace roundtrip {
namespace {

using Set = std::vector<std::pair<double, double>>;

// Points of the tabulated outer surface of a non-lamellar profile over one period (header).
constexpr int kOuterSamples = 1024;
// Sub-levels of a slice's mean level set (as LamellarGrating::layers).
constexpr int kMeanSamples = 64;

// h_out(x) = max_{|u| <= t} [h(x + u) + sqrt(t^2 - u^2)] (the top of the subgraph grown by the
// disk of radius t; derived): u = t sin(theta), a scan of 128 + 1 angles, then golden-section
// refinement between the neighbours of the best (the function of u is concave on every linear
// piece of a table or triangle and smooth for the sinusoid).
double offset_height(const LamellarGrating& g, double x) {
  const double t = g.coating_thickness;
  const auto f = [&](double th) { return g.height_at(x + t * std::sin(th)) + t * std::cos(th); };
  constexpr int kScan = 128;
  const auto angle = [&](int k) { return -0.5 * kPi + kPi * k / kScan; };
  int kb = 0;
  double best = -std::numeric_limits<double>::infinity();
  for (int k = 0; k <= kScan; ++k)
    if (const double v = f(angle(k)); v > best) {
      best = v;
      kb = k;
    }
  double a = angle(std::max(kb - 1, 0)), b = angle(std::min(kb + 1, kScan));
  const double r = 0.5 * (std::sqrt(5.0) - 1.0);
  double c = b - r * (b - a), d = a + r * (b - a), fc = f(c), fd = f(d);
  for (int i = 0; i < 60; ++i) {
    if (fc > fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - r * (b - a);
      fc = f(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + r * (b - a);
      fd = f(d);
    }
  }
  return std::max({best, fc, fd});
}

// The outer surface of a coated non-lamellar profile as a table profile (linear between
// kOuterSamples + 1 points over [-Lambda/2, Lambda/2], even).
LamellarGrating outer_table(const LamellarGrating& g) {
  LamellarGrating o;
  o.period = g.period;
  o.profile = GratingProfile::kTable;
  const int half = kOuterSamples / 2;
  std::vector<double> hv(half + 1);
  for (int j = 0; j <= half; ++j) hv[j] = offset_height(g, j * g.period / kOuterSamples);
  for (int j = half; j >= 1; --j) o.table.emplace_back(-j * g.period / kOuterSamples, hv[j]);
  for (int j = 0; j <= half; ++j) o.table.emplace_back(j * g.period / kOuterSamples, hv[j]);
  o.depth = hv[0] - hv[half];
  return o;
}

// Symmetric interval [-w, w] (units of the period), clipped to the period; empty for w <= 0.
Set symmetric(double w) {
  if (!(w > 0.0)) return {};
  return {{-std::min(w, 0.5), std::min(w, 0.5)}};
}

// The lamellar outer set (square corners, header).
Set lamellar_outer(const LamellarGrating& g, double z) {
  const double t = g.coating_thickness, h = g.depth;
  if (z >= h + t) return {};
  if (z < t) return symmetric(0.5);
  if (!(g.filling > 0.0)) return {};
  return symmetric(0.5 * g.filling + t / g.period);
}

// Mean level set over [z0, z1] (kMeanSamples sub-levels), as LamellarGrating::layers, except
// that a single interval (even, so centred on x = 0) that vanishes inside the slice counts as
// [0, 0] there: a crest inside a slice (the ridge's crest lies t below the coated one) keeps its
// area. Other changes of the interval count: the mid-level set.
Set mean_set(const std::function<Set(double)>& at, double z0, double z1) {
  std::vector<Set> r(kMeanSamples);
  std::size_t n = 0;
  for (int k = 0; k < kMeanSamples; ++k) {
    r[k] = at(z0 + (k + 0.5) / kMeanSamples * (z1 - z0));
    n = std::max(n, r[k].size());
  }
  Set mean(n, {0.0, 0.0});
  for (const Set& s : r) {
    if (s.size() == n) {
      for (std::size_t i = 0; i < n; ++i) {
        mean[i].first += s[i].first / kMeanSamples;
        mean[i].second += s[i].second / kMeanSamples;
      }
    } else if (!(n == 1 && s.empty())) {
      return at(0.5 * (z0 + z1));
    }
  }
  return mean;
}

// Ridge segments = inner set; coating segments = outer set minus inner set (sorted sets).
std::vector<GratingSegment> segments_of(const Set& outer, const Set& inner) {
  constexpr double kEmpty = 1e-15;  // narrower pieces (units of the period) are rounding
  std::vector<GratingSegment> s;
  for (const auto& [a, b] : inner)
    if (b - a > kEmpty) s.push_back({a, b, GratingPhase::kRidge});
  for (const auto& [a, b] : outer) {
    double cur = a;
    for (const auto& [c, d] : inner) {
      if (d <= cur || c >= b) continue;
      if (c - cur > kEmpty) s.push_back({cur, std::min(c, b), GratingPhase::kCoating});
      cur = std::max(cur, d);
      if (cur >= b) break;
    }
    if (b - cur > kEmpty) s.push_back({cur, b, GratingPhase::kCoating});
  }
  return s;
}

}  // namespace

std::vector<GratingLayer> grating_layers(const LamellarGrating& g) {
  std::vector<GratingLayer> out;
  if (!g.coated()) {
    for (const auto& [thickness, set] : g.layers()) {
      GratingLayer l;
      l.thickness = thickness;
      for (const auto& [a, b] : set) l.segments.push_back({a, b, GratingPhase::kRidge});
      out.push_back(std::move(l));
    }
    return out;
  }
  if (const std::string p = coating_problem(g); !p.empty())
    throw std::invalid_argument("grating: " + p);
  const double t = g.coating_thickness, top = grating_top(g);
  const auto inner = [&](double z) { return g.ridge_set(z); };
  if (g.profile == GratingProfile::kLamellar) {
    // Exact: the sets change only at z = t, h, h + t.
    std::set<double> zs = {0.0, top};
    for (double z : {t, g.depth})
      if (z > 0.0 && z < top) zs.insert(z);
    std::vector<double> z(zs.rbegin(), zs.rend());  // top first
    for (std::size_t i = 0; i + 1 < z.size(); ++i) {
      const double zm = 0.5 * (z[i] + z[i + 1]);
      out.push_back({z[i] - z[i + 1], segments_of(lamellar_outer(g, zm), inner(zm))});
    }
    return out;
  }
  if (g.slices < 1)
    throw std::invalid_argument(
        "grating: the staircase slice count of a non-lamellar profile must be set (>= 1)");
  const LamellarGrating outer = outer_table(g);
  const auto outer_at = [&](double z) { return outer.ridge_set(z); };
  // The ridge's crest H is a slice boundary: S_out = ceil(S t/(H + t)) slices over [H, H + t]
  // and S_in = ceil(S H/(H + t)) over [0, H], none thicker than (H + t)/S (S or S + 1 layers in
  // all; S_out + S_in = S when S t/(H + t) is whole). Equal slices over [0, H + t], with H
  // inside a slice, gave irregular relative changes of s (1.7e-2, 3.2e-3, 2.0e-3 for S = 4 -> 8
  // -> 16 -> 32, rates 2.4, 0.7); these give 6.6e-3, 2.0e-3, 4.2e-4, 1.5e-4 up to S = 64 (rates
  // 1.7, 2.3, 1.5; the coated sinusoid of grating_coating_test.cc).
  const double H = g.height();
  const auto count = [&](double part) {
    return std::max(1, static_cast<int>(std::ceil(g.slices * part / top - 1e-9)));
  };
  const int s_out = count(t), s_in = count(H);
  const auto stack = [&](double z0, double z1, int n) {
    const double dz = (z1 - z0) / n;
    for (int j = n - 1; j >= 0; --j)
      out.push_back({dz, segments_of(mean_set(outer_at, z0 + j * dz, z0 + (j + 1) * dz),
                                     mean_set(inner, z0 + j * dz, z0 + (j + 1) * dz))});
  };
  stack(H, top, s_out);
  stack(0.0, H, s_in);
  return out;
}

Eigen::MatrixXd segment_toeplitz(double background, double ridge, double coating,
                                 const std::vector<GratingSegment>& segments, int m) {
  // Summed per phase so that a grating without coating repeats the one-material arithmetic.
  std::vector<double> c(2 * m - 1);
  for (int p = -(m - 1); p <= m - 1; ++p) {
    double sr = 0.0, sc = 0.0;
    bool any_r = false, any_c = false;
    for (const GratingSegment& s : segments) {
      // sin_pi is exact at the integers: segments that fill the period give c_p = 0 exactly
      // (std::sin(pi p) ~ 1e-16 p would leave rounding in every off-diagonal of a full layer).
      const double v =
          p == 0 ? s.hi - s.lo
                 : boost::math::sin_pi(2.0 * p * s.hi) - boost::math::sin_pi(2.0 * p * s.lo);
      if (s.phase == GratingPhase::kRidge) {
        sr += v;
        any_r = true;
      } else {
        sc += v;
        any_c = true;
      }
    }
    double acc = 0.0;
    if (p == 0) {
      if (any_r) acc += (ridge - background) * sr;
      if (any_c) acc += (coating - background) * sc;
      c[p + m - 1] = background + acc;
    } else {
      if (any_r) acc += (ridge - background) * sr / (2.0 * kPi * p);
      if (any_c) acc += (coating - background) * sc / (2.0 * kPi * p);
      c[p + m - 1] = acc;
    }
  }
  Eigen::MatrixXd t(m, m);
  for (int i = 0; i < m; ++i)
    for (int j = 0; j < m; ++j) t(i, j) = c[i - j + m - 1];
  return t;
}

double grating_top(const LamellarGrating& g) {
  return g.height() + (g.coated() ? g.coating_thickness : 0.0);
}

double coated_height_at(const LamellarGrating& g, double x) {
  if (!g.coated()) return g.height_at(x);
  if (g.profile == GratingProfile::kLamellar) {
    const double u = std::abs(std::remainder(x, g.period));
    const double t = g.coating_thickness;
    return g.filling > 0.0 && u < 0.5 * g.filling * g.period + t ? g.depth + t : t;
  }
  return offset_height(g, x);
}

std::vector<std::pair<double, double>> coated_set(const LamellarGrating& g, double z) {
  if (!g.coated()) return g.ridge_set(z);
  if (g.profile == GratingProfile::kLamellar) return lamellar_outer(g, z);
  return outer_table(g).ridge_set(z);
}

std::vector<GratingColumn> grating_columns(const LamellarGrating& g, int samples) {
  const double t = g.coated() ? g.coating_thickness : 0.0, H = g.height();
  std::vector<GratingColumn> cols;
  if (g.profile == GratingProfile::kLamellar) {
    const double f = g.filling;
    if (!g.coated()) return {{f, 0.0, 0.0, H}, {1.0 - f, H, 0.0, 0.0}};
    if (!(f > 0.0)) return {{1.0, H, t, 0.0}};
    const double wall = std::min(2.0 * t / g.period, 1.0 - f);
    return {{f, 0.0, t, H}, {wall, 0.0, H + t, 0.0}, {1.0 - f - wall, H, t, 0.0}};
  }
  const double top = grating_top(g);
  for (int i = 0; i < samples; ++i) {
    const double x = (i + 0.5) / samples * 0.5 * g.period;
    const double hx = g.height_at(x), ho = g.coated() ? offset_height(g, x) : hx;
    cols.push_back({1.0 / samples, top - ho, ho - hx, hx});
  }
  return cols;
}

std::string coating_problem(const LamellarGrating& g) {
  if (!g.coated()) return {};
  const double t = g.coating_thickness;
  if (!(t > 0.0) || !std::isfinite(t))
    return fmt::format("the coating thickness {:g} m must be > 0", t);
  if (g.profile == GratingProfile::kLamellar) {
    const double groove = (1.0 - g.filling) * g.period;
    if (g.filling > 0.0 && g.filling < 1.0 && 2.0 * t >= groove)
      return fmt::format(
          "the coating fills the grooves: 2 t = {:g} nm is not below the groove width (1 - "
          "filling) period = {:g} nm (supported for profile = \"lamellar\": 2 t < (1 - "
          "filling) period, or filling = 1 or 0)",
          2.0 * t * 1e9, groove * 1e9);
    return {};
  }
  if (t >= 0.5 * g.period)
    return fmt::format(
        "the coating thickness {:g} nm is not below half the period ({:g} nm), which is what is "
        "supported for sinusoidal, triangular and table profiles",
        t * 1e9, 0.5 * g.period * 1e9);
  return {};
}

}  // namespace roundtrip
