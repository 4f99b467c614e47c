// `roundtrip run` under mpirun (built with -DROUNDTRIP_USE_MPI=ON only): 2 and 4 ranks give the
// serial numbers for every geometry kind of the registry; a run stopped under MPI resumes from
// its journal; a failing rank ends every rank with one clear message.
// Ranks are oversubscribed on small machines (--oversubscribe: more ranks than cores, each rank
// one thread) and CI runs as root (--allow-run-as-root).
// Check: design (frequency_rounds.h: the same frequencies, per-term accuracies and summation
// order as the serial run), so the comparison is exact, as the README's thread-count row.
#include <H5Cpp.h>
#include <fcntl.h>
#include <gtest/gtest.h>
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <thread>
#include <vector>

#include "io/kinds/kind.h"

namespace fs = std::filesystem;

namespace {

const std::string kMpirun = std::string(ROUNDTRIP_MPIEXEC) + " --oversubscribe --allow-run-as-root";

int sh(const std::string& cmd) {
  const int rc = std::system(cmd.c_str());
  return WIFEXITED(rc) ? WEXITSTATUS(rc) : 128 + WTERMSIG(rc);
}

std::string slurp(const fs::path& p) {
  std::ifstream in(p);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

// A small case of any kind (invented values), as tests/parallel/rounds_test.cc.
std::string small_case(const roundtrip::io::GeometryKind& k, const std::string& extra) {
  using roundtrip::geometry::Shape;
  const bool pec = k.lower.shape == Shape::kCylinder || k.upper.shape == Shape::kCylinder;
  std::string text = "geometry = \"" + k.name + "\"\n";
  for (const roundtrip::io::BodySlot* s : {&k.lower, &k.upper}) {
    if (!s->defaults_to.empty()) continue;
    text += "[" + s->table + "]\n";
    if (s->shape == Shape::kAtom) {
      text += "species = \"rubidium\"\n";
    } else if (s->shape == Shape::kGrating) {
      text +=
          "period = \"400 nm\"\nprofile = \"lamellar\"\nfilling = 0.5\ndepth = \"100 nm\"\n"
          "material = \"silicon\"\n";
    } else {
      if (s->shape != Shape::kPlate) text += "radius = \"1 um\"\n";
      text += pec ? "material = \"perfect-conductor\"\n" : "material = \"gold-drude\"\n";
    }
  }
  text +=
      "[separations]\nvalues = [\"400 nm\", \"700 nm\"]\n[conditions]\n"
      "temperature = \"300 K\"\n[compute]\nquantities = [\"energy\", \"force\", "
      "\"gradient\"]\n[numerics]\nrel_tol = 1e-4\n";
  if (k.lower.shape == Shape::kGrating || k.upper.shape == Shape::kGrating) text += "orders = 2\n";
  return text + extra;
}

std::vector<double> column(const fs::path& file, const std::string& name) {
  H5::H5File f(file.string(), H5F_ACC_RDONLY);
  H5::DataSet d = f.openDataSet(name);
  hsize_t n = 0;
  d.getSpace().getSimpleExtentDims(&n);
  std::vector<double> v(n);
  d.read(v.data(), H5::PredType::NATIVE_DOUBLE);
  return v;
}

class MpiRun : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_ = fs::temp_directory_path() /
           ("roundtrip_mpi_" + std::to_string(getpid()) + "_" +
            ::testing::UnitTest::GetInstance()->current_test_info()->name());
    fs::remove_all(dir_);
    fs::create_directories(dir_);
  }
  void TearDown() override { fs::remove_all(dir_); }
  fs::path write(const std::string& name, const std::string& text) {
    std::ofstream(dir_ / name) << text;
    return dir_ / name;
  }
  // `roundtrip run` with `ranks` MPI ranks (0: no mpirun), 1 thread each.
  int run(int ranks, const fs::path& c, const fs::path& out, const std::string& log,
          const std::string& more = "") {
    const std::string launch = ranks > 0 ? kMpirun + " -np " + std::to_string(ranks) + " " : "";
    return sh("cd '" + dir_.string() + "' && " + launch + "'" + ROUNDTRIP_CLI + "' run '" +
              c.string() + "' -o '" + out.string() + "' --threads 1 " + more + " > " + log +
              ".out 2> " + log + ".err");
  }
  fs::path dir_;
};

