#pragma once
// Case-file descriptions of materials and planar bodies -> solver objects.
//
// A material is named by a string: a built-in name (see solver/materials/library.h) or the name
// of a user table [materials.NAME] in the case file. A plate is a TOML table:
//   { material = "gold-drude" }                                     half-space
//   { material = "silicon", layers = [ { material = "gold-drude", thickness = "100 nm" } ] }
// (layers listed from the gap side down to the substrate `material`), or a hydrodynamic nonlocal
// metal (solver/planar/hydrodynamic.h), beta from v_F by beta^2 = (3/5) v_F^2 unless
// regime = "low-frequency" (1/3):
//   { material = "gold-drude",
//     nonlocal = { model = "hydrodynamic", fermi_velocity = "1.40e6 m/s" } }
//   { material = "gold-drude", nonlocal = { model = "hydrodynamic", beta = "1.08e6 m/s" } }
// (`layers` and `nonlocal` together: local films on the nonlocal substrate).
// User materials [materials.NAME]: model = "drude" | "plasma" | "constant" | "oscillators" |
// "drude-lorentz" | "generalized-plasma" | "perfect-conductor" | "table", parameters
// plasma_frequency, damping (frequency unit strings, io/units.h), eps, eps_inf (numbers),
// oscillators = [{strength, frequency, damping}], file / low_frequency for tables
// (solver/materials/tabulated.h), optional source = "citation". Unknown keys are errors.
#include <toml++/toml.h>

#include <filesystem>
#include <map>
#include <string>

#include "solver/materials/material.h"
#include "solver/planar/planar.h"

namespace roundtrip::io {

/// Materials built while parsing one case, shared by all of its scan points: a user material is
/// keyed by its name, the case directory and its definition as written; a table file is read
/// once per path and its material is keyed by the file's contents hash (FNV-1a 64), so a scan of
/// 10^4 points builds a 10^6-row table once, not 10^4 times. Not thread-safe: one parse at a time.
class MaterialCache {
 public:
  MaterialPtr find(const std::string& key) const;
  void put(const std::string& key, MaterialPtr m);
  /// The contents hash of a table file, read once per path.
  const std::string& digest(const std::filesystem::path& file);
  std::size_t size() const { return materials_.size(); }

 private:
  std::map<std::string, MaterialPtr> materials_;
  std::map<std::string, std::string> digests_;
};

/// While a scope is alive, every MaterialResolver built on this thread looks up and stores its
/// user materials in `cache` (scopes nest; null disables the cache).
class MaterialCacheScope {
 public:
  explicit MaterialCacheScope(MaterialCache* cache);
  ~MaterialCacheScope();
  MaterialCacheScope(const MaterialCacheScope&) = delete;
  MaterialCacheScope& operator=(const MaterialCacheScope&) = delete;

 private:
  MaterialCache* previous_;
};

/// Materials known to one case: built-ins plus the case's [materials.*] tables.
class MaterialResolver {
 public:
  /// `user` may be null (no [materials] table). `case_dir` anchors relative table paths. Every
  /// user material is built here, so errors in unused definitions surface too (CaseError).
  MaterialResolver(const toml::table* user, std::filesystem::path case_dir);
  /// The case file's directory (anchors relative table paths).
  const std::filesystem::path& directory() const { return dir_; }
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
