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
#include "io/kinds/kind.h"

namespace roundtrip::io {
namespace {

// Line of table.key in the case text (0 if absent: a defaulted table).
int line_of(const CaseSpec& spec, const std::string& table, const char* key) {
  try {
    const toml::table t = toml::parse(spec.text, spec.path.string());
    if (const toml::node* n = t[table][key].node()) return static_cast<int>(n->source().begin.line);
  } catch (const std::exception&) {
  }
  return 0;
}

}  // namespace

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
            spec.path.string(), line_of(spec, b->table, "profile"), b->table,
            g.profile == GratingProfile::kSinusoidal   ? "sinusoidal"
            : g.profile == GratingProfile::kTriangular ? "triangular"
                                                       : "table"));
      for (const auto& [m, key] : {std::pair{g.ridge, "material"}, {g.substrate, "substrate"}}) {
        if (m->is_perfect_conductor())
          throw CaseError(fmt::format(
              "{}: {}.{} = \"{}\": perfectly conducting gratings need their own modal method, "
              "which is not built for grating-grating",
              spec.path.string(), b->table, key, m->name()));
        if (m->static_limit().is_conductor() && std::string(key) == "material")
          throw CaseError(fmt::format(
              "{}: {}.material = \"{}\": gratings with conducting ridges are not built (the "
              "modal method here is for dielectric ridges: a metal's huge eps makes its layer "
              "operator singular in double at small xi)",
              spec.path.string(), b->table, m->name()));
        if (m->static_limit().is_conductor() && spec.frequency.temperature_K > 0.0)
          throw CaseError(fmt::format(
              "{}: {}.{} = \"{}\": the xi = 0 term of a conducting grating is not built; at "
              "T > 0 the gratings must be dielectrics (T = 0 works)",
              spec.path.string(), b->table, key, m->name()));
      }
    }
    if (b2.grating.period != b1.grating.period)
      throw CaseError(fmt::format(
          "{}: grating2.period = \"{:.6g} nm\": must equal grating.period = \"{:.6g} nm\" (two "
          "gratings of different periods are not built)",
          spec.path.string(), b2.grating.period * 1e9, b1.grating.period * 1e9));
    GratingGratingOptions o;
    o.orders = spec.orders;
    o.bloch_rel_tol = std::clamp(0.3 * spec.frequency.rel_tol, 1e-12, 1e-2);
    o.offset = spec.offsets.empty() ? 0.0 : spec.offsets.front();
    return std::make_shared<GratingGrating>(b1.grating, b2.grating, spec.medium, o);
  };
  return k;
}

}  // namespace roundtrip::io
