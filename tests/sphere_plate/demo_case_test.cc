// The sphere-plate Drude/plasma demo case, reduced (smaller sphere, two gaps), through the CLI:
// it runs, prints one table per model with PFA ratios, and writes both scan points to HDF5.
#include <gtest/gtest.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <regex>
#include <sstream>
#include <string>

#include "common/scratch.h"

namespace {

using roundtrip::testing::slurp;

TEST(SpherePlateDemoCase, ReducedDrudePlasmaScanRunsAndStaysBelowPfa) {
  namespace fs = std::filesystem;
  const fs::path dir = roundtrip::testing::fresh_dir("demo_drude_plasma");
  std::string text = slurp(fs::path(ROUNDTRIP_SOURCE_DIR) / "cases/sphere_plate_drude_plasma.toml");
  ASSERT_FALSE(text.empty());
  text = std::regex_replace(text, std::regex("radius = \"20 um\""), "radius = \"5 um\"");
  text = std::regex_replace(text, std::regex("count = 4"), "count = 2");
  text = std::regex_replace(text, std::regex("from = \"250 nm\""), "from = \"500 nm\"");
  { std::ofstream(dir / "case.toml") << text; }
  const std::string cmd = "cd '" + dir.string() + "' && '" + ROUNDTRIP_CLI +
                          "' run case.toml -o out.h5 > out.txt 2> err.txt";
  ASSERT_EQ(std::system(cmd.c_str()), 0) << slurp(dir / "err.txt");
  const std::string out = slurp(dir / "out.txt");
  EXPECT_NE(out.find("scan point 1 of 2: material = gold-drude"), std::string::npos) << out;
  EXPECT_NE(out.find("scan point 2 of 2: material = gold-plasma"), std::string::npos) << out;
  EXPECT_NE(out.find("E/E_PFA"), std::string::npos) << out;
  // Exact sphere-plate energies lie below the PFA ones in magnitude at these L/R (0.1-0.2):
  // every printed E/E_PFA is in (0.5, 1) (Canaguier-Durand et al., PRL 104, 040403 (2010)).
  std::regex row(R"(\n\s*[0-9.]+\s+-[0-9.e+-]+\s+-[0-9.e+-]+\s+[0-9.e+-]+\s+([0-9.]+))");
  int rows = 0;
  for (auto it = std::sregex_iterator(out.begin(), out.end(), row); it != std::sregex_iterator();
       ++it, ++rows) {
    const double ratio = std::stod((*it)[1]);
    EXPECT_GT(ratio, 0.5);
    EXPECT_LT(ratio, 1.0);
  }
  EXPECT_EQ(rows, 4);
  EXPECT_TRUE(fs::exists(dir / "out.h5"));
  fs::remove_all(dir);
}

}  // namespace
