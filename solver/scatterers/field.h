#pragma once
#include <string>

namespace roundtrip {

/// Electromagnetic field, or the scalar validation fields (Dirichlet / Neumann conditions on both
/// bodies; materials are then ignored).
enum class FieldKind { kElectromagnetic, kDirichlet, kNeumann };
std::string to_string(FieldKind f);
FieldKind field_kind_from_string(const std::string& s);  // throws std::invalid_argument

}  // namespace roundtrip
