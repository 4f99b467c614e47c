#pragma once
// Test helpers shared by the areas that run the CLI or read files: whole-file reads, a scratch
// directory per test, shell commands run inside it.
#include <fmt/format.h>
#include <gtest/gtest.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

namespace roundtrip::testing {

inline std::string slurp(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

/// A small valid sphere-plate case (invented numbers) that tests modify one key at a time.
inline const std::string kSmallSphereCase = R"(geometry = "sphere-plate"
[sphere]
radius = "5 um"
material = "gold-drude"
[plate]
material = "gold-drude"
[separations]
values = ["1 um"]
[conditions]
temperature = "300 K"
)";

/// An empty directory <tmp>/roundtrip_<tag>_<pid> (emptied if it existed).
inline std::filesystem::path fresh_dir(const std::string& tag) {
  const auto d =
      std::filesystem::temp_directory_path() / fmt::format("roundtrip_{}_{}", tag, getpid());
  std::filesystem::remove_all(d);
  std::filesystem::create_directories(d);
  return d;
}

/// Exit status of a shell command run in `dir` (-1 if it did not exit normally).
inline int run_in(const std::filesystem::path& dir, const std::string& script) {
  const int raw = std::system(fmt::format("cd '{}' && {}", dir.string(), script).c_str());
  return WIFEXITED(raw) ? WEXITSTATUS(raw) : -1;
}

/// A scratch directory per test, named after the test, removed when the test passed.
class ScratchDirTest : public ::testing::Test {
 protected:
  void SetUp() override {
    std::string name = ::testing::UnitTest::GetInstance()->current_test_info()->name();
    for (char& c : name)
      if (c == '/') c = '_';  // parameterized tests: "Name/param"
    dir_ = fresh_dir(name);
  }
  void TearDown() override {
    if (!HasFailure()) std::filesystem::remove_all(dir_);
  }
  int sh(const std::string& script) { return run_in(dir_, script); }
  std::filesystem::path dir_;
};

}  // namespace roundtrip::testing
