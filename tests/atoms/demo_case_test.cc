// The rubidium demo case, reduced (3 gaps from 1 to 10 um), through the CLI: both scan points
// run, and at 10 um the gold/silica ratio is the static reflection ratio of the thermal term.
#include <gtest/gtest.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <regex>
#include <string>
#include <vector>

#include "common/scratch.h"

namespace {

using roundtrip::testing::slurp;

TEST(AtomDemoCase, ReducedRubidiumScanRunsAndReachesTheThermalLimitAt10um) {
  namespace fs = std::filesystem;
  const fs::path dir = roundtrip::testing::fresh_dir("demo_rubidium");
  std::string text =
      slurp(fs::path(ROUNDTRIP_SOURCE_DIR) / "cases/rubidium_over_silica_and_gold.toml");
  ASSERT_FALSE(text.empty());
  text = std::regex_replace(text, std::regex("from = \"100 nm\""), "from = \"1 um\"");
  text = std::regex_replace(text, std::regex("count = 9"), "count = 3");
  { std::ofstream(dir / "case.toml") << text; }
  const std::string cmd = "cd '" + dir.string() + "' && '" + ROUNDTRIP_CLI +
                          "' run case.toml -o out.h5 > out.txt 2> err.txt";
  ASSERT_EQ(std::system(cmd.c_str()), 0) << slurp(dir / "err.txt");
  const std::string out = slurp(dir / "out.txt");
  EXPECT_NE(out.find("scan point 1 of 2: material = silica"), std::string::npos) << out;
  EXPECT_NE(out.find("scan point 2 of 2: material = gold-drude"), std::string::npos) << out;
  std::regex row(R"(\n\s*10\s+(-[0-9.e+-]+))");
  std::vector<double> e10;
  for (auto it = std::sregex_iterator(out.begin(), out.end(), row); it != std::sregex_iterator();
       ++it)
    e10.push_back(std::stod((*it)[1]));
  ASSERT_EQ(e10.size(), 2u) << out;
  // Standard: z >> hbar c/(k_B T) leaves the n = 0 term, U = -k_B T alpha(0) r/(4 z^3); gold
  // (Drude) r = 1, silica r = (eps0 - 1)/(eps0 + 1) with eps0 = 1 + 1.71 + 1.098 (the built-in
  // oscillators). The n >= 1 terms are at most 2q(2(bz)^2 + 2bz + 1) ~ 2e-5 of n = 0
  // (b = 2 pi k_B T/(hbar c), q = e^{-2bz}, bz = 8.2 at 10 um: the perfect-mirror geometric
  // series, derived in atom_plate_test.cc), and they differ between the plates: tolerance 5e-5.
  const double eps0 = 1.0 + 1.71 + 1.098;
  EXPECT_NEAR(e10[1] / e10[0], (eps0 + 1) / (eps0 - 1), 5e-5 * (eps0 + 1) / (eps0 - 1)) << out;
  EXPECT_TRUE(fs::exists(dir / "out.h5"));
}

}  // namespace
