#pragma once
// Body and configuration descriptions, and their validity checks, before any solver object
// exists. geometry/ knows shapes and sizes, never physics. Conventions: every length in metres;
// the two bodies face each other across the gap plane: the lower body lies below z = 0 (a
// plate's surface is z = 0, a sphere touches z = 0 from below), the upper body starts at z = L.
// A gap L is the smallest surface-to-surface distance (sphere above a plate: L = D - R with D
// the centre-to-plate distance; two spheres: L = d - R1 - R2 with d the centre distance).
// Checks return an empty string when the value is valid, else a short sentence saying what is
// wrong (callers add the field name, the value and the file position).
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace roundtrip::geometry {

/// Gap L (m): finite and > 0 (L = 0 is contact, L < 0 overlap; neither has a finite energy),
/// and within 1e-10 m ... 1 m (reasons in configuration.cc and README "Accepted ranges").
std::string gap_problem(double gap);
/// Sphere radius R (m): finite, within 1e-9 m ... 1 m.
std::string radius_problem(double radius);
/// Cylinder radius R (m): the same range, with the wording of a cylinder.
std::string cylinder_radius_problem(double radius);
/// Layer or shell thickness (m): finite, within 1e-10 m ... 1 m.
std::string thickness_problem(double thickness);

/// Grating period Lambda (m): finite, within 1e-9 m ... 1 m.
std::string period_problem(double period);
/// Grating filling factor f: within [0, 1].
std::string filling_problem(double filling);

/// The shapes a body can have. A plate is a half-space or a planar stack (its layers live in
/// the solver's planar body); a sphere may carry concentric shells; a cylinder is infinite along
/// y (drawn with a finite length); an atom is a point polarizability (no size; the gap is its
/// distance from the facing surface); a grating is 1D-periodic (lamellar: ridges of width
/// f Lambda and height `depth` on a substrate, ridge tops at z = 0).
enum class Shape { kPlate, kSphere, kCylinder, kAtom, kGrating };
std::string to_string(Shape s);

struct Body {
  std::string name;  ///< the case-file table, e.g. "plate", "sphere2"; the preview's group name
  Shape shape = Shape::kPlate;
  double radius = 0.0;                    ///< spheres, cylinders: outer radius (m)
  std::vector<double> shell_thicknesses;  ///< spheres, cylinders: shells, outermost first (m)
  double period = 0.0;                    ///< gratings: period (m)
  double filling = 0.0;                   ///< gratings: ridge fraction of the period
  double depth = 0.0;                     ///< gratings: ridge height (m)
  /// Empty if valid, else a sentence naming the bad field and value.
  std::string validate() const;
};

/// Two bodies across a list of gaps (materials live in the solver objects).
struct Configuration {
  std::string kind;  ///< the geometry kind's name, e.g. "sphere-plate" (io/kinds)
  Body lower, upper;
  std::vector<double> gaps;  ///< m, each > 0
  /// Empty if valid, else a sentence naming the first bad field and value.
  std::string validate() const;
};

}  // namespace roundtrip::geometry
