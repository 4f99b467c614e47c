#pragma once
// Built-in materials, addressed by name from case files and the CLI.
//
// Every entry carries its source(): a citation, "common practice" for conventional parameter
// choices, and "from memory" where the numbers were recalled and not checked against the paper.
// All models are evaluated on the imaginary axis, eps(i xi), xi in rad/s (models.h).
#include <string>
#include <vector>

#include "solver/materials/material.h"

namespace roundtrip {

/// Names of the built-in materials, in a fixed order (vacuum first).
std::vector<std::string> builtin_material_names();

/// The built-in material `name`, or nullptr if the name is unknown. Instances are shared.
MaterialPtr builtin_material(const std::string& name);

}  // namespace roundtrip
