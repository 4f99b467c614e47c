#pragma once
// The [atom] table of geometry = "atom-plate" -> a Polarizability (solver/atoms).
//   species = "hydrogen" | "helium" | "rubidium"                        (built-in), or
//   polarizability = { model = "constant", alpha = "4.73e-29 m^3" }
//   polarizability = { model = "oscillators",
//                      oscillators = [{ strength = "309.7 au", frequency = "1.58 eV" }] }
//   polarizability = { model = "table", file = "rb_alpha.csv" }   (CSV format in
//                      solver/atoms/polarizability.h; relative to the case file's directory)
// alpha and strength are polarizability volumes alpha_SI/(4 pi eps_0): "m^3", "cm^3", "nm^3",
// "Å^3" (or "A^3") or "au" (a_0^3); frequencies take the case-file frequency units or "au"
// (E_h/hbar = 4.1341373335e16 rad/s). Oscillators: alpha(i xi) = sum strength w^2/(w^2 + xi^2).
#include <toml++/toml.h>

#include <filesystem>
#include <string>

#include "solver/atoms/polarizability.h"

namespace roundtrip::io {

/// Throws CaseError "file:line: <table>.<key> = <value>: what is wrong".
/// `case_dir` anchors a relative table path.
PolarizabilityPtr atom_from_toml(const toml::table& t, const std::string& table,
                                 const std::filesystem::path& case_dir = ".");

/// A polarizability volume as written ("4.73e-29 m^3", "318.8 au") in m^3; throws CaseError.
double parse_polarizability_volume(const toml::node& n, const std::string& field);

}  // namespace roundtrip::io
