// Fault injection on the real `roundtrip` program: nothing finished is lost and nothing is silently
// wrong when the disk fills up (a 2 MiB tmpfs with an older results file and a filler), the file
// system is read-only, the journal is damaged, or a rerun is interrupted with Ctrl-C. The tmpfs
// tests need root to mount; without it (or if the mount fails) they are skipped with the reason.
// Criteria are exact (bytes of the older file unchanged, bit-identical results after resuming):
// common practice for crash-safety tests.
#include <fmt/format.h>
#include <gtest/gtest.h>
#include <sys/statvfs.h>
#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "common/cli_runner.h"

namespace {

namespace fs = std::filesystem;
using roundtrip::testing::slurp;

constexpr int kExitWriteFailed = 6;  // io/cli/commands.h
constexpr int kExitInterrupted = 130;

// Plate-plate, 40 gaps, well under a second: its results file is ~200 KB, its journal ~60 KB
// (invented numbers).
const std::string kPlates = R"(geometry = "plate-plate"
[plate]
material = "gold-drude"
[separations]
from = "100 nm"
to = "2 um"
count = 40
spacing = "log"
[conditions]
temperature = "300 K"
[numerics]
rel_tol = 1e-3
)";

// Sphere-plate, three gaps, one to two seconds on one thread (as in tests/io/resume_test.cc), so
// that a run can be interrupted half-way (invented numbers).
const std::string kSphere = R"(geometry = "sphere-plate"
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
constexpr int kSphereHeaderLines = 14;  // magic, hash, 11 key lines, begin

class Reliability : public roundtrip::testing::CliTest {
 protected:
  int run(const std::string& args, const std::string& log) {
    return sh(fmt::format("'{}' run {} --quiet > {}.out 2> {}.err", ROUNDTRIP_CLI, args, log, log));
  }
  std::string err(const std::string& log) { return slurp(dir_ / (log + ".err")); }
  std::string compare(const std::string& a, const std::string& b) { return same_results(a, b); }
  int attr(const std::string& file, const std::string& name) {
    sh(fmt::format(
        "/usr/bin/python3 -c 'import h5py; print(int(h5py.File(\"{}\").attrs[\"{}\"]))' > a.txt "
        "2>&1",
        file, name));
    try {
      return std::stoi(slurp(dir_ / "a.txt"));
    } catch (...) {
      ADD_FAILURE() << file << ": " << slurp(dir_ / "a.txt");
      return -1;
    }
  }
  // Start a run in the background, wait until its journal holds `lines` lines, send SIGINT;
  // returns the exit status.
  int interrupt(const std::string& args, const std::string& journal, int lines,
                const std::string& log) {
    return sh(fmt::format(
        "('{}' run {} --quiet > {}.out 2> {}.err & pid=$!; "
        "for i in $(seq 400); do n=$(wc -l 2>/dev/null < {} || echo 0); "
        "[ \"$n\" -ge {} ] && break; sleep 0.025; done; kill -INT $pid; wait $pid; exit $?)",
        ROUNDTRIP_CLI, args, log, log, journal, lines));
  }
  std::vector<std::string> temporaries(const fs::path& d) {
    std::vector<std::string> t;
    for (const auto& e : fs::directory_iterator(d))
      if (e.path().filename().string().find(".tmp.") != std::string::npos)
        t.push_back(e.path().string());
    return t;
  }
};

// A 2 MiB tmpfs at <scratch>/mnt, unmounted after the test.
class DiskFull : public Reliability {
 protected:
  void SetUp() override {
    Reliability::SetUp();
    if (geteuid() != 0) GTEST_SKIP() << "mounting a tmpfs needs root (not root: skipped)";
    fs::create_directory(dir_ / "mnt");
    if (sh("mount -t tmpfs -o size=2m tmpfs mnt 2> mount.err") != 0)
      GTEST_SKIP() << "mount -t tmpfs failed (" << slurp(dir_ / "mount.err") << "): skipped";
    mounted_ = true;
    std::ofstream(dir_ / "pp.toml") << kPlates;
  }
  void TearDown() override {
    if (mounted_) sh("umount mnt");
    Reliability::TearDown();
  }
  // Fill the tmpfs so that `keep` bytes stay free.
  void fill_leaving(std::size_t keep) {
    struct statvfs v {};
    ASSERT_EQ(statvfs((dir_ / "mnt").c_str(), &v), 0);
    const std::size_t avail = v.f_bavail * v.f_frsize;
    ASSERT_GT(avail, keep);
    std::ofstream f(dir_ / "mnt/filler", std::ios::binary);
    const std::string block(4096, '\0');
    for (std::size_t n = 0; n + 4096 <= avail - keep; n += 4096) f << block;
  }
  bool mounted_ = false;
};

