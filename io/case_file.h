#pragma once
// Case files (TOML) -> a validated CaseSpec -> solver objects. The schema is documented in
// README.md ("Case files"). Every unknown key, wrong type, missing field and bad value is a
// CaseError "<file>:<line>: <dotted.key> = <value>: <what is wrong>". Quantities carry units
// (io/units.h); everything in CaseSpec is SI.
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "geometry/configuration.h"
#include "io/kinds/kind.h"
#include "solver/atoms/polarizability.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/geometry.h"
#include "solver/materials/material.h"
#include "solver/planar/planar.h"
#include "solver/run.h"
#include "solver/scatterers/grating_fmm.h"
#include "solver/scatterers/sphere_body.h"

namespace roundtrip::io {

class MaterialCache;  // io/material_spec.h

/// One axis of a [scan]: a case key and the values it takes, as written in the case file.
struct ScanAxis {
  std::string key;  ///< "radius", "temperature", "material", "<body>.material", "<body>.radius"
  std::vector<std::string> values;  ///< e.g. "10 um", "gold-plasma"
};

/// A shell of a sphere: material and thickness (m).
struct ShellSpec {
  MaterialPtr material;
  double thickness = 0.0;
};

/// One body as read from its table: a plate (planar body) or a sphere (radius, material,
/// shells). Which tables a case has and their shapes come from its kind (io/kinds/kind.h).
struct BodySpec {
  std::string table;  ///< "plate", "sphere2", ...
  geometry::Shape shape = geometry::Shape::kPlate;
  std::string defaulted_from;     ///< non-empty: the table was absent and this one was used
  PlanarPtr plate;                ///< plates; null for scalar fields without a plate table
  double radius = 0.0;            ///< spheres: outer radius (m)
  MaterialPtr material;           ///< spheres: core material (null for scalar fields)
  std::vector<ShellSpec> shells;  ///< spheres: outermost first
  PolarizabilityPtr atom;         ///< atoms: the polarizability (io/atom_spec.h)
  LamellarGrating grating;        ///< gratings: profile, ridge and substrate materials
  /// The body's shape and sizes for geometry/ (validation, preview).
  geometry::Body geometry() const;
  /// The shells as the solver takes them (solver/scatterers/sphere_body.h).
  std::vector<SphereShell> solver_shells() const;
  /// A cylinder's material as the cylinder geometries take it: the core material, or with
  /// shells a coated cylinder (solver/scatterers/cylinder_body.h); null for scalar fields.
  MaterialPtr cylinder_material() const;
  /// One line for `check`: "radius 10 um, gold-drude" or the plate's description.
  std::string describe() const;
};

struct CaseSpec {
  std::filesystem::path path;  ///< the case file as given
  std::string text;            ///< its contents, verbatim
  std::string title;
  const GeometryKind* kind = nullptr;     ///< from the registry; never null after parsing
  std::string field = "electromagnetic";  ///< kinds with scalar_fields: or dirichlet | neumann
  std::vector<BodySpec> bodies;           ///< the kind's lower and upper body, in that order
  MaterialPtr medium;                     ///< never null (vacuum by default)
  double ionic_strength = 0.0;            ///< [medium] ionic_strength, mol/m^3 (0: no ions)
  std::vector<double> gaps;               ///< m, each > 0, in the order given
  /// Kinds with GeometryKind::offsets: lateral offsets b (m) from [offsets] (default {0}); a
  /// scan point holds one. With more than one, `scan` ends with the axis "offset".
  std::vector<double> offsets;
  /// Kinds with GeometryKind::pfa_sphere: R (m) of [pfa_sphere] radius; 0 = no table.
  double pfa_sphere_radius = 0.0;
  std::vector<std::string> offset_texts;  ///< each offset as written (io/offsets_spec.h)
  FrequencyRuleOptions frequency;         ///< temperature_K and rel_tol
  Quantities quantities;
  int l_max = 0;             ///< kinds with spheres: multipole cut-off, 0 = automatic
  int orders = 0;            ///< kinds with gratings: diffraction orders -N..N, 0 = automatic
  std::string output_file;   ///< [output] file, empty if not given
  std::string output_where;  ///< "file:line" of output.file, for messages
  /// Every material the case uses (plates, layers, sphere, medium), in order of first mention.
  std::vector<MaterialPtr> materials;
  /// [scan] axes (empty without [scan]). The fields above are those of the first scan point.
  std::vector<ScanAxis> scan;
  /// User materials built by the parse, shared by every scan point of this case.
  std::shared_ptr<MaterialCache> material_cache;

  geometry::Configuration configuration() const;
  /// The body read from `table` (one of the kind's two); throws std::out_of_range otherwise.
  const BodySpec& body(std::string_view table) const;
  /// Body lengths for the HDF5 file: "<table>_radius_m" of each sphere.
  std::vector<std::pair<std::string, double>> body_lengths() const;
};

/// One point of a scan: its parameters (scan key, value as written) and the complete case.
/// `spec.text` and `spec.scan` are left empty in scan points (10^4 copies of a long scan would
/// cost gigabytes): they are those of the CaseSpec the points were made from.
struct ScanPoint {
  std::vector<std::pair<std::string, std::string>> parameters;
  CaseSpec spec;
};

/// Every point of the case's scan, the Cartesian product of the axes in the order of
/// scan_keys() with the last axis varying fastest; without [scan], the case itself (no
/// parameters).
std::vector<ScanPoint> scan_points(const CaseSpec& spec);
/// The keys [scan] accepts for `kind` (null: any kind), in the order scan points vary (slowest
/// first).
std::vector<std::string> scan_keys(const GeometryKind* kind = nullptr);

/// Parse and validate case text; `path` is used in messages and anchors relative table paths.
CaseSpec parse_case(std::string text, const std::filesystem::path& path);
/// Read and parse a case file. A missing, unreadable or non-regular file (directory, device,
/// pipe), one over 16 MiB, text that is not UTF-8 or nested deeper than 64 levels is a CaseError.
CaseSpec load_case(const std::filesystem::path& path);

/// The solver Geometry of a case (its kind's build). Throws CaseError for what the kind cannot
/// compute.
std::shared_ptr<Geometry> build_geometry(const CaseSpec& spec);

/// The case content that fixes the numbers, as (dotted key, value as written) pairs in a
/// canonical order (sorted keys, arrays as key[i]); `title` and [output] are left out, and each
/// table file of a [materials.*] adds its contents' hash. For checkpoint journals.
std::vector<std::pair<std::string, std::string>> case_key_fields(const CaseSpec& spec);

/// Accepted values of the top-level `field` key.
std::vector<std::string> field_names();

}  // namespace roundtrip::io
