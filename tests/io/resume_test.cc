// Checkpoint and resume: the journal keeps every finished frequency exactly (hexfloat), a rerun
// reuses them and gives bit-identical results, a changed case is refused naming the field, and
// a run killed with SIGKILL or interrupted with SIGINT resumes to the uninterrupted numbers.
// Bit-identity is the criterion because the frequency rules ask for the same xi in the same
// order on every run (solver/run.h), so nothing but the journal can change the sums. The runs
// use one thread: with two, sphere-plate values currently differ by an ulp from run to run at
// large l_max (thread-dependent round-off in the solver), which no journal can undo.
#include <fmt/format.h>
#include <gtest/gtest.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cmath>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <limits>
#include <sstream>
#include <string>

#include "common/cli_runner.h"
#include "io/errors.h"
#include "io/journal.h"

namespace roundtrip::io {
namespace {

namespace fs = std::filesystem;

using roundtrip::testing::slurp;

fs::path fresh_dir(const std::string& name) {
  return roundtrip::testing::fresh_dir("resume_" + name);
}

const JournalKey kKey = {{"roundtrip_version", "0.1.0"},
                         {"conditions.temperature", "\"300 K\""},
                         {"separations.values[0]", "\"1 um\""}};

TEST(Journal, RecordsComeBackBitIdenticalAfterReopening) {
  const fs::path dir = fresh_dir("bits");
  const double awkward[] = {0.1,  -1.0 / 3.0,    std::numeric_limits<double>::denorm_min(),
                            -0.0, 6.02214076e23, std::nextafter(1.0, 2.0)};
  {
    Journal j(dir / "r.h5.journal", kKey, false);
    EXPECT_EQ(j.loaded(), 0u);
    for (int i = 0; i < 6; ++i)
      j.store(i % 2)->record(i, awkward[i] * 1e14,
                             Spectral{awkward[i], awkward[5 - i], -awkward[i]});
  }
  Journal j(dir / "r.h5.journal", kKey, false);
  EXPECT_EQ(j.loaded(), 6u);
  for (int i = 0; i < 6; ++i) {
    Spectral s;
    ASSERT_TRUE(j.store(i % 2)->lookup(i, awkward[i] * 1e14, s)) << i;
    EXPECT_EQ(std::memcmp(&s.value, &awkward[i], sizeof(double)), 0) << i;
    EXPECT_EQ(std::memcmp(&s.d1, &awkward[5 - i], sizeof(double)), 0) << i;
    Spectral other;
    EXPECT_FALSE(j.store((i + 1) % 2)->lookup(i, awkward[i] * 1e14, other))
        << "point is part of the key";
  }
  EXPECT_EQ(j.reused(), 6u);
  fs::remove_all(dir);
}

TEST(Journal, ATornLastLineIsDroppedAndTheRestKept) {
  const fs::path dir = fresh_dir("torn");
  const fs::path p = dir / "r.h5.journal";
  {
    Journal j(p, kKey, false);
    j.store(0)->record(0, 1e14, Spectral{-0.5, 1.0, 2.0});
    j.store(0)->record(0, 2e14, Spectral{-0.25, 1.0, 2.0});
  }
  std::ofstream(p, std::ios::app) << "c 0 0 0x1.6bcc41e9p+47 -0x1";  // killed mid-write
  {
    Journal j(p, kKey, false);
    EXPECT_EQ(j.loaded(), 2u);
    j.store(0)->record(0, 3e14, Spectral{-0.125, 1.0, 2.0});
  }
  Journal j(p, kKey, false);
  EXPECT_EQ(j.loaded(), 3u);
  fs::remove_all(dir);
}

TEST(Journal, AChangedKeyIsRefusedNamingTheFieldUnlessRestarted) {
  const fs::path dir = fresh_dir("changed");
  const fs::path p = dir / "r.h5.journal";
  { Journal(p, kKey, false).store(0)->record(0, 1e14, Spectral{-0.5, 1.0, 2.0}); }
  JournalKey changed = kKey;
  changed[1].second = "\"0 K\"";
  try {
    Journal j(p, changed, false);
    ADD_FAILURE() << "a changed case was resumed";
  } catch (const CaseError& e) {
    const std::string m = e.what();
    EXPECT_NE(m.find("conditions.temperature was \"300 K\", now \"0 K\""), std::string::npos) << m;
    EXPECT_NE(m.find("--restart"), std::string::npos) << m;
  }
  Journal j(p, changed, true);
  EXPECT_EQ(j.loaded(), 0u);
  fs::remove_all(dir);
}

TEST(Journal, ASecondRunOnTheSameJournalIsRefusedWhileTheFirstHoldsIt) {
  const fs::path dir = fresh_dir("locked");
  const fs::path p = dir / "r.h5.journal";
  {
    Journal first(p, kKey, false);
    try {
      Journal second(p, kKey, false);
      ADD_FAILURE() << "two runs on one journal";
    } catch (const CaseError& e) {
      EXPECT_NE(std::string(e.what()).find("another roundtrip run"), std::string::npos) << e.what();
    }
    first.store(0)->record(0, 1e14, Spectral{-0.5, 1.0, 2.0});
  }
  Journal again(p, kKey, false);  // the lock goes with the first run
  EXPECT_EQ(again.loaded(), 1u);
  fs::remove_all(dir);
}

// --- The program end to end -------------------------------------------------------------------

// A sphere-plate case of one to two seconds on 2 cores (l_max fixed so that the work per gap
// does not depend on the tolerance rule): invented numbers.
const std::string kCase = R"(geometry = "sphere-plate"
[sphere]
radius = "5 um"
material = "gold-drude"
[plate]
material = "gold-drude"
[separations]
values = ["1 um", "1.5 um", "2 um"]
[conditions]
temperature = "300 K"
[numerics]
rel_tol = 1e-4
l_max = 300
)";

class Resume : public roundtrip::testing::CliTest {
 protected:
  void SetUp() override {
    ScratchDirTest::SetUp();
    std::ofstream(dir_ / "sp.toml") << kCase;
  }
  // Start a run in the background, wait until its journal holds `records` records, send
  // `signal`; returns the exit status of the run.
  int interrupt(const std::string& out, int records, const char* signal) {
    const int header = 14;  // magic, hash, 11 key lines, begin (for kCase)
    return sh(fmt::format(
        "('{}' run sp.toml --quiet --threads 1 -o {} > run.out 2> run.err & pid=$!; "
        "for i in $(seq 400); do n=$(wc -l 2>/dev/null < {}.journal || echo 0); "
        "[ \"$n\" -ge {} ] && break; sleep 0.025; done; kill -{} $pid; wait $pid; exit $?)",
        ROUNDTRIP_CLI, out, out, header + records, signal));
  }
  // "SAME" if every dataset under results/ and frequencies/ is bit-identical.
  std::string compare(const std::string& a, const std::string& b) { return same_results(a, b); }
};

TEST_F(Resume, KillNineMidRunThenRerunReusesContributionsAndMatchesAnUninterruptedRun) {
  ASSERT_EQ(sh(fmt::format("'{}' run sp.toml --quiet --threads 1 -o full.h5 > full.out 2> full.err",
                           ROUNDTRIP_CLI)),
            0)
      << slurp(dir_ / "full.err");
  const int killed = interrupt("sp.h5", 3, "9");
  ASSERT_EQ(killed, 128 + 9) << "the run should still have been running: "
                             << slurp(dir_ / "run.err");
  EXPECT_FALSE(fs::exists(dir_ / "sp.h5"));
  ASSERT_TRUE(fs::exists(dir_ / "sp.h5.journal"));
  ASSERT_EQ(sh(fmt::format("'{}' run sp.toml --quiet --threads 1 -o sp.h5 > re.out 2> re.err",
                           ROUNDTRIP_CLI)),
            0);
  const std::string err = slurp(dir_ / "re.err");
  const auto at = err.find("resumed: ");
  ASSERT_NE(at, std::string::npos) << err;
  EXPECT_GT(std::stoi(err.substr(at + 9)), 0) << err;
  EXPECT_EQ(compare("sp.h5", "full.h5"), "SAME\n");
  const auto table = [&](const char* f) {
    const std::string t = slurp(dir_ / f);
    return t.substr(0, t.find("\nresults: "));
  };
  EXPECT_EQ(table("re.out"), table("full.out"));
  EXPECT_FALSE(fs::exists(dir_ / "sp.h5.journal")) << "the journal is removed on success";
  // The killed process's temporary file is cleaned up by the next run.
  for (const auto& e : fs::directory_iterator(dir_))
    EXPECT_EQ(e.path().string().find(".tmp."), std::string::npos) << e.path();
}

TEST_F(Resume, CtrlCWritesAValidFileOfFinishedGapsKeepsTheJournalAndTheRerunIsBitIdentical) {
  ASSERT_EQ(sh(fmt::format("'{}' run sp.toml --quiet --threads 1 -o full.h5 > full.out 2> full.err",
                           ROUNDTRIP_CLI)),
            0);
  // The first gap has 10 frequencies; wait until the second gap has started.
  const int status = interrupt("sp.h5", 14, "INT");
  ASSERT_EQ(status, 130) << slurp(dir_ / "run.err");
  EXPECT_NE(slurp(dir_ / "run.err").find("interrupted: "), std::string::npos);
  ASSERT_TRUE(fs::exists(dir_ / "sp.h5"));
  ASSERT_TRUE(fs::exists(dir_ / "sp.h5.journal"));
  std::ofstream(dir_ / "partial.py") << R"PY(import h5py
f = h5py.File("sp.h5", "r")
g = f["results/gap"][:]
full = h5py.File("full.h5", "r")
assert int(f.attrs["complete"]) == 0 and int(f.attrs["gaps_planned"]) == 3
assert 1 <= len(g) < 3, g
n = len(g)
assert (f["results/energy"][:] == full["results/energy"][:n]).all()
assert len(f["frequencies"]) == n
print("OK", n)
)PY";
  ASSERT_EQ(sh("/usr/bin/python3 partial.py > partial.txt 2>&1"), 0) << slurp(dir_ / "partial.txt");
  ASSERT_EQ(sh(fmt::format("'{}' run sp.toml --quiet --threads 1 -o sp.h5 > re.out 2> re.err",
                           ROUNDTRIP_CLI)),
            0);
  EXPECT_NE(slurp(dir_ / "re.err").find("resumed: "), std::string::npos);
  EXPECT_EQ(compare("sp.h5", "full.h5"), "SAME\n");
}