TEST_F(DiskFull, WhileWritingTheResultsTheOlderFileAndTheJournalAreKeptAndTheStatusIsNoSpace) {
  ASSERT_EQ(run("pp.toml -o mnt/res.h5", "first"), 0) << err("first");
  fs::copy_file(dir_ / "mnt/res.h5", dir_ / "older.h5");
  // Room for the journal (~60 KB) but not for a second results file (~200 KB).
  fill_leaving(120 * 1024);
  const int status = run("pp.toml -o mnt/res.h5", "full");
  EXPECT_EQ(status, kExitWriteFailed) << err("full");  // was 139: SIGSEGV inside HDF5's close
  EXPECT_NE(err("full").find("writing the results file failed: no space left on device"),
            std::string::npos)
      << err("full");
  EXPECT_TRUE(slurp(dir_ / "mnt/res.h5") == slurp(dir_ / "older.h5")) << "the older file changed";
  EXPECT_TRUE(fs::exists(dir_ / "mnt/res.h5.journal")) << "the journal is kept";
  EXPECT_EQ(temporaries(dir_ / "mnt"), std::vector<std::string>{}) << "temporary file left";
  // With space again, the same command resumes from the journal to the same numbers.
  fs::remove(dir_ / "mnt/filler");
  ASSERT_EQ(run("pp.toml -o mnt/res.h5", "again"), 0) << err("again");
  EXPECT_NE(err("again").find("resumed: "), std::string::npos) << err("again");
  EXPECT_EQ(compare("mnt/res.h5", "older.h5"), "SAME\n");
}

TEST_F(DiskFull, WhileJournallingTheStatusIsNoSpaceAndTheJournalKeepsWholeRecords) {
  ASSERT_EQ(run("pp.toml -o mnt/res.h5", "first"), 0) << err("first");
  fs::copy_file(dir_ / "mnt/res.h5", dir_ / "older.h5");
  fill_leaving(12 * 1024);  // the journal fills up after ~100 of its ~530 records
  const int status = run("pp.toml -o mnt/res.h5", "full");
  EXPECT_EQ(status, kExitWriteFailed) << err("full");  // was 1, "bad input"
  EXPECT_NE(err("full").find("checkpoint journal"), std::string::npos) << err("full");
  EXPECT_NE(err("full").find("no space left on device"), std::string::npos) << err("full");
  EXPECT_TRUE(slurp(dir_ / "mnt/res.h5") == slurp(dir_ / "older.h5")) << "the older file changed";
  EXPECT_EQ(temporaries(dir_ / "mnt"), std::vector<std::string>{}) << "temporary file left";
  const std::string journal = slurp(dir_ / "mnt/res.h5.journal");
  ASSERT_FALSE(journal.empty());
  EXPECT_EQ(journal.back(), '\n') << "the journal ends in a torn record";
  fs::remove(dir_ / "mnt/filler");
  ASSERT_EQ(run("pp.toml -o mnt/res.h5", "again"), 0) << err("again");
  EXPECT_NE(err("again").find("resumed: "), std::string::npos) << err("again");
  EXPECT_EQ(err("again").find("damaged"), std::string::npos) << err("again");
  EXPECT_EQ(compare("mnt/res.h5", "older.h5"), "SAME\n");
}

