// geometry = "cylinder-plate": an infinitely long cylinder (optionally coated: [cylinder].shells,
// solver/scatterers/cylinder_body.h) with its axis parallel to a planar body, results per unit
// length. Any cylinder material and plate (real materials through the TE/TM-mixing vector path;
// perfect conductors and the scalar fields through the scalar path),
// solver/geometries/cylinder_plate.h.
#include "solver/geometries/cylinder_plate.h"

#include <fmt/format.h>

#include <stdexcept>

#include "io/case_file.h"
#include "io/errors.h"
#include "io/kinds/kind.h"

namespace roundtrip::io {

GeometryKind cylinder_plate_kind() {
  GeometryKind k;
  k.name = "cylinder-plate";
  k.summary =
      "an infinite cylinder (optionally with shells) parallel to a planar body, per unit length";
  k.lower = {"plate", geometry::Shape::kPlate, ""};
  k.upper = {"cylinder", geometry::Shape::kCylinder, ""};
  k.scale = ResultScale::kPerLength;
  k.scalar_fields = true;
  k.build = [](const CaseSpec& spec) {
    const BodySpec& c = spec.body("cylinder");
    CylinderPlateOptions o;
    o.radius = c.radius;
    o.cylinder = c.cylinder_material();
    o.plate = spec.body("plate").plate;
    o.medium = spec.medium;
    o.field = field_kind_from_string(spec.field);
    o.rel_tol = spec.frequency.rel_tol;
    if (const std::string p = o.validate(); !p.empty())
      throw CaseError(fmt::format("{}: cylinder-plate: {}", spec.path.string(), p));
    return make_cylinder_plate(o);
  };
  return k;
}

}  // namespace roundtrip::io
