// geometry = "plate-plate": two planar bodies, results per unit area (Lifshitz).
#include "solver/geometries/plate_plate.h"

#include <cmath>

#include "io/case_file.h"
#include "io/kinds/kind.h"
#include "solver/planar/electrolyte.h"

namespace roundtrip::io {

GeometryKind plate_plate_kind() {
  GeometryKind k;
  k.name = "plate-plate";
  k.summary = "two planar bodies (half-spaces or stacks), per unit area";
  k.lower = {"plate", geometry::Shape::kPlate, ""};
  k.upper = {"plate2", geometry::Shape::kPlate, "plate"};
  k.scale = ResultScale::kPerArea;
  k.electrolyte = true;
  k.build = [](const CaseSpec& spec) {
    // Ions in the gap (planar/electrolyte.h): kappa from I, the medium's eps(0) and this T.
    const double kappa = std::sqrt(electrolyte_kappa_sq(
        spec.ionic_strength, spec.medium->static_limit().static_eps, spec.frequency.temperature_K));
    return make_plate_plate(spec.body("plate").plate, spec.body("plate2").plate, spec.medium,
                            kappa);
  };
  return k;
}

}  // namespace roundtrip::io