// `compare` amends the results file with /comparison/<name> by the same in-memory build, temp
// file, fsync and rename as a run: on a full disk the status is 6 and the file keeps its bytes.
TEST_F(DiskFull, WhileCompareAmendsTheResultsTheFileKeepsItsBytesAndTheStatusIsNoSpace) {
  ASSERT_EQ(run("pp.toml -o mnt/res.h5", "first"), 0) << err("first");
  fs::copy_file(dir_ / "mnt/res.h5", dir_ / "older.h5");
  // Three invented pressure points inside the computed gaps (values of the size of gold plates).
  std::ofstream(dir_ / "data.csv") << "gap [nm], pressure [mPa], stat_error [mPa]\n"
                                      "200, -464.3, 4.7\n300, -105.6, 1.1\n450, -22.54, 0.23\n";
  ASSERT_EQ(sh(fmt::format("'{}' compare mnt/res.h5 data.csv --name lab > ok.out 2> ok.err",
                           ROUNDTRIP_CLI)),
            0)
      << slurp(dir_ / "ok.err");
  fs::copy_file(dir_ / "mnt/res.h5", dir_ / "amended.h5");
  ASSERT_GT(fs::file_size(dir_ / "amended.h5"), fs::file_size(dir_ / "older.h5"));
  fs::copy_file(dir_ / "older.h5", dir_ / "mnt/res.h5", fs::copy_options::overwrite_existing);
  fill_leaving(64 * 1024);  // less than one more copy of the ~200 KB file
  const int status = sh(fmt::format(
      "'{}' compare mnt/res.h5 data.csv --name lab > full.out 2> full.err", ROUNDTRIP_CLI));
  const std::string e = slurp(dir_ / "full.err");
  EXPECT_EQ(status, kExitWriteFailed) << e;
  EXPECT_NE(e.find("no space left on device"), std::string::npos) << e;
  EXPECT_TRUE(slurp(dir_ / "mnt/res.h5") == slurp(dir_ / "older.h5")) << "the results file changed";
  EXPECT_EQ(temporaries(dir_ / "mnt"), std::vector<std::string>{}) << "temporary file left";
}

// `run --csv` writes its table by the same synced temp-and-rename: a full disk gives status 6,
// the older CSV keeps its bytes, and no temporary file is left.
TEST_F(DiskFull, WhileWritingTheCsvTableTheOlderTableIsKeptAndTheStatusIsNoSpace) {
  ASSERT_EQ(run("pp.toml -o res.h5 --csv mnt/table.csv", "first"), 0) << err("first");
  const std::string older = slurp(dir_ / "mnt/table.csv");
  ASSERT_GT(older.size(), 1000u);
  fill_leaving(0);
  const int status = run("pp.toml -o res2.h5 --csv mnt/table.csv", "full");
  EXPECT_EQ(status, kExitWriteFailed) << err("full");
  EXPECT_NE(err("full").find("no space left on device"), std::string::npos) << err("full");
  EXPECT_TRUE(slurp(dir_ / "mnt/table.csv") == older) << "the older table changed";
  EXPECT_EQ(temporaries(dir_ / "mnt"), std::vector<std::string>{}) << "temporary file left";
}

TEST_F(DiskFull, AReadOnlyFileSystemIsReportedAsReadOnlyNotAsAMissingPermission) {
  ASSERT_EQ(sh("mount -o remount,ro mnt"), 0);
  EXPECT_EQ(run("pp.toml -o mnt/res.h5", "ro"), 1);
  EXPECT_NE(err("ro").find("is mounted read-only"), std::string::npos) << err("ro");
  EXPECT_EQ(err("ro").find("permission"), std::string::npos) << err("ro");
}

TEST_F(Reliability, AnInterruptedRerunKeepsTheCompleteFileAndWritesItsPartialResultsBeside) {
  std::ofstream(dir_ / "sp.toml") << kSphere;
  ASSERT_EQ(run("sp.toml --threads 1 -o sp.h5", "full"), 0) << err("full");
  fs::copy_file(dir_ / "sp.h5", dir_ / "complete.h5");
  // The same command again (the journal went with the complete run), Ctrl-C in the second gap.
  ASSERT_EQ(
      interrupt("sp.toml --threads 1 -o sp.h5", "sp.h5.journal", kSphereHeaderLines + 12, "rerun"),
      kExitInterrupted)
      << err("rerun");
  EXPECT_TRUE(slurp(dir_ / "sp.h5") == slurp(dir_ / "complete.h5"))
      << "an interrupted rerun replaced the complete file";  // was: replaced by 1 of 3 gaps
  ASSERT_TRUE(fs::exists(dir_ / "sp.partial.h5")) << err("rerun");
  EXPECT_EQ(attr("sp.partial.h5", "complete"), 0);
  EXPECT_NE(err("rerun").find("sp.h5 holds more finished work (a complete run)"), std::string::npos)
      << err("rerun");
  EXPECT_NE(err("rerun").find("written to sp.partial.h5"), std::string::npos) << err("rerun");
  EXPECT_TRUE(fs::exists(dir_ / "sp.h5.journal"));
  // Finishing the run replaces the file and removes the superseded partial one.
  ASSERT_EQ(run("sp.toml --threads 1 -o sp.h5", "resume"), 0) << err("resume");
  EXPECT_NE(err("resume").find("resumed: "), std::string::npos) << err("resume");
  EXPECT_FALSE(fs::exists(dir_ / "sp.partial.h5"));
  EXPECT_EQ(attr("sp.h5", "complete"), 1);
  EXPECT_EQ(compare("sp.h5", "complete.h5"), "SAME\n");
}

