// Scans: a [scan] table turns one case into the Cartesian product of its axes, each point a
// complete case; `run` writes one HDF5 file with a group per point and prints one table each.
#include <fmt/format.h>
#include <gtest/gtest.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "common/scratch.h"
#include "io/case_file.h"
#include "io/errors.h"

namespace roundtrip::io {
namespace {

namespace fs = std::filesystem;

const std::string kSphere = roundtrip::testing::kSmallSphereCase;

std::string error_of(const std::string& text) {
  try {
    parse_case(text, "s.toml");
  } catch (const CaseError& e) {
    return e.what();
  }
  return "no error";
}

TEST(Scan, PointsAreTheCartesianProductWithTheLastAxisFastest) {
  const CaseSpec spec = parse_case(kSphere + R"([scan]
radius = ["10 um", "50 um"]
temperature = ["0 K", "300 K"]
sphere.material = ["gold-drude", "gold-plasma"]
)",
                                   "s.toml");
  ASSERT_EQ(spec.scan.size(), 3u);
  const auto points = scan_points(spec);
  ASSERT_EQ(points.size(), 8u);
  EXPECT_EQ(points[0].parameters[0], (std::pair<std::string, std::string>{"radius", "10 um"}));
  EXPECT_EQ(points[1].parameters[2].second, "gold-plasma");
  EXPECT_EQ(points[2].parameters[1].second, "300 K");
  EXPECT_EQ(points[7].parameters[0].second, "50 um");
  EXPECT_EQ(points[0].spec.body("sphere").radius, 10e-6);
  EXPECT_EQ(points[7].spec.body("sphere").radius, 50e-6);
  EXPECT_EQ(points[0].spec.frequency.temperature_K, 0.0);
  EXPECT_EQ(points[3].spec.frequency.temperature_K, 300.0);
  EXPECT_EQ(points[1].spec.body("sphere").material->name(), "gold-plasma");
  EXPECT_EQ(points[1].spec.body("plate").plate->describe().find("plasma"), std::string::npos)
      << "sphere.material leaves the plate alone";
  // The case itself is the first point.
  EXPECT_EQ(spec.body("sphere").radius, 10e-6);
}

TEST(Scan, MaterialSetsEveryBodyAndACaseWithoutScanIsOnePoint) {
  const CaseSpec spec = parse_case(kSphere + "[scan]\nmaterial = [\"gold-plasma\"]\n", "s.toml");
  const auto points = scan_points(spec);
  ASSERT_EQ(points.size(), 1u);
  EXPECT_EQ(points[0].spec.body("sphere").material->name(), "gold-plasma");
  EXPECT_NE(points[0].spec.body("plate").plate->describe().find("gold-plasma"), std::string::npos);
  const auto single = scan_points(parse_case(kSphere, "s.toml"));
  ASSERT_EQ(single.size(), 1u);
  EXPECT_TRUE(single[0].parameters.empty());
}

TEST(Scan, BadScanValuesNameTheirFieldAndLine) {
  EXPECT_NE(error_of(kSphere + "[scan]\nradius = [\"1 um\", \"-2 um\"]\n")
                .find("s.toml:12: scan.radius[1] = \"-2 um\": a radius must be > 0"),
            std::string::npos)
      << error_of(kSphere + "[scan]\nradius = [\"1 um\", \"-2 um\"]\n");
  EXPECT_NE(error_of(kSphere + "[scan]\ntemperature = [\"-3 K\"]\n")
                .find("scan.temperature[0] = \"-3 K\": a temperature must be >= 0 K"),
            std::string::npos);
  EXPECT_NE(
      error_of(kSphere + "[scan]\ntemperature = [\"300 K\", \"300 K\"]\n").find("listed twice"),
      std::string::npos);
  EXPECT_NE(error_of(kSphere + "[scan]\nsize = [\"1 um\"]\n").find("scan.size"), std::string::npos);
  EXPECT_NE(error_of(kSphere + "[scan]\nradius = []\n").find("non-empty array"), std::string::npos);
  EXPECT_NE(error_of(kSphere + "[scan]\n").find("an empty [scan]"), std::string::npos);
  const std::string unknown =
      error_of(kSphere + "[scan]\nmaterial = [\"gold-drude\", \"mithril\"]\n");
  EXPECT_NE(unknown.find("\"mithril\": unknown material"), std::string::npos) << unknown;
  EXPECT_NE(unknown.find("at the scan point material = \"mithril\""), std::string::npos) << unknown;
  const std::string plates = R"(geometry = "plate-plate"
[plate]
material = "gold-drude"
[separations]
values = ["1 um"]
[conditions]
temperature = "300 K"
[scan]
radius = ["1 um"]
)";
  EXPECT_NE(error_of(plates).find("s.toml:9: scan.radius = "), std::string::npos);
  EXPECT_NE(error_of(plates).find(
                "no sphere to scan (geometry = \"plate-plate\" has [plate] and [plate2])"),
            std::string::npos)
      << error_of(plates);
}

