#include "solver/scatterers/sphere_body.h"

#include <fmt/format.h>

#include <cmath>

#include "solver/constants.h"
#include "solver/scatterers/layered_mie.h"

namespace roundtrip {

std::string SphereBody::validate() const {
  if (!(radius > 0.0) || !std::isfinite(radius))
    return fmt::format("sphere radius must be a positive length, got {} m", radius);
  if (!core) return "sphere material is missing";
  double sum = 0.0;
  for (std::size_t i = 0; i < shells.size(); ++i) {
    const SphereShell& s = shells[i];
    if (!s.material) return fmt::format("shell {} (outermost = 1) has no material", i + 1);
    if (!(s.thickness > 0.0) || !std::isfinite(s.thickness))
      return fmt::format("shell {} (outermost = 1): thickness must be a positive length, got {} m",
                         i + 1, s.thickness);
    sum += s.thickness;
  }
  if (!(sum < radius))
    return fmt::format(
        "shell thicknesses add up to {} m, which is not less than the sphere radius {} m", sum,
        radius);
  return {};
}

double SphereBody::core_radius() const {
  double r = radius;
  for (const SphereShell& s : shells) r -= s.thickness;
  return r;
}

const MaterialPtr& SphereBody::surface_material() const {
  return shells.empty() ? core : shells.front().material;
}

std::string SphereBody::describe() const {
  std::string s;
  for (const SphereShell& sh : shells)
    s += fmt::format("{} ({:.6g} m) on ", sh.material->name(), sh.thickness);
  return s + core->name();
}

namespace {

/// Outer radii of the regions, core first; computed from the outside in so that thin outer
/// shells keep their thickness exactly.
std::vector<double> outer_radii(const SphereBody& b) {
  const std::size_t n = b.shells.size();
  std::vector<double> r(n + 1);
  double outer = b.radius;
  for (std::size_t i = 0; i < n; ++i) {  // shell i (outermost first) is region n - i
    r[n - i] = outer;
    outer -= b.shells[i].thickness;
  }
  r[0] = outer;
  return r;
}

const Material& region_material(const SphereBody& b, std::size_t j) {
  return j == 0 ? *b.core : *b.shells[b.shells.size() - j].material;
}

}  // namespace

MieLog sphere_mie(const SphereBody& body, FieldKind field, double xi, const Material& medium,
                  int lmax) {
  const double eps_m = medium.epsilon(xi);
  const double kappa = std::sqrt(eps_m) * xi / kSpeedOfLight;
  const double x = kappa * body.radius;
  const bool em = field == FieldKind::kElectromagnetic;
  if (!em || body.shells.empty()) {
    const bool pec = em && body.core->is_perfect_conductor();
    const double n = (em && !pec) ? std::sqrt(body.core->epsilon(xi) / eps_m) : 1.0;
    return mie_imaginary(field, pec, x, n, lmax);
  }
  const std::vector<double> r = outer_radii(body);
  std::vector<MieRegion> regions(r.size());
  for (std::size_t j = 0; j < r.size(); ++j) {
    const Material& m = region_material(body, j);
    regions[j].perfect_conductor = m.is_perfect_conductor();
    regions[j].n = regions[j].perfect_conductor ? 1.0 : std::sqrt(m.epsilon(xi) / eps_m);
    regions[j].outer = j + 1 == r.size() ? 1.0 : r[j] / body.radius;
  }
  return mie_layered_imaginary(x, regions, lmax);
}

StaticSphere sphere_static(const SphereBody& body, FieldKind field, const Material& medium,
                           int lmax) {
  const bool em = field == FieldKind::kElectromagnetic;
  const StaticLimit sm = medium.static_limit();
  if (!em || body.shells.empty()) {
    const StaticLimit ss = em ? body.core->static_limit() : StaticLimit{};
    return static_sphere(field, ss, sm.static_eps, body.radius, lmax);
  }
  const std::vector<double> r = outer_radii(body);
  std::vector<StaticRegion> regions(r.size());
  for (std::size_t j = 0; j < r.size(); ++j) {
    regions[j].limit = region_material(body, j).static_limit();
    regions[j].outer = r[j];
  }
  return static_layered(regions, sm.static_eps, lmax);
}

bool static_tm_is_unit(const SphereBody& body) {
  return body.surface_material()->static_limit().is_conductor();
}

}  // namespace roundtrip