TEST_F(MpiRun, TwoAndFourRanksGiveTheSerialNumbersForEveryGeometryKind) {
  for (const auto& k : roundtrip::io::geometry_kinds()) {
    SCOPED_TRACE(k.name);
    const fs::path c = write(k.name + ".toml", small_case(k, ""));
    // Status 3 (a truncation not verified against rel_tol: the coarse grating) must be the same.
    const int serial = run(0, c, dir_ / "serial.h5", "serial");
    ASSERT_TRUE(serial == 0 || serial == 3) << slurp(dir_ / "serial.err");
    for (int ranks : {2, 4}) {
      SCOPED_TRACE(ranks);
      const fs::path out = dir_ / (std::to_string(ranks) + ".h5");
      ASSERT_EQ(run(ranks, c, out, "mpi"), serial) << slurp(dir_ / "mpi.err");
      EXPECT_NE(slurp(dir_ / "mpi.out").find(std::to_string(ranks) + " ranks x 1 thread"),
                std::string::npos);
      for (const char* q : {"results/energy", "results/force", "results/gradient"})
        EXPECT_EQ(column(dir_ / "serial.h5", q), column(out, q)) << q;
      EXPECT_FALSE(fs::exists(dir_ / ((std::to_string(ranks) + ".h5.journal"))));
    }
  }
}

TEST_F(MpiRun, AScanSpreadsOverRanksAndMatchesTheSerialScan) {
  const auto& k = *roundtrip::io::find_geometry_kind("plate-plate");
  const fs::path c =
      write("scan.toml", small_case(k,
                                    "[scan]\ntemperature = [\"0 K\", \"300 K\"]\nmaterial = "
                                    "[\"gold-drude\", \"gold-plasma\"]\n"));
  ASSERT_EQ(run(0, c, dir_ / "serial.h5", "serial"), 0) << slurp(dir_ / "serial.err");
  ASSERT_EQ(run(3, c, dir_ / "mpi.h5", "mpi"), 0) << slurp(dir_ / "mpi.err");
  for (int p = 0; p < 4; ++p)
    EXPECT_EQ(column(dir_ / "serial.h5", "scan/" + std::to_string(p) + "/results/force"),
              column(dir_ / "mpi.h5", "scan/" + std::to_string(p) + "/results/force"));
}

// One gap with few frequencies and many m blocks (sphere-plate, R = 30 um, L = 3 um at 300 K:
// ~6 frequencies): 2 and 4
// ranks cut the frequencies into m-block tasks (the stats line says so) and give the serial
// numbers. Invented values.
TEST_F(MpiRun, MBlockTasksOfOneGapGiveTheSerialNumbers) {
  std::string text = small_case(*roundtrip::io::find_geometry_kind("sphere-plate"), "");
  text.replace(text.find("radius = \"1 um\""), 15, "radius = \"30 um\"");
  const std::string gaps = "values = [\"400 nm\", \"700 nm\"]";
  text.replace(text.find(gaps), gaps.size(), "values = [\"3 um\"]");
  const fs::path c = write("blocks.toml", text);
  ASSERT_EQ(run(0, c, dir_ / "serial.h5", "serial"), 0) << slurp(dir_ / "serial.err");
  for (int ranks : {2, 4}) {
    SCOPED_TRACE(ranks);
    const fs::path out = dir_ / (std::to_string(ranks) + ".h5");
    ASSERT_EQ(run(ranks, c, out, "mpi"), 0) << slurp(dir_ / "mpi.err");
    const std::string err = slurp(dir_ / "mpi.err");
    EXPECT_NE(err.find("split into"), std::string::npos) << err;
    EXPECT_NE(err.find("block tasks (m blocks, k_z or Bloch nodes"), std::string::npos) << err;
    for (const char* q : {"results/energy", "results/force", "results/gradient"})
      EXPECT_EQ(column(dir_ / "serial.h5", q), column(out, q)) << q;
  }
}

