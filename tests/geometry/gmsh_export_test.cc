// Geometry preview files read back with the Gmsh SDK (gmsh::open): the bodies are where the
// case puts them (sphere of radius R at gap L above the plate's surface z = 0), in micrometres.
#include "geometry/gmsh_export.h"

#include <fmt/format.h>
#include <gmsh.h>
#include <gtest/gtest.h>
#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <limits>
#include <map>
#include <set>
#include <sstream>
#include <string>

namespace roundtrip::geometry {
namespace {

namespace fs = std::filesystem;

struct Box {
  double lo[3] = {1e300, 1e300, 1e300}, hi[3] = {-1e300, -1e300, -1e300};
  std::vector<double> xyz;  // every node, x y z
};

// Bounding boxes of the mesh nodes of each named 2D physical group, from the file.
std::map<std::string, Box> read_back(const fs::path& file, int& volumes) {
  std::map<std::string, Box> out;
  gmsh::initialize(0, nullptr, false);
  gmsh::option::setNumber("General.Terminal", 0);
  gmsh::open(file.string());
  gmsh::vectorpair vols;
  gmsh::model::getEntities(vols, 3);
  volumes = static_cast<int>(vols.size());
  gmsh::vectorpair groups;
  gmsh::model::getPhysicalGroups(groups, 2);
  for (const auto& [dim, tag] : groups) {
    std::string name;
    gmsh::model::getPhysicalName(dim, tag, name);
    std::vector<int> entities;
    gmsh::model::getEntitiesForPhysicalGroup(dim, tag, entities);
    Box& b = out[name];
    for (int e : entities) {
      std::vector<std::size_t> nodes;
      std::vector<double> xyz, uv;
      gmsh::model::mesh::getNodes(nodes, xyz, uv, dim, e, true, false);
      b.xyz.insert(b.xyz.end(), xyz.begin(), xyz.end());
      for (std::size_t i = 0; i < nodes.size(); ++i)
        for (int k = 0; k < 3; ++k) {
          b.lo[k] = std::min(b.lo[k], xyz[3 * i + k]);
          b.hi[k] = std::max(b.hi[k], xyz[3 * i + k]);
        }
    }
  }
  gmsh::finalize();
  return out;
}

// Poles and the plate's faces are mesh vertices, so z extents are exact up to round-off, and
// every sphere node lies on the sphere. Lateral extents are only sampled by nodes: with element
// size h <= 2 pi R / 10 (curvature rule, gmsh_export.cc) the nearest node to (0, -R) can sit
// h^2 / (2 R) = 0.2 R inside.
constexpr double kRoundOff = 1e-9;  // relative: Gmsh writes 16 significant digits
constexpr double kSampling = 0.2;   // relative to R

fs::path temp_file(const std::string& name) {
  const fs::path d = fs::temp_directory_path() / fmt::format("roundtrip_gmsh_{}", getpid());
  fs::create_directories(d);
  return d / name;
}

Configuration sphere_plate(double radius) {
  Configuration c;
  c.kind = "sphere-plate";
  c.lower = Body{"plate", Shape::kPlate, 0.0, {}};
  c.upper = Body{"sphere", Shape::kSphere, radius, {}};
  return c;
}

TEST(GmshExport, SpherePlateReadsBackWithRadiusAndGapOfTheCase) {
  Configuration c = sphere_plate(5e-6);
  c.gaps = {200e-9};
  const fs::path f = temp_file("sp.msh");
  const PreviewSummary s = export_gmsh(c, 200e-9, f);
  EXPECT_GT(s.triangles, 100u);
  int volumes = 0;
  const auto boxes = read_back(f, volumes);
  EXPECT_EQ(volumes, 2);
  ASSERT_TRUE(boxes.count("sphere surface") && boxes.count("plate surface"));
  const Box& sp = boxes.at("sphere surface");
  const Box& pl = boxes.at("plate surface");
  const double R = 5.0, L = 0.2;  // um
  EXPECT_NEAR(sp.lo[2], L, R * kRoundOff) << "sphere bottom at the gap";
  EXPECT_NEAR(sp.hi[2], L + 2 * R, R * kRoundOff);
  EXPECT_NEAR(sp.hi[0], R, R * kSampling);
  EXPECT_NEAR(sp.lo[1], -R, R * kSampling);
  double worst = 0.0;
  for (std::size_t i = 0; i + 2 < sp.xyz.size(); i += 3)
    worst = std::max(worst,
                     std::abs(std::hypot(sp.xyz[i], sp.xyz[i + 1], sp.xyz[i + 2] - (L + R)) - R));
  EXPECT_LT(worst, R * 1e-6) << "sphere nodes lie on |x - (0, 0, L + R)| = R";
  EXPECT_GT(sp.xyz.size(), 300u);
  EXPECT_NEAR(pl.hi[2], 0.0, R * kRoundOff) << "plate surface at z = 0";
  EXPECT_NEAR(sp.lo[2] - pl.hi[2], L, L * 1e-6) << "surface-to-surface gap";
  EXPECT_NEAR(pl.hi[0] - pl.lo[0], 4 * R, R * kRoundOff);
  fs::remove_all(f.parent_path());
}

TEST(GmshExport, TwoPlatesReadBackWithTheGapBetweenThem) {
  Configuration c;
  c.kind = "plate-plate";
  c.lower = Body{"plate", Shape::kPlate, 0.0, {}};
  c.upper = Body{"plate2", Shape::kPlate, 0.0, {}};
  c.gaps = {100e-9};
  const fs::path f = temp_file("pp.msh");
  export_gmsh(c, 100e-9, f);
  int volumes = 0;
  const auto boxes = read_back(f, volumes);
  EXPECT_EQ(volumes, 2);
  ASSERT_TRUE(boxes.count("plate surface") && boxes.count("plate2 surface"));
  EXPECT_NEAR(boxes.at("plate2 surface").lo[2] - boxes.at("plate surface").hi[2], 0.1,
              0.1 * kRoundOff);
  fs::remove_all(f.parent_path());
}

TEST(GmshExport, BadGapsRadiiAndNamesAreRefusedBeforeAnythingIsWritten) {
  Configuration c = sphere_plate(-1e-6);
  c.gaps = {1e-7};
  const fs::path f = temp_file("bad.msh");
  EXPECT_THROW(export_gmsh(c, 1e-7, f), std::invalid_argument);
  c.upper.shell_thicknesses = {0.5e-6, 0.6e-6};  // thicker than the radius together
  c.upper.radius = 1e-6;
  EXPECT_THROW(export_gmsh(c, 1e-7, f), std::invalid_argument);
  c.upper.shell_thicknesses.clear();
  EXPECT_THROW(export_gmsh(c, 0.0, f), std::invalid_argument);
  EXPECT_THROW(export_gmsh(c, -1e-9, f), std::invalid_argument);
  EXPECT_THROW(export_gmsh(c, std::numeric_limits<double>::quiet_NaN(), f), std::invalid_argument);
  EXPECT_THROW(export_gmsh(c, 1e-7, temp_file("bad.stl")), std::invalid_argument);
  EXPECT_FALSE(fs::exists(f));
  fs::remove_all(f.parent_path());
}

// `roundtrip preview` on the shipped AFM case: the smallest gap of the case by default.
TEST(GmshExport, PreviewCommandWritesTheCaseAtItsSmallestGap) {
  const fs::path f = temp_file("afm.msh");
  const std::string cmd =
      fmt::format("'{}' preview '{}/cases/sphere_plate_afm.toml' -o '{}' > '{}.out' 2>&1",
                  ROUNDTRIP_CLI, ROUNDTRIP_SOURCE_DIR, f.string(), f.string());
  ASSERT_EQ(std::system(cmd.c_str()), 0);
  int volumes = 0;
  const auto boxes = read_back(f, volumes);
  ASSERT_TRUE(boxes.count("sphere surface"));
  const Box& sp = boxes.at("sphere surface");
  EXPECT_NEAR(sp.lo[2], 0.2, 0.2 * kRoundOff) << "case: from = \"200 nm\"";
  EXPECT_NEAR(sp.hi[2] - sp.lo[2], 10.0, 10.0 * kRoundOff) << "case: radius = \"5 um\"";

  // Issue 16, item 6: the counts printed are those of the file (it printed 1118 nodes for a file
  // of 448), and README names the physical groups as the file has them. Read from the MSH 4.1
  // text itself (Gmsh reference manual, "MSH file format": $Nodes and $Elements open with
  // "numEntityBlocks numNodes|numElements minTag maxTag"; $PhysicalNames lists dim, tag, "name").
  std::ifstream out(f.string() + ".out");
  const std::string printed((std::istreambuf_iterator<char>(out)), {});
  std::ifstream msh(f);
  std::string line;
  long file_nodes = -1, file_elements = -1;
  std::set<std::string> file_groups;
  while (std::getline(msh, line)) {
    if (line == "$Nodes" || line == "$Elements") {
      const bool nodes = line == "$Nodes";
      std::getline(msh, line);
      std::istringstream head(line);
      long blocks = 0, count = 0;
      head >> blocks >> count;
      (nodes ? file_nodes : file_elements) = count;
    } else if (line == "$PhysicalNames") {
      std::getline(msh, line);
      for (int n = std::stoi(line); n > 0 && std::getline(msh, line); --n)
        file_groups.insert(line.substr(line.find('"') + 1, line.rfind('"') - line.find('"') - 1));
    }
  }
  EXPECT_EQ(file_nodes, 448) << "the AFM case's preview as written by Gmsh 4.x here";
  EXPECT_NE(printed.find(fmt::format("{} mesh nodes, {} triangles", file_nodes, file_elements)),
            std::string::npos)
      << "printed: " << printed << "file: " << file_nodes << " nodes, " << file_elements
      << " elements (all triangles: only surface groups have elements)";
  // The quoted group names of README's `roundtrip preview` paragraph (a sphere over a plate).
  std::ifstream readme(fs::path(ROUNDTRIP_SOURCE_DIR) / "README.md");
  std::string paragraph;
  bool in = false;
  while (std::getline(readme, line)) {
    if (line.starts_with("roundtrip preview ")) {
      in = true;
      continue;
    }
    if (in && line.starts_with("roundtrip ")) break;
    if (in) paragraph += line + " ";
  }
  std::set<std::string> readme_groups;
  for (std::size_t a = paragraph.find('"'); a != std::string::npos;) {
    const std::size_t b = paragraph.find('"', a + 1);
    if (b == std::string::npos) break;
    readme_groups.insert(paragraph.substr(a + 1, b - a - 1));
    a = paragraph.find('"', b + 1);
  }
  EXPECT_EQ(readme_groups, file_groups) << "README: " << paragraph;
  fs::remove_all(f.parent_path());
}

TEST(GmshExport, TwoSpheresStandOnEitherSideOfTheGap) {
  Configuration c;
  c.kind = "sphere-sphere";
  c.lower = Body{"sphere", Shape::kSphere, 2e-6, {}};
  c.upper = Body{"sphere2", Shape::kSphere, 1e-6, {0.1e-6}};
  c.gaps = {300e-9};
  const fs::path f = temp_file("ss.msh");
  const PreviewSummary s = export_gmsh(c, 300e-9, f);
  EXPECT_NE(s.description.find("1 shell"), std::string::npos) << s.description;
  int volumes = 0;
  const auto boxes = read_back(f, volumes);
  EXPECT_EQ(volumes, 2);
  ASSERT_TRUE(boxes.count("sphere surface") && boxes.count("sphere2 surface"));
  const Box& lo = boxes.at("sphere surface");
  const Box& up = boxes.at("sphere2 surface");
  EXPECT_NEAR(lo.hi[2], 0.0, 2.0 * kRoundOff) << "lower sphere touches z = 0 from below";
  EXPECT_NEAR(up.lo[2] - lo.hi[2], 0.3, 0.3 * 1e-6) << "surface-to-surface gap";
  EXPECT_NEAR(up.hi[2] - up.lo[2], 2.0, 2.0 * kRoundOff) << "upper diameter";
  fs::remove_all(f.parent_path());
}

// Coated cylinders: the shells are named in the description and the outer surface is drawn, so
// the surface-to-surface gap is between the outer radii (geometry/gmsh_export.h).
TEST(GmshExport, CoatedCylindersListTheirShellsAndDrawTheOuterSurface) {
  Configuration c;
  c.kind = "cylinder-cylinder";
  c.lower = Body{"cylinder", Shape::kCylinder, 2e-6, {0.1e-6, 0.2e-6}};
  c.upper = Body{"cylinder2", Shape::kCylinder, 1e-6, {}};
  c.gaps = {300e-9};
  const fs::path f = temp_file("cc.msh");
  const PreviewSummary s = export_gmsh(c, 300e-9, f);
  EXPECT_NE(s.description.find("2 shells, outer surface drawn"), std::string::npos)
      << s.description;
  int volumes = 0;
  const auto boxes = read_back(f, volumes);
  EXPECT_EQ(volumes, 2);
  ASSERT_TRUE(boxes.count("cylinder surface") && boxes.count("cylinder2 surface"));
  const Box& lo = boxes.at("cylinder surface");
  const Box& up = boxes.at("cylinder2 surface");
  EXPECT_NEAR(lo.hi[2], 0.0, kSampling * 2.0) << "lower cylinder reaches z = 0";
  EXPECT_NEAR(lo.lo[2], -4.0, kSampling * 2.0) << "lower outer diameter";
  EXPECT_NEAR(up.lo[2], 0.3, kSampling * 1.0) << "gap to the outer surface";
  fs::remove_all(f.parent_path());
}

}  // namespace
}  // namespace roundtrip::geometry
