// geometry = "sphere-sphere": two spheres on a common axis (optionally with shells), total
// energy and force; [sphere2] defaults to [sphere].
#include "solver/geometries/sphere_sphere.h"

#include <fmt/format.h>

#include <stdexcept>

#include "io/case_file.h"
#include "io/errors.h"
#include "io/kinds/kind.h"

namespace roundtrip::io {

GeometryKind sphere_sphere_kind() {
  GeometryKind k;
  k.name = "sphere-sphere";
  k.summary = "two spheres (optionally with shells) on a common axis, e.g. beads in water";
  k.lower = {"sphere", geometry::Shape::kSphere, ""};
  k.upper = {"sphere2", geometry::Shape::kSphere, "sphere"};
  k.scale = ResultScale::kTotal;
  k.scalar_fields = true;
  k.numerics_keys = {"l_max"};
  k.build = [](const CaseSpec& spec) {
    const BodySpec& a = spec.body("sphere");
    const BodySpec& b = spec.body("sphere2");
    SphereSphereOptions o;
    o.radius1 = a.radius;
    o.sphere1 = a.material;
    o.radius2 = b.radius;
    o.sphere2 = b.material;
    o.shells1 = a.solver_shells();
    o.shells2 = b.solver_shells();
    o.medium = spec.medium;
    o.field = field_kind_from_string(spec.field);
    o.rel_tol = spec.frequency.rel_tol;
    o.l_max = spec.l_max;
    if (const std::string p = o.validate(); !p.empty())
      throw CaseError(fmt::format("{}: sphere-sphere: {}", spec.path.string(), p));
    try {
      return make_sphere_sphere(o);
    } catch (const std::invalid_argument& e) {
      throw CaseError(fmt::format("{}: {}", spec.path.string(), e.what()));
    }
  };
  return k;
}

}  // namespace roundtrip::io
