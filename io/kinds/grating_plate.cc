// geometry = "grating-plate": a grating below a planar body, per unit area (Fourier
// modal method, solver/geometries/grating_plate.h).
#include "solver/geometries/grating_plate.h"

#include <fmt/format.h>

#include <algorithm>
#include <string>
#include <utility>
#include <vector>

#include "io/case_file.h"
#include "io/errors.h"
#include "io/grating_spec.h"
#include "io/kinds/kind.h"

namespace roundtrip::io {

GeometryKind grating_plate_kind() {
  GeometryKind k;
  k.name = "grating-plate";
  k.summary =
      "a grating (lamellar, sinusoidal, triangular or table profile) below a planar body "
      "(Fourier modal method), per unit area";
  k.lower = {"grating", geometry::Shape::kGrating, ""};
  k.upper = {"plate", geometry::Shape::kPlate, ""};
  k.scale = ResultScale::kPerArea;
  k.numerics_keys = {"orders"};
  k.pfa_sphere = true;
  k.body_numbers = [](const CaseSpec& spec) {
    std::vector<std::pair<std::string, double>> v;
    if (spec.pfa_sphere_radius > 0.0) v.emplace_back("pfa_sphere_radius_m", spec.pfa_sphere_radius);
    return v;
  };
  k.build = [](const CaseSpec& spec) {
    const LamellarGrating& g = spec.body("grating").grating;
    if (const auto [key, why] = grating_material_problem(g, spec.frequency.temperature_K);
        !key.empty())
      throw CaseError(
          fmt::format("{}:{}: grating.{} = \"{}\": {}", spec.path.string(),
                      case_line_of(spec, "grating", key.substr(0, key.find('.')).c_str()), key,
                      grating_material_of(g, key), why));
    GratingPlateOptions o;
    o.orders = spec.orders;
    o.bloch_rel_tol = std::clamp(0.3 * spec.frequency.rel_tol, 1e-12, 1e-2);
    o.rel_tol = spec.frequency.rel_tol;
    o.sphere_radius = spec.pfa_sphere_radius;
    return std::make_shared<GratingPlate>(g, spec.body("plate").plate, spec.medium, o);
  };
  return k;
}

}  // namespace roundtrip::io