TEST_F(Reliability, ADamagedJournalRecordIsRecomputedAndReportedAndTheResultsAreUnchanged) {
  std::ofstream(dir_ / "sp.toml") << kSphere;
  ASSERT_EQ(run("sp.toml --threads 1 -o full.h5", "full"), 0) << err("full");
  ASSERT_EQ(
      interrupt("sp.toml --threads 1 -o sp.h5", "sp.h5.journal", kSphereHeaderLines + 6, "cut"),
      kExitInterrupted)
      << err("cut");
  // Change one hex digit of s in the third record (its checksum left as it was) and turn the
  // fifth record's s into nan: before the checksums, the first gave F many times too large with
  // status 0 and the second was used and reported as "missed rel_tol".
  std::vector<std::string> lines;
  {
    std::ifstream in(dir_ / "sp.h5.journal");
    for (std::string l; std::getline(in, l);) lines.push_back(l);
  }
  ASSERT_GE(lines.size(), kSphereHeaderLines + 5u);
  const auto field_start = [](const std::string& l, int k) {  // start of token k (0-based)
    std::size_t at = 0;
    for (int i = 0; i < k; ++i) at = l.find(' ', at) + 1;
    return at;
  };
  std::string& third = lines[kSphereHeaderLines + 2];
  const std::size_t s3 = field_start(third, 4);
  const std::size_t dot = third.find('.', s3);
  ASSERT_NE(dot, std::string::npos) << third;
  third[dot + 1] = third[dot + 1] == '7' ? '8' : '7';
  std::string& fifth = lines[kSphereHeaderLines + 4];
  const std::size_t s5 = field_start(fifth, 4);
  fifth.replace(s5, fifth.find(' ', s5) - s5, "nan");
  {
    std::ofstream out(dir_ / "sp.h5.journal", std::ios::trunc);
    for (const auto& l : lines) out << l << "\n";
  }
  ASSERT_EQ(run("sp.toml --threads 1 -o sp.h5", "resume"), 0) << err("resume");
  EXPECT_NE(err("resume").find(fmt::format("2 damaged records dropped (lines {}, {}",
                                           kSphereHeaderLines + 3, kSphereHeaderLines + 5)),
            std::string::npos)
      << err("resume");
  EXPECT_NE(err("resume").find("resumed: "), std::string::npos) << err("resume");
  EXPECT_EQ(compare("sp.h5", "full.h5"), "SAME\n");
}

TEST_F(Reliability, ACrlfJournalIsAcceptedAndSaysSo) {
  std::ofstream(dir_ / "sp.toml") << kSphere;
  ASSERT_EQ(run("sp.toml --threads 1 -o full.h5", "full"), 0) << err("full");
  ASSERT_EQ(
      interrupt("sp.toml --threads 1 -o sp.h5", "sp.h5.journal", kSphereHeaderLines + 4, "cut"),
      kExitInterrupted)
      << err("cut");
  ASSERT_EQ(sh("sed -i 's/$/\\r/' sp.h5.journal"), 0);
  ASSERT_NE(slurp(dir_ / "sp.h5.journal").find("\r\n"), std::string::npos);
  ASSERT_EQ(run("sp.toml --threads 1 -o sp.h5", "resume"), 0) << err("resume");
  EXPECT_NE(err("resume").find("CRLF line endings accepted"), std::string::npos) << err("resume");
  EXPECT_EQ(err("resume").find("damaged"), std::string::npos) << err("resume");
  EXPECT_EQ(compare("sp.h5", "full.h5"), "SAME\n");
}

}  // namespace
