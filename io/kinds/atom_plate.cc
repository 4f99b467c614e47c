// geometry = "atom-plate": an atom at distance z above a plate, the Casimir-Polder free energy
// (solver/geometries/atom_plate.h); total energy (J), force (N) and gradient (N/m) against z.
#include "solver/geometries/atom_plate.h"

#include <fmt/format.h>

#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "io/case_file.h"
#include "io/errors.h"
#include "io/kinds/kind.h"
#include "solver/planar/electrolyte.h"

namespace roundtrip::io {

GeometryKind atom_plate_kind() {
  GeometryKind k;
  k.name = "atom-plate";
  k.summary = "a ground-state atom above a plate: Casimir-Polder free energy against z";
  k.lower = {"plate", geometry::Shape::kPlate, ""};
  k.upper = {"atom", geometry::Shape::kAtom, ""};
  k.scale = ResultScale::kTotal;
  k.scalar_fields = false;
  k.energy_gap_powers = {3, 4};
  k.electrolyte = true;  // [medium] ionic_strength screens the static term (atom_plate.h)  // z^3 U
                         // -> -C3 (non-retarded), z^4 U -> -C4 (retarded, T = 0)
  k.body_texts = [](const CaseSpec& spec) {
    const Polarizability& a = *spec.body("atom").atom;
    return std::vector<std::pair<std::string, std::string>>{
        {"atom_model", a.name()},
        {"atom_polarizability", a.description()},
        {"atom_source", a.source()}};
  };
  k.body_numbers = [](const CaseSpec& spec) {
    const double a0 = spec.body("atom").atom->alpha(0.0);  // alpha(0)/(4 pi eps_0), m^3
    return std::vector<std::pair<std::string, double>>{{"atom_alpha0_m3", a0},
                                                       {"atom_alpha0_au", a0 / kBohrVolume}};
  };
  k.build = [](const CaseSpec& spec) -> std::shared_ptr<Geometry> {
    const BodySpec& plate = spec.body("plate");
    const BodySpec& atom = spec.body("atom");
    try {
      // Ions in the medium (planar/electrolyte.h): kappa from I, the medium's eps(0) and this T.
      const double kappa = std::sqrt(electrolyte_kappa_sq(spec.ionic_strength,
                                                          spec.medium->static_limit().static_eps,
                                                          spec.frequency.temperature_K));
      return make_atom_plate(atom.atom, plate.plate, spec.medium, kappa);
    } catch (const std::invalid_argument& e) {
      throw CaseError(fmt::format("{}: {}", spec.path.string(), e.what()));
    }
  };
  return k;
}

}  // namespace roundtrip::io