// One gap with few frequencies (R = 3 um, L = 3 um at 300 K, perfect conductors: ~6
// frequencies) of a cylinder-plate and a cylinder-cylinder: 2 and 4 ranks cut the frequencies'
// k_z integrals into node tasks (the stats line says so) and give the serial numbers. Invented
// values.
TEST_F(MpiRun, KzNodeTasksOfOneGapGiveTheSerialNumbers) {
  for (const char* kind : {"cylinder-plate", "cylinder-cylinder"}) {
    SCOPED_TRACE(kind);
    std::string text = small_case(*roundtrip::io::find_geometry_kind(kind), "");
    for (std::size_t at = text.find("radius = \"1 um\""); at != std::string::npos;
         at = text.find("radius = \"1 um\"", at))
      text.replace(at, 15, "radius = \"3 um\"");
    const std::string gaps = "values = [\"400 nm\", \"700 nm\"]";
    text.replace(text.find(gaps), gaps.size(), "values = [\"3 um\"]");
    const fs::path c = write("kz.toml", text);
    ASSERT_EQ(run(0, c, dir_ / "serial.h5", "serial"), 0) << slurp(dir_ / "serial.err");
    for (int ranks : {2, 4}) {
      SCOPED_TRACE(ranks);
      const fs::path out = dir_ / (std::to_string(ranks) + ".h5");
      ASSERT_EQ(run(ranks, c, out, "mpi"), 0) << slurp(dir_ / "mpi.err");
      const std::string err = slurp(dir_ / "mpi.err");
      EXPECT_NE(err.find("split into"), std::string::npos) << err;
      EXPECT_NE(err.find("block tasks (m blocks, k_z or Bloch nodes"), std::string::npos) << err;
      for (const char* q : {"results/energy", "results/force", "results/gradient"})
        EXPECT_EQ(column(dir_ / "serial.h5", q), column(out, q)) << q;
    }
  }
}

// One gap with few frequencies (L = 3 um at 300 K: ~3 frequencies) of a grating-plate and a
// grating-grating: 2 and 4 ranks cut the frequencies' Bloch integrals into node tasks (the
// stats line says so) and give the serial numbers, the lateral force of grating-grating too.
// Invented values.
TEST_F(MpiRun, BlochNodeTasksOfOneGapGiveTheSerialNumbers) {
  for (const char* kind : {"grating-plate", "grating-grating"}) {
    SCOPED_TRACE(kind);
    std::string text = small_case(*roundtrip::io::find_geometry_kind(kind), "");
    const std::string gaps = "values = [\"400 nm\", \"700 nm\"]";
    text.replace(text.find(gaps), gaps.size(), "values = [\"3 um\"]");
    const fs::path c = write("bloch.toml", text);
    // Status 3 (a truncation not verified against rel_tol: the coarse grating) must be the same.
    const int serial = run(0, c, dir_ / "serial.h5", "serial");
    ASSERT_TRUE(serial == 0 || serial == 3) << slurp(dir_ / "serial.err");
    const bool lateral = std::string(kind) == "grating-grating";
    for (int ranks : {2, 4}) {
      SCOPED_TRACE(ranks);
      const fs::path out = dir_ / (std::to_string(ranks) + ".h5");
      ASSERT_EQ(run(ranks, c, out, "mpi"), serial) << slurp(dir_ / "mpi.err");
      const std::string err = slurp(dir_ / "mpi.err");
      EXPECT_NE(err.find("split into"), std::string::npos) << err;
      EXPECT_NE(err.find("block tasks (m blocks, k_z or Bloch nodes"), std::string::npos) << err;
      for (const char* q : {"results/energy", "results/force", "results/gradient"})
        EXPECT_EQ(column(dir_ / "serial.h5", q), column(out, q)) << q;
      if (lateral)
        EXPECT_EQ(column(dir_ / "serial.h5", "results/lateral_force"),
                  column(out, "results/lateral_force"));
    }
  }
}

