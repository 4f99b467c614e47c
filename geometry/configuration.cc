#include "geometry/configuration.h"

#include <fmt/format.h>

#include <cmath>

namespace roundtrip::geometry {

namespace {
// Accepted lengths (README "Case files", "Accepted ranges"). Below 0.1 nm a gap or a film is
// thinner than an atom and the continuum (local dielectric) model that every material here uses
// does not apply; a sphere below 1 nm holds a few hundred atoms at most, for the same reason.
// Above 1 m nothing is a laboratory body any more: every case the solver is meant for is far
// below, and values like "1e300 m" are typing mistakes that would otherwise reach the solver as
// overflowing multipole counts or underflowing energies (a solver failure instead of an input
// error). Large R/L at accepted lengths is a cost question, refused by the run plan.
constexpr double kMinGap = 1e-10;        // m
constexpr double kMinThickness = 1e-10;  // m
constexpr double kMinRadius = 1e-9;      // m
constexpr double kMaxLength = 1.0;       // m

std::string positive_length_problem(double v, const char* what, const char* zero_meaning,
                                    double min, const char* min_reason) {
  if (!std::isfinite(v)) return fmt::format("a {} must be a finite length", what);
  if (v == 0.0) return fmt::format("a {} must be > 0 ({})", what, zero_meaning);
  if (v < 0.0) return fmt::format("a {} must be > 0", what);
  if (v < min)
    return fmt::format("a {} must be at least {:g} m ({}; accepted: {:g} m to {:g} m)", what, min,
                       min_reason, min, kMaxLength);
  if (v > kMaxLength)
    return fmt::format(
        "a {} must be at most {:g} m (larger values are beyond any laboratory body; accepted: "
        "{:g} m to {:g} m)",
        what, kMaxLength, min, kMaxLength);
  return {};
}
}  // namespace

std::string gap_problem(double gap) {
  if (gap < 0.0 && std::isfinite(gap))
    return "a gap must be > 0 (a negative gap means overlapping bodies)";
  return positive_length_problem(gap, "gap", "the bodies would touch", kMinGap,
                                 "below 0.1 nm the gap is smaller than an atom and the continuum "
                                 "model of the materials fails");
}

std::string radius_problem(double radius) {
  return positive_length_problem(radius, "radius", "a sphere needs a size", kMinRadius,
                                 "a smaller sphere is a cluster of a few atoms, not a body with a "
                                 "dielectric function");
}

std::string cylinder_radius_problem(double radius) {
  return positive_length_problem(radius, "radius", "a cylinder needs a thickness", kMinRadius,
                                 "a thinner cylinder is a chain of a few atoms, not a body with a "
                                 "dielectric function");
}

std::string thickness_problem(double thickness) {
  return positive_length_problem(thickness, "layer thickness", "leave the layer out instead",
                                 kMinThickness,
                                 "a thinner film is less than one atomic layer, beyond the "
                                 "continuum model");
}

std::string to_string(Shape s) {
  switch (s) {
    case Shape::kPlate:
      return "plate";
    case Shape::kSphere:
      return "sphere";
    case Shape::kCylinder:
      return "cylinder";
    case Shape::kAtom:
      return "atom";
    case Shape::kGrating:
      return "grating";
  }
  return "?";
}

std::string period_problem(double period) {
  return positive_length_problem(period, "period", "a grating needs a period", kMinRadius,
                                 "a shorter period is a few atoms, not a body with a "
                                 "dielectric function");
}
std::string filling_problem(double filling) {
  if (!(filling >= 0.0 && filling <= 1.0))
    return "the filling factor (ridge fraction of the period) must lie in [0, 1]";
  return {};
}
std::string Body::validate() const {
  if (shape == Shape::kPlate || shape == Shape::kAtom) return {};
  if (shape == Shape::kGrating) {
    if (auto p = period_problem(period); !p.empty())
      return fmt::format("{}.period = {} m: {}", name, period, p);
    if (auto p = filling_problem(filling); !p.empty())
      return fmt::format("{}.filling = {}: {}", name, filling, p);
    if (auto p = thickness_problem(depth); !p.empty())
      return fmt::format("{}.depth = {} m: {}", name, depth, p);
    return {};
  }
  if (auto p = shape == Shape::kCylinder ? cylinder_radius_problem(radius) : radius_problem(radius);
      !p.empty())
    return fmt::format("{}.radius = {} m: {}", name, radius, p);
  double total = 0.0;
  for (std::size_t i = 0; i < shell_thicknesses.size(); ++i) {
    const double t = shell_thicknesses[i];
    if (auto p = thickness_problem(t); !p.empty())
      return fmt::format("{}.shells[{}].thickness = {} m: {}", name, i, t, p);
    total += t;
  }
  if (!shell_thicknesses.empty() && !(total < radius))
    return fmt::format(
        "{}.shells: the shells are {} m thick together, not less than the radius {} m (the core "
        "needs a radius > 0)",
        name, total, radius);
  return {};
}

std::string Configuration::validate() const {
  if (gaps.empty()) return "gaps: at least one gap is needed";
  for (std::size_t i = 0; i < gaps.size(); ++i)
    if (auto p = gap_problem(gaps[i]); !p.empty())
      return fmt::format("gaps[{}] = {} m: {}", i, gaps[i], p);
  if (auto p = lower.validate(); !p.empty()) return p;
  return upper.validate();
}

}  // namespace roundtrip::geometry
