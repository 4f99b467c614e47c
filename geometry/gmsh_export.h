#pragma once
// Geometry preview: the bodies of a configuration at one gap as a Gmsh model with a surface mesh
// (.msh, Gmsh's own format), to look at in Gmsh before a long run. Built with the Gmsh SDK's
// OpenCASCADE kernel (its C API, gmshc.h, loaded with dlopen on first use).
//
// Layout (lengths in micrometres in the file: OpenCASCADE's fixed tolerance of 1e-7 model units
// would swallow a 100 nm gap written in metres): the plate's surface facing the gap is z = 0 and
// the lower body lies below z = 0 and the upper one above z = L (geometry/configuration.h). A
// plate is a slab W x W x T standing for a half-space or a stack; a sphere of radius R is
// centred at z = -R (lower) or z = L + R (upper). With spheres W = 4 R_max and T = R_max / 2,
// else W = 20 L and T = W / 4. Shells are listed in the description; the outer surface is drawn.
// Physical groups: one volume and one surface ("<name> surface") per body, named by its
// case-file table ("plate", "plate2", "sphere", "sphere2").
#include <filesystem>
#include <string>

#include "geometry/configuration.h"

namespace roundtrip::geometry {

/// Metres to the preview file's length unit (micrometres).
inline constexpr double kPreviewUnitsPerMetre = 1e6;

struct PreviewSummary {
  std::string description;  ///< one line: bodies, sizes, gap (with units)
  std::size_t nodes = 0;    ///< mesh nodes written
  std::size_t triangles = 0;
};

/// Write the configuration `c` at gap `gap` (m, > 0) to `path` (must end in .msh). The file is
/// written beside the target and renamed, so it is never partial. Throws std::invalid_argument
/// for an invalid configuration or gap, std::runtime_error if Gmsh fails.
PreviewSummary export_gmsh(const Configuration& c, double gap, const std::filesystem::path& path);

}  // namespace roundtrip::geometry
