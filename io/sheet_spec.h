#pragma once
// plate.sheet = { ... }: a conducting sheet on the plate's material (solver/planar/sheet.h).
//   { model = "drude", density = "1e17 m^-2", mass_ratio = 0.03, damping = "5 meV" }
//     sigma(i xi) = D/(xi + gamma), D = n e^2/(mass_ratio m_e); density in m^-2 or cm^-2;
//     damping in the case-file frequency units (0 allowed: a plasma-like sheet);
//   { model = "constant", conductance = "6.08e-5 S" }   sigma(i xi) = sigma_0 (S) at every xi.
#include <toml++/toml.h>

#include <filesystem>
#include <string>

#include "solver/planar/planar.h"

namespace roundtrip::io {

/// Throws CaseError "file:line: <field>.<key> = <value>: what is wrong".
/// `case_dir` anchors the path of a { model = "table", file = "..." } sheet.
PlanarPtr sheet_from_toml(const toml::node& sheet, const std::string& field, MaterialPtr substrate,
                          const std::filesystem::path& case_dir = ".");

/// plate.screening = { carrier_density = "1e18 cm^-3" } or { debye_length = "4 nm" }: the
/// Debye-Hueckel screened static TM reflection of a dielectric plate (solver/planar/screened.h);
/// the temperature comes from [conditions] when the geometry is built. Optional with
/// carrier_density: statistics = "boltzmann" (default) | "fermi-dirac" | "thomas-fermi", the
/// last two with mass_ratio = m*/m_e (1e-3 to 1e3). carrier_density in m^-3
/// or cm^-3 (> 0, at most 1e30 m^-3); throws CaseError naming file:line, key and value.
PlanarPtr screening_from_toml(const toml::node& screening, const std::string& field,
                              MaterialPtr substrate);

/// plate.d_parameters = { perpendicular = "0.1 nm", parallel = "0 nm" }: Feibelman d-parameters
/// on the half-space of `material` (solver/planar/feibelman.h), each a length (constant, sign:
/// positive towards the gap) or { static = "...", high_frequency = "...", frequency = "5 eV" }
/// (one pole); |d| at most 10 nm; or { model = "table", file = "d.csv" }, d_perp(i xi) and
/// d_par(i xi) from a CSV relative to `case_dir` (read_d_parameters_csv in feibelman.h). Throws
/// CaseError naming file:line, key and value (for a table also the table's file:line and column).
PlanarPtr d_parameters_from_toml(const toml::node& node, const std::string& field,
                                 MaterialPtr substrate,
                                 const std::filesystem::path& case_dir = ".");

/// [medium] ionic_strength = "0.1 mol/L" (also "M", "mM", "mmol/L", "mol/m^3"): the ionic
/// strength I = (1/2) sum c_i z_i^2 of the gap medium in mol/m^3, 0 to 10 mol/L; the medium must
/// be a dielectric with finite eps(0) > 1 (not vacuum). Throws CaseError naming file:line, key and
/// value.
double ionic_strength_from_toml(const toml::node& node, const std::string& field,
                                const Material& medium);

}  // namespace roundtrip::io