// A scan is parsed once and its user materials are built once: every point shares the same
// material object (before, each point re-parsed the whole text and rebuilt every material, so a
// 10^6-row table cost ~11 s per point and the set-up grew as N^2). Timing is in
// benchmarks/bench_scan_setup.cc; here the sharing itself is checked.
TEST(Scan, PointsShareUserMaterialsAndTablesBuiltOnce) {
  const auto dir = roundtrip::testing::fresh_dir("scan_share");
  {
    std::ofstream csv(dir / "t.csv");
    csv << "energy_eV,eps1,eps2\n0.5,-300,40\n1,-80,8\n2,-20,2\n4,-4,0.8\n8,0.5,0.5\n";
  }
  std::string text = kSphere + R"([materials.tab]
model = "table"
file = "t.csv"
[materials.my]
model = "drude"
plasma_frequency = "9 eV"
damping = "35 meV"
[scan]
temperature = ["1 K", "2 K", "3 K"]
sphere.material = ["tab", "my"]
)";
  std::ofstream(dir / "s.toml") << text;
  const CaseSpec spec = load_case(dir / "s.toml");
  const auto points = scan_points(spec);
  ASSERT_EQ(points.size(), 6u);
  for (std::size_t k = 2; k < points.size(); ++k)
    EXPECT_EQ(points[k].spec.body("sphere").material, points[k % 2].spec.body("sphere").material)
        << k;
  EXPECT_NE(points[0].spec.body("sphere").material, points[1].spec.body("sphere").material);
  EXPECT_EQ(points[0].spec.body("sphere").material->name(), "tab");
  EXPECT_EQ(spec.body("sphere").material,
            points[0].spec.body("sphere").material);  // the parse's first point
  // A second expansion (what `run` does after `load_case`) reuses the same objects.
  EXPECT_EQ(scan_points(spec)[0].spec.body("sphere").material,
            points[0].spec.body("sphere").material);
  // Each point's values are its own.
  EXPECT_EQ(points[5].spec.frequency.temperature_K, 3.0);
  EXPECT_EQ(points[5].spec.body("sphere").material->name(), "my");
}

// A bad value met at a later scan point still names the line of the scan value (the first
// body it goes to, here the plate).
TEST(Scan, ErrorsAtLaterPointsNameTheScanLine) {
  const std::string e = error_of(kSphere +
                                 "[scan]\ntemperature = [\"1 K\", \"2 K\"]\n"
                                 "material = [\"gold-drude\", \"mithril\"]\n");
  EXPECT_NE(e.find("s.toml:13: plate.material = \"mithril\": unknown material"), std::string::npos)
      << e;
  EXPECT_NE(e.find("at the scan point temperature = \"1 K\", material = \"mithril\""),
            std::string::npos)
      << e;
}

