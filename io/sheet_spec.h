#pragma once
// plate.sheet = { ... }: a conducting sheet on the plate's material (solver/planar/sheet.h).
//   { model = "drude", density = "1e17 m^-2", mass_ratio = 0.03, damping = "5 meV" }
//     sigma(i xi) = D/(xi + gamma), D = n e^2/(mass_ratio m_e); density in m^-2 or cm^-2;
//     damping in the case-file frequency units (0 allowed: a plasma-like sheet);
//   { model = "constant", conductance = "6.08e-5 S" }   sigma(i xi) = sigma_0 (S) at every xi.
#include <toml++/toml.h>

#include <string>

#include "solver/planar/planar.h"

namespace roundtrip::io {

/// Throws CaseError "file:line: <field>.<key> = <value>: what is wrong".
PlanarPtr sheet_from_toml(const toml::node& sheet, const std::string& field, MaterialPtr substrate);

}  // namespace roundtrip::io
