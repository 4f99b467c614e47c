#include "geometry/gmsh_export.h"

#include <fmt/format.h>
#include <gmsh.h>
#include <unistd.h>

#include <cmath>
#include <mutex>
#include <stdexcept>
#include <vector>

namespace roundtrip::geometry {
namespace {

// Gmsh keeps global state: one export at a time.
std::mutex g_gmsh_mutex;

// Mesh sizes: about 10 elements around the smallest body size (a preview, meshed in well under
// a second), coarser on the large plates.
constexpr double kElementsPerSize = 10.0;

std::string length_text(double metres) {
  if (metres >= 1e-6) return fmt::format("{:.4g} um", metres * 1e6);
  return fmt::format("{:.4g} nm", metres * 1e9);
}

struct GmshSession {
  GmshSession() {
    gmsh::initialize(0, nullptr, false);
    gmsh::option::setNumber("General.Terminal", 0);
    gmsh::option::setNumber("General.Verbosity", 1);
  }
  ~GmshSession() { gmsh::finalize(); }
};

}  // namespace

PreviewSummary export_gmsh(const Configuration& c, double gap, const std::filesystem::path& path) {
  if (const std::string p = c.validate(); !p.empty()) throw std::invalid_argument(p);
  if (const std::string p = gap_problem(gap); !p.empty())
    throw std::invalid_argument(fmt::format("gap = {} m: {}", gap, p));
  if (path.extension() != ".msh")
    throw std::invalid_argument(fmt::format(
        "\"{}\": the preview is a Gmsh mesh file, its name must end in .msh", path.string()));

  const double u = kPreviewUnitsPerMetre;
  const double L = gap * u;
  PreviewSummary summary;
  std::lock_guard<std::mutex> lock(g_gmsh_mutex);
  GmshSession session;
  gmsh::model::add("roundtrip-preview");
  std::vector<std::pair<int, std::string>> volumes;
  double fine = 0.0, coarse = 0.0;
  if (c.kind == ConfigurationKind::kSpherePlate) {
    const double R = c.sphere->radius * u;
    const double W = 4.0 * R, T = R / 2.0;
    volumes.emplace_back(gmsh::model::occ::addSphere(0.0, 0.0, L + R, R), "sphere");
    volumes.emplace_back(gmsh::model::occ::addBox(-W / 2, -W / 2, -T, W, W, T), "plate");
    fine = 2.0 * M_PI * R / (4.0 * kElementsPerSize);
    coarse = W / kElementsPerSize;
    summary.description =
        fmt::format("sphere of radius {} centred {} above a plate of {} x {} x {} (gap {})",
                    length_text(c.sphere->radius), length_text(gap + c.sphere->radius),
                    length_text(W / u), length_text(W / u), length_text(T / u), length_text(gap));
  } else {
    const double W = 20.0 * L, T = W / 4.0;
    volumes.emplace_back(gmsh::model::occ::addBox(-W / 2, -W / 2, -T, W, W, T), "plate");
    volumes.emplace_back(gmsh::model::occ::addBox(-W / 2, -W / 2, L, W, W, T), "plate2");
    fine = coarse = W / kElementsPerSize;
    summary.description =
        fmt::format("two plates of {} x {} x {} facing each other across a gap of {}",
                    length_text(W / u), length_text(W / u), length_text(T / u), length_text(gap));
  }
  gmsh::model::occ::synchronize();
  // Volume and surface groups per body: only elements in physical groups are saved, and a
  // surface mesh has only triangles.
  for (const auto& [tag, name] : volumes) {
    const int group = gmsh::model::addPhysicalGroup(3, {tag});
    gmsh::model::setPhysicalName(3, group, name);
    gmsh::vectorpair boundary;
    gmsh::model::getBoundary({{3, tag}}, boundary, false, false, false);
    std::vector<int> faces;
    for (const auto& [d, t] : boundary) faces.push_back(std::abs(t));
    const int sgroup = gmsh::model::addPhysicalGroup(2, faces);
    gmsh::model::setPhysicalName(2, sgroup, name + " surface");
  }
  gmsh::option::setNumber("Mesh.MeshSizeMin", fine / 4.0);
  gmsh::option::setNumber("Mesh.MeshSizeMax", coarse);
  gmsh::option::setNumber("Mesh.MeshSizeFromCurvature", kElementsPerSize);
  // Delaunay (5): the default frontal-Delaunay of Gmsh 4.8 crashed on the sphere's surface.
  gmsh::option::setNumber("Mesh.Algorithm", 5);
  gmsh::model::mesh::generate(2);

  std::vector<std::size_t> nodes;
  std::vector<double> coords, params;
  gmsh::model::mesh::getNodes(nodes, coords, params, -1, -1, true, false);
  summary.nodes = nodes.size();
  std::vector<int> types;
  std::vector<std::vector<std::size_t>> tags, conn;
  gmsh::model::mesh::getElements(types, tags, conn, 2);
  for (std::size_t i = 0; i < types.size(); ++i)
    if (types[i] == 2) summary.triangles += tags[i].size();  // 2: 3-node triangle

  std::filesystem::path temp = path;
  temp.replace_filename(
      fmt::format("{}.tmp.{}.msh", path.stem().string(), static_cast<long>(getpid())));
  gmsh::write(temp.string());
  std::error_code ec;
  if (!std::filesystem::exists(temp, ec))
    throw std::runtime_error(fmt::format("Gmsh did not write \"{}\"", temp.string()));
  std::filesystem::rename(temp, path, ec);
  if (ec) {
    std::filesystem::remove(temp, ec);
    throw std::runtime_error(
        fmt::format("could not move the preview into place at \"{}\"", path.string()));
  }
  return summary;
}

}  // namespace roundtrip::geometry
