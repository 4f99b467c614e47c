// geometry = "plate-plate": two planar bodies, results per unit area (Lifshitz).
#include "solver/geometries/plate_plate.h"

#include "io/case_file.h"
#include "io/kinds/kind.h"

namespace roundtrip::io {

GeometryKind plate_plate_kind() {
  GeometryKind k;
  k.name = "plate-plate";
  k.summary = "two planar bodies (half-spaces or stacks), per unit area";
  k.lower = {"plate", geometry::Shape::kPlate, ""};
  k.upper = {"plate2", geometry::Shape::kPlate, "plate"};
  k.scale = ResultScale::kPerArea;
  k.build = [](const CaseSpec& spec) {
    return make_plate_plate(spec.body("plate").plate, spec.body("plate2").plate, spec.medium);
  };
  return k;
}

}  // namespace roundtrip::io
