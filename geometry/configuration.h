#pragma once
// Body and configuration descriptions, and their validity checks, before any solver object
// exists. Conventions: every length in metres; a gap L is the smallest surface-to-surface
// distance (for a sphere above a plate, L = D - R with D the centre-to-plate distance).
// Checks return an empty string when the value is valid, else a short sentence saying what is
// wrong (callers add the field name, the value and the file position).
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace roundtrip::geometry {

enum class ConfigurationKind { kPlatePlate, kSpherePlate };
std::string to_string(ConfigurationKind k);
/// "plate-plate" or "sphere-plate"; nullopt for anything else.
std::optional<ConfigurationKind> configuration_kind_from_string(std::string_view s);
/// All accepted spellings, for error messages and help texts.
std::vector<std::string> configuration_kind_names();

/// Gap L (m): finite and > 0 (L = 0 is contact, L < 0 overlap; neither has a finite energy),
/// and within 1e-10 m ... 1 m (reasons in configuration.cc and README "Accepted ranges").
std::string gap_problem(double gap);
/// Sphere radius R (m): finite, within 1e-9 m ... 1 m.
std::string radius_problem(double radius);
/// Layer thickness (m): finite, within 1e-10 m ... 1 m.
std::string thickness_problem(double thickness);

struct SphereBody {
  double radius = 0.0;  ///< R (m)
};

/// A configuration of bodies at a list of gaps (materials live in the solver objects).
struct Configuration {
  ConfigurationKind kind = ConfigurationKind::kPlatePlate;
  std::optional<SphereBody> sphere;  ///< present exactly for sphere-plate
  std::vector<double> gaps;          ///< m, each > 0
  /// Empty if valid, else a sentence naming the first bad field and value.
  std::string validate() const;
};

}  // namespace roundtrip::geometry
