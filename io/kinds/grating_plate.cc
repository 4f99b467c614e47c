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
    if (g.ridge->static_limit().is_conductor())
      throw CaseError(fmt::format(
          "{}: grating.material = \"{}\": gratings with conducting ridges are not built (the "
          "modal method here is for dielectric ridges: a metal's huge eps makes its layer "
          "operator singular in double at small xi; perfect conductors need their own modal "
          "method)",
          spec.path.string(), g.ridge->name()));
    for (const auto& [m, key] : {std::pair{g.ridge, "material"}, {g.substrate, "substrate"}}) {
      if (m->is_perfect_conductor())
        throw CaseError(fmt::format(
            "{}: grating.{} = \"{}\": perfectly conducting gratings need their own modal "
            "method, which is not built",
            spec.path.string(), key, m->name()));
      if (m->static_limit().is_conductor() && spec.frequency.temperature_K > 0.0)
        throw CaseError(fmt::format(
            "{}: grating.{} = \"{}\": the xi = 0 term of a conducting grating is not built; "
            "at T > 0 the grating must be a dielectric (T = 0 works)",
            spec.path.string(), key, m->name()));
    }
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
