// The two-sphere and coated-sphere demo cases, reduced to their largest gap, through the CLI: each
// runs, and its energy and PFA ratio agree with the row its opening comment shows (printed at
// rel_tol 1e-4 from the full case; the reduced run uses the same rel_tol, so they agree to
// within the two runs' tolerances: 3e-4 relative).
#include <gtest/gtest.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <regex>
#include <string>

#include "common/scratch.h"

namespace {

using roundtrip::testing::slurp;
namespace fs = std::filesystem;

constexpr double kAgreement = 3e-4;  // two runs at rel_tol 1e-4 (common practice)

// The case's printed row for `gap` ("  #      400  -3.388771e-22 ...  0.273746 ..."): E and E/E_PFA.
std::pair<double, double> printed_row(const std::string& text, const std::string& gap) {
  const std::regex row("\\n#\\s+" + gap + R"(\s+(-[0-9.e+-]+)\s+\S+\s+(?:\S+\s+)?([0-9.]+)\s)");
  std::smatch m;
  if (!std::regex_search(text, m, row)) return {0.0, 0.0};
  return {std::stod(m[1]), std::stod(m[2])};
}

void run_reduced(const std::string& name, const std::string& gap_text, const std::string& gap) {
  SCOPED_TRACE(name);
  const fs::path dir = roundtrip::testing::fresh_dir("case_" + name);
  std::string text = slurp(fs::path(ROUNDTRIP_SOURCE_DIR) / "cases" / (name + ".toml"));
  ASSERT_FALSE(text.empty());
  const auto [e_printed, ratio_printed] = printed_row(text, gap);
  ASSERT_LT(e_printed, 0.0) << "no printed row for " << gap;
  // Only the largest gap (the cheapest), same tolerance and temperature.
  text = std::regex_replace(text, std::regex(R"(\[separations\][^\[]*)"),
                            "[separations]\nvalues = [\"" + gap_text + "\"]\n\n");
  { std::ofstream(dir / "case.toml") << text; }
  const std::string cmd = "cd '" + dir.string() + "' && '" + ROUNDTRIP_CLI +
                          "' run case.toml -o out.h5 --quiet > out.txt 2> err.txt";
  ASSERT_EQ(std::system(cmd.c_str()), 0) << slurp(dir / "err.txt");
  const std::string out = slurp(dir / "out.txt");
  const std::regex row(R"(\n\s*[0-9.]+\s+(-[0-9.e+-]+)\s+\S+\s+(?:\S+\s+)?([0-9.]+)\s)");
  std::smatch m;
  ASSERT_TRUE(std::regex_search(out, m, row)) << out;
  EXPECT_NEAR(std::stod(m[1]) / e_printed, 1.0, kAgreement) << out;
  EXPECT_NEAR(std::stod(m[2]) / ratio_printed, 1.0, kAgreement) << out;
  EXPECT_TRUE(fs::exists(dir / "out.h5"));
  fs::remove_all(dir);
}

TEST(DemoCases, TwoBeadsInWaterAtTheirLargestGapMatchTheirComment) {
  run_reduced("beads_in_water", "400 nm", "400");
}

TEST(DemoCases, CoatedBeadOverGoldAtItsLargestGapMatchesItsComment) {
  run_reduced("coated_bead_over_gold", "600 nm", "600");
}

}  // namespace
