#pragma once
// Test helpers for the areas that run the `roundtrip` program (ROUNDTRIP_CLI, set by
// tests/CMakeLists.txt) in a scratch directory: write an input file, run a command with its
// stdout and stderr in out.txt and err.txt, count the files it left, compare two results files.
#include <fmt/format.h>

#include <filesystem>
#include <fstream>
#include <string>

#include "common/scratch.h"

namespace roundtrip::testing {

/// What a command did: exit status (-1 if it did not exit normally), stdout, stderr.
struct Outcome {
  int status = -1;
  std::string out, err;
};

/// Python (h5py) that prints "SAME" if every dataset under results/ and frequencies/ of two
/// results files (but the wall times) is bit-identical, else "DIFFER <datasets>".
inline constexpr const char* kSameResultsScript = R"PY(import sys, h5py, numpy as np
a, b = h5py.File(sys.argv[1], "r"), h5py.File(sys.argv[2], "r")
bad = []
def visit(name, obj):
    if isinstance(obj, h5py.Dataset) and not name.endswith("wall_time_s"):
        x, y = obj[()], b[name][()]
        if not (np.shape(x) == np.shape(y) and np.array_equal(np.asarray(x).view(np.uint8), np.asarray(y).view(np.uint8))):
            bad.append(name)
for g in ["results", "frequencies"]:
    a[g].visititems(lambda n, o: visit(g + "/" + n, o))
print("SAME" if not bad else "DIFFER " + " ".join(bad))
)PY";

/// A scratch directory per test (ScratchDirTest) in which the program runs.
class CliTest : public ScratchDirTest {
 protected:
  void write(const std::string& name, const std::string& text) {
    std::ofstream(dir_ / name) << text;
  }
  /// `roundtrip <args>` in the scratch directory, stdout to out.txt, stderr to err.txt.
  Outcome cli(const std::string& args) {
    Outcome o;
    o.status = sh(fmt::format("'{}' {} > out.txt 2> err.txt", ROUNDTRIP_CLI, args));
    o.out = slurp(dir_ / "out.txt");
    o.err = slurp(dir_ / "err.txt");
    return o;
  }
  /// Files in the scratch directory whose name contains `part`.
  int files_with(const std::string& part) const {
    int n = 0;
    for (const auto& e : std::filesystem::directory_iterator(dir_))
      if (e.path().filename().string().find(part) != std::string::npos) ++n;
    return n;
  }
  bool any_h5() const { return files_with(".h5") > 0; }
  /// kSameResultsScript on two results files of the scratch directory: "SAME" or "DIFFER ...".
  std::string same_results(const std::string& a, const std::string& b) {
    write("cmp.py", kSameResultsScript);
    sh(fmt::format("/usr/bin/python3 cmp.py {} {} > cmp.txt 2>&1", a, b));
    return slurp(dir_ / "cmp.txt");
  }
};

}  // namespace roundtrip::testing
