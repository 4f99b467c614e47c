#include "geometry/configuration.h"

#include <fmt/format.h>

#include <cmath>

namespace roundtrip::geometry {

namespace {
std::string positive_length_problem(double v, const char* what, const char* zero_meaning) {
  if (!std::isfinite(v)) return fmt::format("a {} must be a finite length", what);
  if (v == 0.0) return fmt::format("a {} must be > 0 ({})", what, zero_meaning);
  if (v < 0.0) return fmt::format("a {} must be > 0", what);
  return {};
}
}  // namespace

std::string gap_problem(double gap) {
  if (gap < 0.0 && std::isfinite(gap))
    return "a gap must be > 0 (a negative gap means overlapping bodies)";
  return positive_length_problem(gap, "gap", "the bodies would touch");
}

std::string radius_problem(double radius) {
  return positive_length_problem(radius, "radius", "a sphere needs a size");
}

std::string thickness_problem(double thickness) {
  return positive_length_problem(thickness, "layer thickness", "leave the layer out instead");
}

std::string to_string(Shape s) {
  switch (s) {
    case Shape::kPlate:
      return "plate";
    case Shape::kSphere:
      return "sphere";
  }
  return "?";
}

std::string Body::validate() const {
  if (shape == Shape::kPlate) return {};
  if (auto p = radius_problem(radius); !p.empty())
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