// README: a forced frequency rule is ignored at the 0 K points of a temperature scan (the
// T = 0 integral is used there); without a temperature axis, 0 K and "pade" stay an error.
TEST(Scan, ForcedRuleIsIgnoredAtTheZeroKelvinPointsOfATemperatureScan) {
  const std::string rule = "[numerics]\nfrequency_rule = \"pade\"\n";
  const CaseSpec spec =
      parse_case(kSphere + rule + "[scan]\ntemperature = [\"0 K\", \"300 K\"]\n", "s.toml");
  const auto points = scan_points(spec);
  ASSERT_EQ(points.size(), 2u);
  EXPECT_EQ(points[0].spec.frequency.thermal_rule, ThermalRule::kAuto);
  EXPECT_EQ(points[1].spec.frequency.thermal_rule, ThermalRule::kPade);
  std::string zero = kSphere;
  zero.replace(zero.find("300 K"), 5, "0 K");
  EXPECT_NE(error_of(zero + rule + "[scan]\nmaterial = [\"gold-plasma\"]\n").find("needs T > 0"),
            std::string::npos);
}

using roundtrip::testing::slurp;

// The shipped scan case end to end: one table per point, one file with /scan/<k>, and each point
// bit-identical to the same case run alone. Physics check: at 300 K the Drude force is weaker
// than the plasma one (no TE reflection at xi = 0; Bostrom & Sernelius, PRL 84, 4757 (2000)),
// and the gap between them widens with L.
TEST(Scan, ShippedScanCaseWritesOneGroupPerPointEqualToSingleRuns) {
  const fs::path dir = fs::temp_directory_path() / fmt::format("roundtrip_scan_{}", getpid());
  fs::remove_all(dir);
  fs::create_directories(dir);
  const std::string text =
      slurp(fs::path(ROUNDTRIP_SOURCE_DIR) / "cases" / "gold_drude_plasma_scan.toml");
  ASSERT_FALSE(text.empty());
  std::ofstream(dir / "scan.toml") << text;
  // Point 4 alone: the same case with the [scan] values written in.
  std::string alone = text.substr(0, text.find("[scan]"));
  alone.replace(alone.find("material = \"gold-drude\""), 23, "material = \"gold-plasma\"");
  std::ofstream(dir / "alone.toml") << alone;
  const std::string cmd = fmt::format(
      "cd '{0}' && '{1}' run scan.toml -o scan.h5 > scan.out 2>&1 && '{1}' run alone.toml -o "
      "alone.h5 > alone.out 2>&1",
      dir.string(), ROUNDTRIP_CLI);
  ASSERT_EQ(std::system(cmd.c_str()), 0) << slurp(dir / "scan.out") << slurp(dir / "alone.out");
  const std::string out = slurp(dir / "scan.out");
  for (const char* s : {"scan point 1 of 4: temperature = 77 K, material = gold-drude",
                        "scan point 4 of 4: temperature = 300 K, material = gold-plasma",
                        "results: scan.h5 (4 scan points, 16 gaps"})
    EXPECT_NE(out.find(s), std::string::npos) << s << "\n" << out;
  std::ofstream(dir / "read.py") << R"PY(import h5py, numpy as np
f = h5py.File("scan.h5", "r")
a = h5py.File("alone.h5", "r")
assert "results" not in f and "scan" not in a, "layouts"
assert int(f.attrs["scan_points"]) == 4 and int(f.attrs["complete"]) == 1
assert f.attrs["scan_keys"] == "temperature, material", f.attrs["scan_keys"]
g = f["scan/3"]
assert g.attrs["scan.temperature"] == "300 K" and g.attrs["scan.material"] == "gold-plasma"
assert float(g.attrs["temperature_K"]) == 300.0
for k in ["gap", "energy", "force"]:
    assert np.array_equal(g["results"][k][:], a["results"][k][:]), k
drude, plasma = f["scan/2/results/force"][:], g["results/force"][:]
r = drude / plasma
assert (r < 1).all() and (np.diff(r) < 0).all(), r
print("OK")
)PY";
  const std::string py =
      fmt::format("cd '{}' && /usr/bin/python3 read.py > py.txt 2>&1", dir.string());
  EXPECT_EQ(std::system(py.c_str()), 0) << slurp(dir / "py.txt");
  EXPECT_EQ(slurp(dir / "py.txt"), "OK\n");
  if (!::testing::Test::HasFailure()) fs::remove_all(dir);
}

}  // namespace
}  // namespace roundtrip::io
