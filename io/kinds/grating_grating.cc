// geometry = "grating-grating": two parallel lamellar gratings facing each other (the upper one
// mirrored, ridges pointing down), lateral offsets from [offsets], per unit area (Fourier modal
// method, solver/geometries/grating_grating.h).
#include "solver/geometries/grating_grating.h"

#include <fmt/format.h>
#include <toml++/toml.h>

#include <algorithm>
#include <exception>
#include <string>

#include "io/case_file.h"
#include "io/errors.h"
#include "io/grating_spec.h"
#include "io/kinds/kind.h"

namespace roundtrip::io {

GeometryKind grating_grating_kind() {
  GeometryKind k;
  k.name = "grating-grating";
  k.summary =
      "two parallel lamellar gratings face to face with a lateral offset (Fourier modal method), "
      "per unit area";
  k.lower = {"grating", geometry::Shape::kGrating, ""};
  k.upper = {"grating2", geometry::Shape::kGrating, "grating"};
  k.scale = ResultScale::kPerArea;
  k.numerics_keys = {"orders"};
  k.offsets = true;
  k.build = [](const CaseSpec& spec) {
    const BodySpec& b1 = spec.body("grating");
    const BodySpec& b2 = spec.body("grating2");
    for (const BodySpec* b : {&b1, &b2}) {
      const LamellarGrating& g = b->grating;
      if (g.profile != GratingProfile::kLamellar)
        throw CaseError(fmt::format(
            "{}:{}: {}.profile = \"{}\": grating-grating is built for lamellar profiles only (its "
            "PFA columns, overlap and order model assume rectangular ridges; a staircase of "
            "slices and its convergence study are not built here; use grating-plate for other "
            "profiles)",
            spec.path.string(), case_line_of(spec, b->table, "profile"), b->table,
            g.profile == GratingProfile::kSinusoidal   ? "sinusoidal"
            : g.profile == GratingProfile::kTriangular ? "triangular"
                                                       : "table"));
      if (const auto [key, why] = grating_material_problem(g, spec.frequency.temperature_K);
          !key.empty())
        throw CaseError(
            fmt::format("{}:{}: {}.{} = \"{}\": {}", spec.path.string(),
                        case_line_of(spec, b->table, key.substr(0, key.find('.')).c_str()),
                        b->table, key, grating_material_of(g, key), why));
    }
    if (b2.grating.period != b1.grating.period)
      throw CaseError(fmt::format(
          "{}: grating2.period = \"{:.6g} nm\": must equal grating.period = \"{:.6g} nm\" (two "
          "gratings of different periods are not built)",
          spec.path.string(), b2.grating.period * 1e9, b1.grating.period * 1e9));
    GratingGratingOptions o;
    o.orders = spec.orders;
    o.bloch_rel_tol = std::clamp(0.3 * spec.frequency.rel_tol, 1e-12, 1e-2);
    o.rel_tol = spec.frequency.rel_tol;
    o.offset = spec.offsets.empty() ? 0.0 : spec.offsets.front();
    return std::make_shared<GratingGrating>(b1.grating, b2.grating, spec.medium, o);
  };
  return k;
}

}  // namespace roundtrip::io