// A material scan of a sphere-plate is computed together under MPI as in the serial run
// (solver/run.h, SharedFrequencyValues) and gives the serial numbers of both points; rank 0
// prints progress lines like the serial run's. Invented values.
TEST_F(MpiRun, AMaterialScanIsComputedTogetherAndShowsProgress) {
  const fs::path c =
      write("scan.toml", small_case(*roundtrip::io::find_geometry_kind("sphere-plate"),
                                    "[scan]\nmaterial = [\"gold-drude\", \"gold-plasma\"]\n"));
  ASSERT_EQ(run(0, c, dir_ / "serial.h5", "serial"), 0) << slurp(dir_ / "serial.err");
  ASSERT_EQ(run(2, c, dir_ / "mpi.h5", "mpi", "--progress"), 0) << slurp(dir_ / "mpi.err");
  const std::string err = slurp(dir_ / "mpi.err");
  EXPECT_NE(err.find("computed together with point 1"), std::string::npos) << err;
  EXPECT_NE(err.find("roundtrip: 2 scan points together, starting gap"), std::string::npos) << err;
  EXPECT_NE(err.find("gap 4 of 4 done"), std::string::npos) << err;
  for (int p = 0; p < 2; ++p)
    for (const char* q : {"/results/energy", "/results/force", "/results/gradient"})
      EXPECT_EQ(column(dir_ / "serial.h5", "scan/" + std::to_string(p) + q),
                column(dir_ / "mpi.h5", "scan/" + std::to_string(p) + q))
          << p << q;
}

