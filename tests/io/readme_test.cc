// The README's tutorial works as written: its Python snippet reads the demo's results file and
// prints what the text says, and its example case (with and without the [scan] addition) passes
// `roundtrip check`.
#include <fmt/format.h>
#include <gtest/gtest.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "common/scratch.h"

namespace {

namespace fs = std::filesystem;

using roundtrip::testing::slurp;

// The n-th fenced block of `lang` after `heading` in `text` (empty if none).
std::string block(const std::string& text, const std::string& heading, const std::string& lang,
                  int n) {
  std::size_t at = text.find(heading);
  if (at == std::string::npos) return {};
  for (int i = 0; i <= n; ++i) {
    at = text.find("```" + lang + "\n", at);
    if (at == std::string::npos) return {};
    at += 4 + lang.size();
    if (i == n) return text.substr(at, text.find("```", at) - at);
  }
  return {};
}

TEST(Readme, TutorialSnippetAndExampleCaseWorkAsWritten) {
  const std::string readme = slurp(fs::path(ROUNDTRIP_SOURCE_DIR) / "README.md");
  const std::string py = block(readme, "## Tutorial", "python", 0);
  const std::string bead = block(readme, "## Tutorial", "toml", 0);
  const std::string scan = block(readme, "## Tutorial", "toml", 1);
  ASSERT_NE(py.find("h5py"), std::string::npos);
  ASSERT_NE(bead.find("sphere-plate"), std::string::npos);
  ASSERT_NE(scan.find("[scan]"), std::string::npos);
  const fs::path dir = fs::temp_directory_path() / fmt::format("roundtrip_readme_{}", getpid());
  fs::remove_all(dir);
  fs::create_directories(dir / "out");
  std::ofstream(dir / "read.py") << py;
  std::ofstream(dir / "my_bead.toml") << bead;
  std::ofstream(dir / "my_scan.toml") << bead + "\n" + scan;
  const std::string cmd = fmt::format(
      "cd '{0}' && '{1}' run '{2}/cases/gold_plates.toml' -o out/gold_plates.h5 --quiet > run.txt "
      "2>&1 && /usr/bin/python3 read.py > py.txt 2>&1 && '{1}' check my_bead.toml > c1.txt 2>&1 "
      "&& '{1}' check my_scan.toml > c2.txt 2>&1",
      dir.string(), ROUNDTRIP_CLI, ROUNDTRIP_SOURCE_DIR);
  ASSERT_EQ(std::system(cmd.c_str()), 0) << slurp(dir / "run.txt") << slurp(dir / "py.txt")
                                         << slurp(dir / "c1.txt") << slurp(dir / "c2.txt");
  const std::string out = slurp(dir / "py.txt");
  // The tutorial quotes this line of the snippet's output.
  EXPECT_NE(out.find("L =   100.0 nm   F = -5.6322e+00 Pa"), std::string::npos) << out;
  EXPECT_NE(out.find("force units: Pa"), std::string::npos) << out;
  EXPECT_NE(slurp(dir / "c2.txt").find("scan         2 points"), std::string::npos)
      << slurp(dir / "c2.txt");
  if (!::testing::Test::HasFailure()) fs::remove_all(dir);
}

}  // namespace