TEST_F(Resume, AnInterruptedScanWritesTheFinishedPointsAndResumesToTheFullScan) {
  std::string scan = kCase;  // two gaps per point, to keep the test short
  const std::string three = "\"1 um\", \"1.5 um\", \"2 um\"";
  scan.replace(scan.find(three), three.size(), "\"1 um\", \"2 um\"");
  std::ofstream(dir_ / "sp.toml") << scan + "[scan]\nradius = [\"5 um\", \"6 um\"]\n";
  ASSERT_EQ(sh(fmt::format("'{}' run sp.toml --quiet --threads 1 -o full.h5 > full.out 2> full.err",
                           ROUNDTRIP_CLI)),
            0);
  // Wait for the second scan point: the first has 17 frequencies over its two gaps (the header
  // is one line longer than kCase's, so 23 lines past it are 22 records).
  ASSERT_EQ(interrupt("sp.h5", 23, "INT"), 130) << slurp(dir_ / "run.err");
  std::ofstream(dir_ / "partial.py") << R"PY(import h5py
f = h5py.File("sp.h5", "r")
assert int(f.attrs["complete"]) == 0 and int(f.attrs["scan_points"]) == 2
assert int(f["scan/0"].attrs["complete"]) == 1 and len(f["scan/0/results/gap"]) == 2
assert f["scan/0"].attrs["scan.radius"] == "5 um"
print("OK")
)PY";
  ASSERT_EQ(sh("/usr/bin/python3 partial.py > partial.txt 2>&1"), 0) << slurp(dir_ / "partial.txt");
  ASSERT_EQ(sh(fmt::format("'{}' run sp.toml --quiet --threads 1 -o sp.h5 > re.out 2> re.err",
                           ROUNDTRIP_CLI)),
            0);
  EXPECT_NE(slurp(dir_ / "re.err").find("resumed: "), std::string::npos);
  std::ofstream(dir_ / "same.py") << R"PY(import h5py, numpy as np