// Start mpirun in the background; SIGUSR1 it once the journal holds `records` records; the
// rerun under MPI resumes and gives the serial numbers.
TEST_F(MpiRun, AStoppedRunResumesUnderMpiWithTheSerialNumbers) {
  const auto& k = *roundtrip::io::find_geometry_kind("sphere-plate");
  std::string text = small_case(k, "");
  // Larger and more gaps: a run of several seconds (invented values).
  const auto swap = [&](const std::string& from, const std::string& to) {
    text.replace(text.find(from), from.size(), to);
  };
  // (At 4 um and 4 gaps the whole run took 1.4 s on a quiet 2-core machine and could finish
  // before the stop; 10 um and 6 gaps take several seconds.)
  swap("radius = \"1 um\"", "radius = \"10 um\"");
  swap("values = [\"400 nm\", \"700 nm\"]",
       "values = [\"150 nm\", \"200 nm\", \"250 nm\", \"300 nm\", \"400 nm\", \"500 nm\"]");
  const fs::path c = write("sp.toml", text);
  ASSERT_EQ(run(0, c, dir_ / "serial.h5", "serial"), 0) << slurp(dir_ / "serial.err");
  const fs::path out = dir_ / "mpi.h5", journal = dir_ / "mpi.h5.journal";
  const pid_t pid = fork();
  if (pid == 0) {
    setpgid(0, 0);
    const std::string cmd = "exec " + kMpirun + " -np 2 '" + ROUNDTRIP_CLI + "' run '" +
                            c.string() + "' -o '" + out.string() + "' --threads 1 > '" +
                            (dir_ / "first.out").string() + "' 2> '" +
                            (dir_ / "first.err").string() + "'";
    execl("/bin/sh", "sh", "-c", cmd.c_str(), static_cast<char*>(nullptr));
    _exit(127);
  }
  // Wait for some finished frequencies (at most 120 s), then stop the job like a time limit.
  const auto t0 = std::chrono::steady_clock::now();
  int lines = 0;
  while (std::chrono::steady_clock::now() - t0 < std::chrono::seconds(120)) {
    const std::string j = slurp(journal);
    lines = static_cast<int>(std::count(j.begin(), j.end(), '\n'));
    if (lines > 30) break;
    std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
  // mpirun passes SIGUSR1 on to every rank (a SIGTERM to mpirun itself makes OpenMPI 4 exit
  // with 1 and kill the ranks a second later, README "Clusters (MPI)").
  kill(pid, SIGUSR1);
  int status = 0;
  waitpid(pid, &status, 0);
  ASSERT_TRUE(fs::exists(journal)) << slurp(dir_ / "first.err");
  const std::string first_err = slurp(dir_ / "first.err");
  // Rank 0 wrote the finished gaps and kept the journal; every rank returned 130, so mpirun did.
  EXPECT_NE(first_err.find("roundtrip: interrupted:"), std::string::npos) << first_err;
  ASSERT_TRUE(WIFEXITED(status)) << first_err;
  EXPECT_EQ(WEXITSTATUS(status), 130) << first_err;
  const std::string journal_before = slurp(journal);
  ASSERT_EQ(run(4, c, out, "second"), 0) << slurp(dir_ / "second.err");
  EXPECT_NE(slurp(dir_ / "second.err").find("resuming from"), std::string::npos)
      << "first run: " << first_err;
  for (const char* q : {"results/energy", "results/force", "results/gradient"})
    EXPECT_EQ(column(dir_ / "serial.h5", q), column(out, q)) << q;
  EXPECT_FALSE(fs::exists(journal));
}

TEST_F(MpiRun, ACaseErrorOnOneRankIsReportedOnceAndEveryRankExitsWithStatusOne) {
  const auto& k = *roundtrip::io::find_geometry_kind("plate-plate");
  const fs::path c = write("good.toml", small_case(k, ""));
  // MPMD launch: rank 1 is given a case file that does not exist (as on a node without it).
  const int rc = sh("cd '" + dir_.string() + "' && " + kMpirun + " -np 1 '" + ROUNDTRIP_CLI +
                    "' run '" + c.string() + "' -o out.h5 --threads 1 : -np 1 '" + ROUNDTRIP_CLI +
                    "' run missing.toml -o out.h5 --threads 1 > log.out 2> log.err");
  EXPECT_EQ(rc, 1);
  const std::string err = slurp(dir_ / "log.err");
  EXPECT_NE(err.find("roundtrip: error: rank 1 of 2"), std::string::npos) << err;
  EXPECT_NE(err.find("missing.toml"), std::string::npos) << err;
  EXPECT_FALSE(fs::exists(dir_ / "out.h5"));
  EXPECT_FALSE(fs::exists(dir_ / "out.h5.journal"));
}

TEST_F(MpiRun, ADifferentCaseOnOneRankIsRefused) {
  const auto& k = *roundtrip::io::find_geometry_kind("plate-plate");
  const fs::path a = write("a.toml", small_case(k, ""));
  std::string other = small_case(k, "");
  other.replace(other.find("rel_tol = 1e-4"), 14, "rel_tol = 1e-5");
  const fs::path b = write("b.toml", other);
  const int rc = sh("cd '" + dir_.string() + "' && " + kMpirun + " -np 1 '" + ROUNDTRIP_CLI +
                    "' run '" + a.string() + "' -o out.h5 --threads 1 : -np 1 '" + ROUNDTRIP_CLI +
                    "' run '" + b.string() + "' -o out.h5 --threads 1 > log.out 2> log.err");
  EXPECT_EQ(rc, 1);
  const std::string err = slurp(dir_ / "log.err");
  EXPECT_NE(err.find("differs from rank 0's"), std::string::npos) << err;
}

TEST_F(MpiRun, ARankThatFailsDuringTheRunEndsEveryRankWithAClearMessage) {
  const auto& k = *roundtrip::io::find_geometry_kind("sphere-plate");
  const fs::path c = write("sp.toml", small_case(k, ""));
  // Fault injection (DEVELOPERS.md): rank 1 fails its first task as a solver failure would.
  const auto t0 = std::chrono::steady_clock::now();
  const int rc =
      sh("cd '" + dir_.string() + "' && " + kMpirun + " -np 3 -x ROUNDTRIP_FAULT_INJECT_RANK=1 '" +
         ROUNDTRIP_CLI + "' run '" + c.string() + "' -o out.h5 --threads 1 > log.out 2> log.err");
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  EXPECT_NE(rc, 0);
  EXPECT_LT(seconds, 60.0);  // no hang
  const std::string err = slurp(dir_ / "log.err");
  EXPECT_NE(err.find("roundtrip: error: rank 1 of 3"), std::string::npos) << err;
  EXPECT_NE(err.find("the solver failed"), std::string::npos) << err;
  EXPECT_NE(err.find("stopping every rank"), std::string::npos) << err;
  EXPECT_FALSE(fs::exists(dir_ / "out.h5"));
  bool temp_left = false;
  for (const auto& e : fs::directory_iterator(dir_))
    temp_left = temp_left || e.path().string().find(".tmp.") != std::string::npos;
  EXPECT_FALSE(temp_left);
}

}  // namespace
