// geometry = "sphere-plate": a sphere above a planar body, total energy and force.
#include "solver/geometries/sphere_plate.h"

#include <fmt/format.h>

#include <cmath>

#include "io/case_file.h"
#include "io/errors.h"
#include "io/kinds/kind.h"
#include "solver/planar/electrolyte.h"

namespace roundtrip::io {
namespace {
// The bodies, medium and field of a case (what both the electrolyte check and the build read).
SpherePlateOptions bodies_of(const CaseSpec& spec) {
  const BodySpec& s = spec.body("sphere");
  SpherePlateOptions o;
  o.radius = s.radius;
  o.sphere = s.material;
  o.shells = s.solver_shells();
  o.plate = spec.body("plate").plate;
  o.medium = spec.medium;
  o.field = field_kind_from_string(spec.field);
  return o;
}
}  // namespace

GeometryKind sphere_plate_kind() {
  GeometryKind k;
  k.name = "sphere-plate";
  k.summary = "a sphere (optionally with shells) above a planar body";
  k.lower = {"plate", geometry::Shape::kPlate, ""};
  k.upper = {"sphere", geometry::Shape::kSphere, ""};
  k.scale = ResultScale::kTotal;
  k.scalar_fields = true;
  k.numerics_keys = {"l_max"};
  k.electrolyte = true;  // conducting sphere and plate only (SpherePlateOptions::kappa_ion)
  k.electrolyte_problem = [](const CaseSpec& spec) -> std::string {
    SpherePlateOptions o = bodies_of(spec);
    o.kappa_ion = 1.0;  // any kappa > 0: which bodies take ions (SpherePlateOptions::validate)
    return o.validate();
  };
  k.build = [](const CaseSpec& spec) {
    SpherePlateOptions o = bodies_of(spec);
    o.rel_tol = spec.frequency.rel_tol;
    o.l_max = spec.l_max;
    // Ions in the medium (planar/electrolyte.h): kappa from I, the medium's eps(0) and this T.
    o.kappa_ion = std::sqrt(electrolyte_kappa_sq(
        spec.ionic_strength, spec.medium->static_limit().static_eps, spec.frequency.temperature_K));
    if (const std::string p = o.validate(); !p.empty())
      throw CaseError(fmt::format("{}: sphere-plate: {}", spec.path.string(), p));
    return make_sphere_plate(o);
  };
  return k;
}

}  // namespace roundtrip::io
