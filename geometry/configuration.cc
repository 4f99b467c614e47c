#include "geometry/configuration.h"

#include <fmt/format.h>

#include <cmath>

namespace roundtrip::geometry {

std::string to_string(ConfigurationKind k) {
  switch (k) {
    case ConfigurationKind::kPlatePlate:
      return "plate-plate";
    case ConfigurationKind::kSpherePlate:
      return "sphere-plate";
  }
  return "?";
}

std::optional<ConfigurationKind> configuration_kind_from_string(std::string_view s) {
  for (auto k : {ConfigurationKind::kPlatePlate, ConfigurationKind::kSpherePlate})
    if (to_string(k) == s) return k;
  return std::nullopt;
}

std::vector<std::string> configuration_kind_names() {
  return {to_string(ConfigurationKind::kPlatePlate), to_string(ConfigurationKind::kSpherePlate)};
}

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

std::string Configuration::validate() const {
  if (gaps.empty()) return "gaps: at least one gap is needed";
  for (std::size_t i = 0; i < gaps.size(); ++i)
    if (auto p = gap_problem(gaps[i]); !p.empty())
      return fmt::format("gaps[{}] = {} m: {}", i, gaps[i], p);
  const bool wants_sphere = kind == ConfigurationKind::kSpherePlate;
  if (wants_sphere != sphere.has_value())
    return fmt::format("sphere: {} for a {} configuration", wants_sphere ? "missing" : "not used",
                       to_string(kind));
  if (sphere)
    if (auto p = radius_problem(sphere->radius); !p.empty())
      return fmt::format("sphere.radius = {} m: {}", sphere->radius, p);
  return {};
}

}  // namespace roundtrip::geometry