a, b = h5py.File("sp.h5", "r"), h5py.File("full.h5", "r")
assert int(a.attrs["complete"]) == 1
for k in ["0", "1"]:
    for q in ["gap", "energy", "force"]:
        assert np.array_equal(a["scan"][k]["results"][q][:], b["scan"][k]["results"][q][:]), (k, q)
print("SAME")
)PY";
  ASSERT_EQ(sh("/usr/bin/python3 same.py > same.txt 2>&1"), 0) << slurp(dir_ / "same.txt");
}

TEST_F(Resume, AChangedCaseRefusesToResumeNamingTheFieldAndRestartDiscardsTheJournal) {
  // Title and [output] do not change the numbers: changing them does not block a resume.
  ASSERT_EQ(interrupt("sp.h5", 2, "9"), 128 + 9);
  std::ofstream(dir_ / "sp.toml") << "title = \"renamed\"\n" + kCase;
  EXPECT_EQ(sh(fmt::format("'{}' run sp.toml --quiet --threads 1 -o sp.h5 > t.out 2> t.err",
                           ROUNDTRIP_CLI)),
            0);
  EXPECT_NE(slurp(dir_ / "t.err").find("resumed: "), std::string::npos) << slurp(dir_ / "t.err");
  fs::remove(dir_ / "sp.h5");

  std::ofstream(dir_ / "sp.toml") << kCase;
  ASSERT_EQ(interrupt("sp.h5", 2, "9"), 128 + 9);
  std::string changed = kCase;
  changed.replace(changed.find("\"300 K\""), 7, "\"290 K\"");
  std::ofstream(dir_ / "sp.toml") << changed;
  EXPECT_EQ(sh(fmt::format("'{}' run sp.toml --quiet --threads 1 -o sp.h5 > c.out 2> c.err",
                           ROUNDTRIP_CLI)),
            1);
  const std::string err = slurp(dir_ / "c.err");
  EXPECT_NE(err.find("conditions.temperature was \"300 K\", now \"290 K\""), std::string::npos)
      << err;
  EXPECT_NE(err.find("--restart"), std::string::npos) << err;
  EXPECT_FALSE(fs::exists(dir_ / "sp.h5"));
  EXPECT_TRUE(fs::exists(dir_ / "sp.h5.journal")) << "a refused journal is kept";
  EXPECT_EQ(
      sh(fmt::format("'{}' run sp.toml --quiet --threads 1 --restart -o sp.h5 > r.out 2> r.err",
                     ROUNDTRIP_CLI)),
      0)
      << slurp(dir_ / "r.err");
  EXPECT_EQ(slurp(dir_ / "r.err").find("resumed"), std::string::npos);
  EXPECT_TRUE(fs::exists(dir_ / "sp.h5"));
}

}  // namespace
}  // namespace roundtrip::io
