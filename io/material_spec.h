#pragma once
// Case-file descriptions of materials and planar bodies -> solver objects.
//
// A material is named by a string: a built-in name (see solver/materials/library.h) or the name
// of a user table [materials.NAME] in the case file. A plate is a TOML table:
//   { material = "gold-drude" }                                     half-space
//   { material = "silicon", layers = [ { material = "gold-drude", thickness = "100 nm" } ] }
// (layers listed from the gap side down to the substrate `material`).
#include <filesystem>
#include <map>
#include <string>

#include <toml++/toml.h>

#include "solver/materials/material.h"
#include "solver/planar/planar.h"

namespace roundtrip::io {

/// Materials known to one case: built-ins plus the case's [materials.*] tables.
class MaterialResolver {
 public:
  /// `user` may be null (no [materials] table). `case_dir` anchors relative table paths.
  MaterialResolver(const toml::table* user, std::filesystem::path case_dir);
  /// Throws CaseError (io/errors.h) naming `field` and the unknown or malformed value.
  MaterialPtr get(const std::string& name, const std::string& field) const;

 private:
  const toml::table* user_;
  std::filesystem::path dir_;
  mutable std::map<std::string, MaterialPtr> cache_;
};

/// Build a planar body from a plate table; `field` is its dotted key path for messages.
PlanarPtr planar_from_toml(const toml::table& plate, const std::string& field,
                           const MaterialResolver& materials);

}  // namespace roundtrip::io
