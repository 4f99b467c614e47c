// Every shipped case opens with the command that runs it and what it prints (DEVELOPERS.md):
// run each case as its comment says and require every documented output line to be in the real
// output (issue 16: the AFM case had drifted in the 6th-7th digit). Lines not checked: the
// command itself, "results: ..." (its timing varies), and "..." / "(...)" elisions; a line
// starting "... " is checked from after the dots, unless an elision "(...)" follows them. Values
// are compared as printed (design: the comment is a copy of the output).
#include <fmt/format.h>
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "common/scratch.h"

namespace {

namespace fs = std::filesystem;
using roundtrip::testing::slurp;

class CaseComments : public roundtrip::testing::ScratchDirTest {};

// The documented output lines: comment lines indented by three spaces after the command line.
std::vector<std::string> documented_lines(const std::string& text) {
  std::vector<std::string> out;
  std::istringstream in(text);
  std::string line;
  bool after_command = false;
  while (std::getline(in, line)) {
    if (!line.starts_with("#")) break;  // the opening comment ends at the first key
    if (line.starts_with("#   ./build/roundtrip run")) {
      after_command = true;
      continue;
    }
    if (!after_command || !line.starts_with("#   ")) continue;
    std::string s = line.substr(4);
    s.erase(0, s.find_first_not_of(' '));
    while (!s.empty() && s.back() == ' ') s.pop_back();
    if (s.empty() || s.starts_with("(") || s.starts_with("results:") || s == "...") continue;
    if (s.starts_with("\"")) continue;  // the rest of an elision "(... \n "...")"
    if (s.starts_with("... ")) {
      s = s.substr(4);
      s.erase(0, s.find_first_not_of(' '));
      if (s.starts_with("(")) continue;
    } else if (s.starts_with("...")) {
      continue;
    }
    out.push_back(s);
  }
  return out;
}

TEST_F(CaseComments, EveryCaseCommentIsItsRealOutput) {
  const fs::path cases = fs::path(ROUNDTRIP_SOURCE_DIR) / "cases";
  std::vector<fs::path> files;
  for (const auto& e : fs::directory_iterator(cases))
    if (e.path().extension() == ".toml") files.push_back(e.path());
  ASSERT_FALSE(files.empty());
  for (const auto& f : files) {
    const std::vector<std::string> lines = documented_lines(slurp(f));
    if (lines.empty()) continue;  // a comment that describes, not quotes, the output
    const std::string out_file = f.stem().string() + ".out";
    ASSERT_NE(sh(fmt::format("'{}' run '{}' --quiet -o '{}.h5' > '{}' 2>&1", ROUNDTRIP_CLI,
                             f.string(), f.stem().string(), out_file)),
              -1);
    const std::string output = slurp(dir_ / out_file);
    for (const auto& l : lines)
      EXPECT_NE(output.find(l), std::string::npos)
          << f.filename().string() << ": documented line not in the output:\n  " << l
          << "\noutput:\n"
          << output;
  }
}

}  // namespace
