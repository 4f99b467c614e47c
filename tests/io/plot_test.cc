// `roundtrip plot`: renders the plots of a results file; each file must be a valid PNG
// (signature and IHDR chunk, PNG specification, W3C/ISO 15948:2004) or SVG (well-formed XML with
// an <svg> root, parsed by Python's xml.etree) and not empty.
#include <fmt/format.h>
#include <gtest/gtest.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "common/cli_runner.h"

namespace {

namespace fs = std::filesystem;

using roundtrip::testing::slurp;

class Plot : public roundtrip::testing::CliTest {
 protected:
  void SetUp() override {
    ScratchDirTest::SetUp();
    fs::create_directories(dir_ / "plots");
  }
  // Renders again with --axes-json and reads back what was drawn (tests/io/plot_axes_check.py:
  // log axes for quantities over decades, >= 3 tick labels, ratios named as such, legends, the
  // whole theta model, one spectrum panel per scan point).
  void expect_readable_axes(const std::string& result) {
    const fs::path src(ROUNDTRIP_SOURCE_DIR);
    EXPECT_EQ(sh(fmt::format("/usr/bin/python3 '{}' {} -o plots --axes-json axes.json > axes.out "
                             "2>&1 && /usr/bin/python3 '{}' axes.json {} >> axes.out 2>&1",
                             (src / "io" / "plot" / "roundtrip_plot.py").string(), result,
                             (src / "tests" / "io" / "plot_axes_check.py").string(), result)),
              0)
        << slurp(dir_ / "axes.out");
  }
  void expect_valid(const std::string& name) {
    const fs::path p = dir_ / "plots" / name;
    ASSERT_TRUE(fs::exists(p)) << name << "\n" << slurp(dir_ / "plot.out");
    const std::string data = slurp(p);
    EXPECT_GT(data.size(), 1000u) << name;
    if (name.ends_with(".png")) {
      EXPECT_EQ(data.substr(0, 8), std::string("\x89PNG\r\n\x1a\n", 8)) << name;
      EXPECT_EQ(data.substr(12, 4), "IHDR") << name;
    } else {
      write("svg.py",
            "import sys, xml.etree.ElementTree as E\n"
            "r = E.parse(sys.argv[1]).getroot()\n"
            "assert r.tag.endswith('svg'), r.tag\n");
      EXPECT_EQ(sh(fmt::format("/usr/bin/python3 svg.py 'plots/{}'", name)), 0) << name;
    }
  }
};

TEST_F(Plot, SpherePlateResultGivesPfaForceAndSpectrumPlotsAsPngAndSvg) {
  std::ofstream(dir_ / "sp.toml") << R"(geometry = "sphere-plate"
[sphere]
radius = "5 um"
material = "gold-drude"
[plate]
material = "gold-drude"
[separations]
values = ["1 um", "1.5 um", "2 um"]
[conditions]
temperature = "300 K"
[compute]
quantities = ["energy", "force", "gradient"]
[numerics]
rel_tol = 1e-3
l_max = 30
)";
  ASSERT_EQ(sh(fmt::format("'{}' run sp.toml --quiet -o sp.h5 > run.out 2>&1", ROUNDTRIP_CLI)), 0)
      << slurp(dir_ / "run.out");
  ASSERT_EQ(sh(fmt::format("'{}' plot sp.h5 -o plots > plot.out 2>&1", ROUNDTRIP_CLI)), 0)
      << slurp(dir_ / "plot.out");
  for (const char* stem : {"sp_pfa", "sp_force", "sp_spectrum"})
    for (const char* ext : {".png", ".svg"}) expect_valid(std::string(stem) + ext);
  EXPECT_FALSE(fs::exists(dir_ / "plots" / "sp_drude_plasma.png")) << "no material scan here";
  expect_readable_axes("sp.h5");
}

TEST_F(Plot, MaterialScanGivesTheDrudePlasmaPlot) {
  const std::string text =
      slurp(fs::path(ROUNDTRIP_SOURCE_DIR) / "cases" / "gold_drude_plasma_scan.toml");
  write("scan.toml", text);
  ASSERT_EQ(sh(fmt::format("'{}' run scan.toml --quiet -o scan.h5 > run.out 2>&1", ROUNDTRIP_CLI)),
            0);
  ASSERT_EQ(sh(fmt::format("'{}' plot scan.h5 -o plots > plot.out 2>&1", ROUNDTRIP_CLI)), 0)
      << slurp(dir_ / "plot.out");
  for (const char* f :
       {"scan_drude_plasma.png", "scan_drude_plasma.svg", "scan_force.png", "scan_spectrum.svg"})
    expect_valid(f);
  expect_readable_axes("scan.h5");
}

TEST_F(Plot, MissingOrForeignFilesAreErrors) {
  EXPECT_NE(sh(fmt::format("'{}' plot none.h5 > plot.out 2>&1", ROUNDTRIP_CLI)), 0);
  EXPECT_NE(slurp(dir_ / "plot.out").find("RESULT = \"none.h5\": no such file"), std::string::npos);
  write("x.h5", "not hdf5");
  EXPECT_NE(sh(fmt::format("'{}' plot x.h5 > plot.out 2>&1", ROUNDTRIP_CLI)), 0);
  EXPECT_NE(slurp(dir_ / "plot.out").find("cannot open as HDF5"), std::string::npos);
}

}  // namespace
