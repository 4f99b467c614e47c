#include "geometry/gmsh_export.h"

#include <dlfcn.h>
#include <fmt/format.h>
#include <gmsh.h>  // GMSH_API_VERSION_* only
#include <gmshc.h>
#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <mutex>
#include <stdexcept>
#include <vector>

namespace roundtrip::geometry {
namespace {

// The Gmsh SDK is loaded with dlopen when a preview is asked for: linked normally, its static
// initialisation (OpenCASCADE) costs every `roundtrip` start about 0.13 s. Its C API (gmshc.h)
// gives the signatures; every call reports errors through `ierr`.
#define RT_STR2(x) #x
#define RT_STR(x) RT_STR2(x)
constexpr const char* kGmshLibraries[] = {
    "libgmsh.so." RT_STR(GMSH_API_VERSION_MAJOR) "." RT_STR(GMSH_API_VERSION_MINOR), "libgmsh.so"};

struct GmshApi {
#define RT_GMSH_FN(name) decltype(&::name) name = nullptr
  RT_GMSH_FN(gmshInitialize);
  RT_GMSH_FN(gmshFinalize);
  RT_GMSH_FN(gmshOptionSetNumber);
  RT_GMSH_FN(gmshModelAdd);
  RT_GMSH_FN(gmshModelOccAddSphere);
  RT_GMSH_FN(gmshModelOccAddBox);
  RT_GMSH_FN(gmshModelOccAddCylinder);
  RT_GMSH_FN(gmshModelOccSynchronize);
  RT_GMSH_FN(gmshModelAddPhysicalGroup);
  RT_GMSH_FN(gmshModelSetPhysicalName);
  RT_GMSH_FN(gmshModelGetBoundary);
  RT_GMSH_FN(gmshModelMeshGenerate);
  RT_GMSH_FN(gmshModelMeshGetNodes);
  RT_GMSH_FN(gmshModelMeshGetElementsByType);
  RT_GMSH_FN(gmshWrite);
  RT_GMSH_FN(gmshFree);
#undef RT_GMSH_FN
};

const GmshApi& gmsh_api() {
  static const GmshApi api = [] {
    void* h = nullptr;
    std::string tried;
    for (const char* lib : kGmshLibraries) {
      h = dlopen(lib, RTLD_NOW | RTLD_LOCAL);
      if (h) break;
      tried += (tried.empty() ? "" : ", ") + std::string(lib);
    }
    if (!h)
      throw std::runtime_error(
          fmt::format("the Gmsh SDK could not be loaded (tried {}); install libgmsh-dev", tried));
    GmshApi a;
    const auto load = [&](auto& fn, const char* name) {
      fn = reinterpret_cast<std::remove_reference_t<decltype(fn)>>(dlsym(h, name));
      if (!fn) throw std::runtime_error(fmt::format("the Gmsh SDK lacks {}", name));
    };
#define RT_LOAD(name) load(a.name, #name)
    RT_LOAD(gmshInitialize);
    RT_LOAD(gmshFinalize);
    RT_LOAD(gmshOptionSetNumber);
    RT_LOAD(gmshModelAdd);
    RT_LOAD(gmshModelOccAddSphere);
    RT_LOAD(gmshModelOccAddBox);
    RT_LOAD(gmshModelOccAddCylinder);
    RT_LOAD(gmshModelOccSynchronize);
    RT_LOAD(gmshModelAddPhysicalGroup);
    RT_LOAD(gmshModelSetPhysicalName);
    RT_LOAD(gmshModelGetBoundary);
    RT_LOAD(gmshModelMeshGenerate);
    RT_LOAD(gmshModelMeshGetNodes);
    RT_LOAD(gmshModelMeshGetElementsByType);
    RT_LOAD(gmshWrite);
    RT_LOAD(gmshFree);
#undef RT_LOAD
    return a;
  }();
  return api;
}

// Throws if a Gmsh call reported an error.
void check(int ierr, const char* what) {
  if (ierr != 0) throw std::runtime_error(fmt::format("Gmsh failed in {} (error {})", what, ierr));
}

// Gmsh keeps global state: one export at a time.
std::mutex g_gmsh_mutex;

// Mesh sizes: about 10 elements around the smallest body size (a preview, meshed in well under
// a second), coarser on the large plates.
constexpr double kElementsPerSize = 10.0;

std::string length_text(double metres) {
  if (metres >= 1e-6) return fmt::format("{:.4g} um", metres * 1e6);
  return fmt::format("{:.4g} nm", metres * 1e9);
}

// " (2 shells, outer surface drawn)" for a coated sphere or cylinder, else empty.
std::string shells_text(const Body& b) {
  if (b.shell_thicknesses.empty()) return {};
  return fmt::format(" ({} shell{}, outer surface drawn)", b.shell_thicknesses.size(),
                     b.shell_thicknesses.size() == 1 ? "" : "s");
}

struct GmshSession {
  explicit GmshSession(const GmshApi& g) : g_(g) {
    int e = 0;
    g_.gmshInitialize(0, nullptr, 0, &e);
    check(e, "initialize");
    set("General.Terminal", 0);
    set("General.Verbosity", 1);
  }
  ~GmshSession() {
    int e = 0;
    g_.gmshFinalize(&e);
  }
  void set(const char* option, double v) const {
    int e = 0;
    g_.gmshOptionSetNumber(option, v, &e);
    check(e, option);
  }
  const GmshApi& g_;
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
  const GmshApi& g = gmsh_api();
  GmshSession session(g);
  int e = 0;
  g.gmshModelAdd("roundtrip-preview", &e);
  check(e, "model::add");
  std::vector<std::pair<int, std::string>> volumes;
  double fine = 0.0, coarse = 0.0;
  const auto box = [&](double x, double y, double z, double dx, double dy, double dz) {
    const int t = g.gmshModelOccAddBox(x, y, z, dx, dy, dz, -1, &e);
    check(e, "occ::addBox");
    return t;
  };
  // Sizes: plates are slabs W x W x T standing for half-spaces; W = 4 x the largest sphere
  // radius (spheres present) or 20 L (plates only).
  double rmax = 0.0;
  for (const Body* b : {&c.lower, &c.upper})
    if (b->shape == Shape::kSphere || b->shape == Shape::kCylinder)
      rmax = std::max(rmax, b->radius * u);
  // A grating shows a few periods: W = 5 periods (at least 20 L without spheres).
  double period = 0.0;
  for (const Body* b : {&c.lower, &c.upper})
    if (b->shape == Shape::kGrating) period = std::max(period, b->period * u);
  double W = rmax > 0.0 ? 4.0 * rmax : 20.0 * L;
  if (period > 0.0 && rmax == 0.0) W = std::max(5.0 * period, std::min(W, 50.0 * period));
  const double T = rmax > 0.0 ? rmax / 2.0 : W / 4.0;
  fine = coarse = W / kElementsPerSize;
  std::vector<std::string> parts;
  // The lower body below z = 0, the upper one from z = L up.
  const auto add = [&](const Body& b, bool lower) {
    if (b.shape == Shape::kPlate) {
      volumes.emplace_back(box(-W / 2, -W / 2, lower ? -T : L, W, W, T), b.name);
      parts.push_back(fmt::format("{} {} x {} x {}", b.name, length_text(W / u), length_text(W / u),
                                  length_text(T / u)));
      return;
    }
    if (b.shape == Shape::kAtom) {
      // A point: drawn as a marker sphere of radius L/20 centred at the atom (not to scale).
      const double r = L / 20.0;
      const double za = lower ? 0.0 : L;
      const int tag =
          g.gmshModelOccAddSphere(0.0, 0.0, za, r, -1, -M_PI / 2, M_PI / 2, 2 * M_PI, &e);
      check(e, "occ::addSphere");
      volumes.emplace_back(tag, b.name);
      fine = std::min(fine, 2.0 * M_PI * r / (4.0 * kElementsPerSize));
      parts.push_back(fmt::format("{} at z = {} (marker sphere of radius {}, not to scale)", b.name,
                                  length_text(za / u), length_text(r / u)));
      return;
    }
    if (b.shape == Shape::kGrating) {
      // Ridges along y, centred at x = m period, tops at z = 0 (lower body) or z = L (upper),
      // on a substrate slab; as many whole ridges as fit in W.
      const double p = b.period * u, w = b.filling * p, h = b.depth * u;
      const double zs = lower ? -h - T : L + h;
      volumes.emplace_back(box(-W / 2, -W / 2, zs, W, W, T), b.name);
      const int count = static_cast<int>(std::floor((W - w) / p)) + 1;
      for (int i = 0; i < count && w > 0.0; ++i) {
        const double x = -0.5 * (count - 1) * p + i * p;
        volumes.emplace_back(box(x - w / 2, -W / 2, lower ? -h : L, w, W, h), b.name);
      }
      fine = std::min(fine, std::max(std::min(w, h), p / 20.0) / 2.0);
      parts.push_back(fmt::format("{}: {} ridges of width {} and depth {} (period {}) on a slab",
                                  b.name, count, length_text(w / u), length_text(h / u),
                                  length_text(p / u)));
      return;
    }
    const double R = b.radius * u;
    const double zc = lower ? -R : L + R;
    if (b.shape == Shape::kCylinder) {
      // An infinite cylinder drawn with the length 4R along x (the plate is 4R wide too).
      const int tag =
          g.gmshModelOccAddCylinder(-2.0 * R, 0.0, zc, 4.0 * R, 0.0, 0.0, R, -1, 2 * M_PI, &e);
      check(e, "occ::addCylinder");
      volumes.emplace_back(tag, b.name);
      fine = std::min(fine, 2.0 * M_PI * R / (4.0 * kElementsPerSize));
      parts.push_back(fmt::format(
          "{} of radius {}{} (infinite; drawn {} long) with its axis at z = {}", b.name,
          length_text(b.radius), shells_text(b), length_text(4.0 * b.radius), length_text(zc / u)));
      return;
    }
    const int tag = g.gmshModelOccAddSphere(0.0, 0.0, zc, R, -1, -M_PI / 2, M_PI / 2, 2 * M_PI, &e);
    check(e, "occ::addSphere");
    volumes.emplace_back(tag, b.name);
    fine = std::min(fine, 2.0 * M_PI * R / (4.0 * kElementsPerSize));
    parts.push_back(fmt::format("{} of radius {}{} centred at z = {}", b.name,
                                length_text(b.radius), shells_text(b), length_text(zc / u)));
  };
  add(c.lower, true);
  add(c.upper, false);
  summary.description = fmt::format("{}: {} below, {} above, across a gap of {}", c.kind, parts[0],
                                    parts[1], length_text(gap));
  g.gmshModelOccSynchronize(&e);
  check(e, "occ::synchronize");
  // Volume and surface groups per body: only elements in physical groups are saved, and a
  // surface mesh has only triangles.
  for (auto& [tag, name] : volumes) {
    int vol = tag;
    const int group = g.gmshModelAddPhysicalGroup(3, &vol, 1, -1, &e);
    check(e, "addPhysicalGroup");
    g.gmshModelSetPhysicalName(3, group, name.c_str(), &e);
    check(e, "setPhysicalName");
    int dimtag[2] = {3, tag};
    int* out = nullptr;
    std::size_t n = 0;
    g.gmshModelGetBoundary(dimtag, 2, &out, &n, 0, 0, 0, &e);
    check(e, "getBoundary");
    std::vector<int> faces;
    for (std::size_t i = 1; i < n; i += 2) faces.push_back(std::abs(out[i]));
    g.gmshFree(out);
    const int sgroup = g.gmshModelAddPhysicalGroup(2, faces.data(), faces.size(), -1, &e);
    check(e, "addPhysicalGroup");
    g.gmshModelSetPhysicalName(2, sgroup, (name + " surface").c_str(), &e);
    check(e, "setPhysicalName");
  }
  session.set("Mesh.MeshSizeMin", fine / 4.0);
  session.set("Mesh.MeshSizeMax", coarse);
  session.set("Mesh.MeshSizeFromCurvature", kElementsPerSize);
  // Delaunay (5): the default frontal-Delaunay of Gmsh 4.8 crashed on the sphere's surface.
  session.set("Mesh.Algorithm", 5);
  g.gmshModelMeshGenerate(2, &e);
  check(e, "mesh::generate");

  {
    // Only elements of physical groups are saved, and the mesh is a surface mesh: the file holds
    // the triangles and exactly the nodes they use (the model's node list also has nodes of
    // curves and points counted once per entity that includes its boundary: 1118 against the
    // file's 448 for the tutorial's sphere).
    std::size_t *etags = nullptr, ne = 0, *enodes = nullptr, nn = 0;
    g.gmshModelMeshGetElementsByType(2, &etags, &ne, &enodes, &nn, -1, 0, 1, &e);  // 2: triangle
    check(e, "mesh::getElementsByType");
    summary.triangles = ne;
    std::vector<std::size_t> used(enodes, enodes + nn);
    std::sort(used.begin(), used.end());
    summary.nodes = static_cast<std::size_t>(std::unique(used.begin(), used.end()) - used.begin());
    g.gmshFree(etags);
    g.gmshFree(enodes);
  }

  std::filesystem::path temp = path;
  temp.replace_filename(
      fmt::format("{}.tmp.{}.msh", path.stem().string(), static_cast<long>(getpid())));
  g.gmshWrite(temp.string().c_str(), &e);
  check(e, "write");
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
