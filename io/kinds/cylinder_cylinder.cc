// geometry = "cylinder-cylinder": two infinitely long parallel cylinders, results per unit
// length; [cylinder2] defaults to [cylinder]. Any materials (real materials through the
// TE/TM-mixing vector path; perfect conductors and the scalar fields through the scalar path),
// solver/geometries/cylinder_cylinder.h. The gap is surface to surface: d = R1 + R2 + L.
#include "solver/geometries/cylinder_cylinder.h"

#include <fmt/format.h>

#include <stdexcept>

#include "io/case_file.h"
#include "io/errors.h"
#include "io/kinds/kind.h"

namespace roundtrip::io {

GeometryKind cylinder_cylinder_kind() {
  GeometryKind k;
  k.name = "cylinder-cylinder";
  k.summary = "two parallel infinite cylinders (e.g. coated fibres, nanowires), per unit length";
  k.lower = {"cylinder", geometry::Shape::kCylinder, ""};
  k.upper = {"cylinder2", geometry::Shape::kCylinder, "cylinder"};
  k.scale = ResultScale::kPerLength;
  k.scalar_fields = true;
  k.build = [](const CaseSpec& spec) {
    const BodySpec& a = spec.body("cylinder");
    const BodySpec& b = spec.body("cylinder2");
    CylinderCylinderOptions o;
    o.radius1 = a.radius;
    o.cylinder1 = a.cylinder_material();
    o.radius2 = b.radius;
    o.cylinder2 = b.cylinder_material();
    o.medium = spec.medium;
    o.field = field_kind_from_string(spec.field);
    o.rel_tol = spec.frequency.rel_tol;
    if (const std::string p = o.validate(); !p.empty())
      throw CaseError(fmt::format("{}: cylinder-cylinder: {}", spec.path.string(), p));
    try {
      return make_cylinder_cylinder(o);
    } catch (const std::invalid_argument& e) {
      throw CaseError(fmt::format("{}: {}", spec.path.string(), e.what()));
    }
  };
  return k;
}

}  // namespace roundtrip::io
