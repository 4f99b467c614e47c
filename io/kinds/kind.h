#pragma once
// Geometry kinds: the one registry (io/kinds/registry.cc) maps a case's `geometry = "..."` to
// everything the kind supplies. The case parser, run loop, table, HDF5 writer, plan, plot and
// preview ask the registry (or the Geometry it builds) and know no kind by name.
//
// A kind says which two body tables it reads and their shapes (the lower body first: below the
// gap plane; geometry/configuration.h), which table defaults to which ([plate2] to [plate]),
// whether scalar test fields are allowed, which extra [numerics] keys it reads, the scale of its
// results, and how to build its solver Geometry from a parsed case. The solver object then
// gives its PFA, cost model, truncations and units (solver/geometries/geometry.h).
//
// Adding a kind: its solver files (solver/geometries/<kind>.{h,cc}), one file here
// (io/kinds/<kind>.cc) with a function returning its GeometryKind, and one line in
// registry.cc. DEVELOPERS.md ("Adding a geometry") lists the exact files.
#include <functional>
#include <memory>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "geometry/configuration.h"
#include "solver/geometries/geometry.h"
#include "solver/result_scale.h"

namespace roundtrip::io {

struct CaseSpec;

/// Line of table.key in the case text (0 if absent: a defaulted table); for error messages.
int case_line_of(const CaseSpec& spec, const std::string& table, const char* key);

/// One body table a kind reads.
struct BodySlot {
  std::string table;  ///< "plate", "sphere2": the case-file table and its name
  geometry::Shape shape = geometry::Shape::kPlate;
  std::string defaults_to;  ///< a slot's table used when this one is absent; "" = required
};

struct GeometryKind {
  std::string name;     ///< geometry = "<name>"
  std::string summary;  ///< one line for help texts and the README
  BodySlot lower, upper;
  ResultScale scale = ResultScale::kTotal;  ///< must equal the built Geometry's scale()
  bool scalar_fields = false;               ///< accepts field = "dirichlet" | "neumann"
  std::vector<std::string> numerics_keys;   ///< [numerics] keys beyond rel_tol, frequency_rule
  /// Accepts [medium] ionic_strength (ions screening the static TM term, planar/electrolyte.h).
  bool electrolyte = false;
  /// With electrolyte: why this case's bodies (and field) cannot take ions, or empty; asked where
  /// [medium] ionic_strength is read, so the error names its file:line. May be empty.
  std::function<std::string(const CaseSpec&)> electrolyte_problem;
  bool offsets = false;  ///< reads [offsets] (lateral offsets of the upper body, offsets_spec.h)
  /// reads the optional [pfa_sphere] table (radius = "..."): the upper body taken as a sphere of
  /// that radius in the PFA, F = 2 pi R E(L) beside the exact per-area result (CaseSpec).
  bool pfa_sphere = false;
  /// Extra result columns L^p E for each p (the table's "L³E", HDF5 results/energy_gap<p> in
  /// J m^p): atom-plate gives {3, 4}, whose plateaus are -C3 (non-retarded) and -C4 (retarded).
  std::vector<int> energy_gap_powers;
  /// Extra HDF5 file attributes describing the bodies beyond their lengths: text attributes
  /// (name, value) and numbers (name ending in its SI unit, e.g. "atom_alpha0_m3", value).
  std::function<std::vector<std::pair<std::string, std::string>>(const CaseSpec&)> body_texts;
  std::function<std::vector<std::pair<std::string, double>>(const CaseSpec&)> body_numbers;
  /// The solver object of a parsed case; throws CaseError for what it cannot compute.
  std::function<std::shared_ptr<Geometry>(const CaseSpec&)> build;
};

/// Every kind, in the order help texts list them.
const std::vector<GeometryKind>& geometry_kinds();
/// The kind named `name`, or null.
const GeometryKind* find_geometry_kind(std::string_view name);
std::vector<std::string> geometry_kind_names();
/// Every body table any kind reads (for the case file's top-level keys).
std::vector<std::string> body_table_names();

// The entries (one file each, io/kinds/<kind>.cc).
GeometryKind plate_plate_kind();
GeometryKind sphere_plate_kind();
GeometryKind sphere_sphere_kind();
GeometryKind cylinder_plate_kind();
GeometryKind cylinder_cylinder_kind();
GeometryKind atom_plate_kind();
GeometryKind grating_plate_kind();
GeometryKind grating_grating_kind();

}  // namespace roundtrip::io
