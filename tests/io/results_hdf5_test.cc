// The HDF5 results file, read back by an outside reader (h5py under /usr/bin/python3).
#include "io/results_hdf5.h"

#include <fmt/format.h>
#include <gtest/gtest.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>

#include "io/errors.h"

namespace roundtrip::io {
namespace {

namespace fs = std::filesystem;

fs::path fresh_dir(const std::string& name) {
  const fs::path d = fs::temp_directory_path() / fmt::format("roundtrip_io_{}_{}", name, getpid());
  fs::remove_all(d);
  fs::create_directories(d);
  return d;
}

// A small hand-made result with known numbers (invented, only the layout is under test).
RunResult sample_result() {
  RunResult r;
  r.kind = "sphere-plate";
  r.description = "sphere R = 50 um of gold-drude above half-space of gold-drude";
  r.scale = ResultScale::kTotal;
  r.threads = 2;
  r.wall_seconds = 1.5;
  for (int i = 0; i < 3; ++i) {
    PointResult p;
    p.gap = 100e-9 * (i + 1);
    p.energy = -1e-18 / (i + 1);
    p.force = -2e-11 / (i + 1);
    p.gradient = 3e-4 / (i + 1);
    p.energy_error = 1e-24;
    p.pfa = PfaValues{p.energy * 1.01, p.force * 1.02, p.gradient * 1.03};
    p.truncation = {{"l_max", 20.0 + i}};
    p.wall_seconds = 0.5;
    for (int j = 0; j < 4; ++j)
      p.frequencies.terms.push_back({1e14 * j, 2e-21, Spectral{-0.1 * j, 1e6, -1e13}});
    r.points.push_back(p);
  }
  return r;
}

// h5py checks of the README layout; prints "OK" on success.
constexpr const char* kChecker = R"PY(
import sys, h5py, math
f = h5py.File(sys.argv[1], "r")
a = f.attrs
assert a["format"] == "roundtrip-results", a["format"]
assert int(a["format_version"]) == 1
for k in ["roundtrip_version", "git_commit", "created_utc", "geometry", "description",
          "frequency_rule", "title"]:
    assert isinstance(a[k], str) and a[k] != "" or k == "title", k
assert a["created_utc"].endswith("Z") and a["created_utc"][4] == "-"
assert int(a["threads"]) == 2 and float(a["wall_time_s"]) == 1.5
assert float(a["temperature_K"]) == 300.0 and float(a["rel_tol"]) == 1e-6
assert a["geometry"] == "sphere-plate"
text = f["input/case_file"].asstr()[()]
assert text == 'geometry = "sphere-plate"\n# µ\n', repr(text)
r = f["results"]
units = {"gap": "m", "energy": "J", "force": "N", "gradient": "N/m", "energy_error": "J",
         "energy_pfa": "J", "force_pfa": "N", "gradient_pfa": "N/m", "energy_ratio": "1",
         "force_ratio": "1", "gradient_ratio": "1", "wall_time_s": "s", "converged": "1"}
for name, u in units.items():
    assert r[name].shape == (3,), name
    assert r[name].attrs["units"] == u, (name, r[name].attrs["units"])
assert abs(r["gap"][1] - 200e-9) < 1e-22
assert abs(r["energy_ratio"][0] - 1 / 1.01) < 1e-12
assert list(r["truncation/l_max"][:]) == [20.0, 21.0, 22.0]
g = f["frequencies/2"]
assert abs(g.attrs["gap"] - 300e-9) < 1e-22
for name, u in {"xi": "rad/s", "weight": "J", "s": "1", "ds_dL": "1/m", "d2s_dL2": "1/m^2"}.items():
    assert g[name].shape == (4,) and g[name].attrs["units"] == u, name
assert abs(g["s"][3] + 0.3) < 1e-15
assert sorted(f["frequencies"].keys(), key=int) == ["0", "1", "2"]
print("OK")
)PY";

TEST(ResultsHdf5, LayoutReadsBackWithH5py) {
  const fs::path dir = fresh_dir("layout");
  const fs::path out = dir / "run.h5";
  {
    ResultsWriter w(out, "output.file");
    ResultsInfo info;
    info.case_path = "case.toml";
    info.case_text = "geometry = \"sphere-plate\"\n# \u00b5\n";
    info.temperature_K = 300.0;
    info.rel_tol = 1e-6;
    info.frequency_rule = "matsubara";
    info.quantities = {true, true, true};
    w.commit(sample_result(), info);
  }
  ASSERT_TRUE(fs::exists(out));
  EXPECT_EQ(std::distance(fs::directory_iterator(dir), fs::directory_iterator()), 1)
      << "temporary file left behind";
  const fs::path script = dir / "check.py";
  std::ofstream(script) << kChecker;
  const std::string cmd = fmt::format("/usr/bin/python3 {} {} > {} 2>&1", script.string(),
                                      out.string(), (dir / "log").string());
  const int rc = std::system(cmd.c_str());
  std::ifstream log(dir / "log");
  const std::string text((std::istreambuf_iterator<char>(log)), std::istreambuf_iterator<char>());
  EXPECT_EQ(rc, 0) << text;
  EXPECT_EQ(text, "OK\n");
  fs::remove_all(dir);
}

// Scans: /scan/<k> groups with the single-run layout inside, parameters as attributes; theta
// fits in results/pfa_theta; an interrupted run marked complete = 0.
TEST(ResultsHdf5, ScanGroupsThetaFitsAndCompletenessReadBackWithH5py) {
  const fs::path dir = fresh_dir("scan");
  const fs::path out = dir / "scan.h5";
  {
    ResultsWriter w(out, "output.file");
    ResultsInfo common;
    common.title = "scan";
    common.case_text = "[scan]\n";
    std::vector<ScanRunResult> runs;
    for (int k = 0; k < 2; ++k) {
      ScanRunResult run;
      run.result = sample_result();
      run.result.theta_energy.valid = true;
      run.result.theta_energy.theta = -1.25 - k;
      run.result.theta_energy.uncertainty = 0.05;
      run.result.theta_energy.points = 3;
      run.result.theta_energy.model = "1 + theta x + theta2 x^2";
      run.info.temperature_K = k == 0 ? 0.0 : 300.0;
      run.info.frequency_rule = k == 0 ? "zero-temperature-quadrature" : "matsubara";
      run.info.quantities = {true, true, true};
      run.info.body_lengths = {{"sphere_radius_m", 5e-6}};
      run.info.complete = k == 0;
      run.parameters = {{"temperature", k == 0 ? "0 K" : "300 K"}};
      runs.push_back(run);
    }
    w.commit_scan(runs, common, 3);
  }
  std::ofstream(dir / "check.py") << R"PY(import sys, h5py
f = h5py.File(sys.argv[1], "r")
assert "results" not in f and f.attrs["title"] == "scan"
assert int(f.attrs["scan_points"]) == 3 and int(f.attrs["scan_points_written"]) == 2
assert int(f.attrs["complete"]) == 0 and f.attrs["scan_keys"] == "temperature"
g0, g1 = f["scan/0"], f["scan/1"]
assert g0.attrs["scan.temperature"] == "0 K" and g1.attrs["scan.temperature"] == "300 K"
assert int(g0.attrs["complete"]) == 1 and int(g1.attrs["complete"]) == 0
assert float(g1.attrs["sphere_radius_m"]) == 5e-6
assert g0["frequencies/0/weight"].attrs["units"] == "J"
t = g1["results/pfa_theta/energy"].attrs
assert float(t["theta"]) == -2.25 and int(t["points"]) == 3 and "theta2" in t["model"]
assert "force" not in g1["results/pfa_theta"], "invalid fits are left out"
assert g0["results/energy"].shape == (3,)
print("OK")
)PY";
  const std::string cmd =
      fmt::format("/usr/bin/python3 {} {} > {} 2>&1", (dir / "check.py").string(), out.string(),
                  (dir / "log").string());
  const int rc = std::system(cmd.c_str());
  std::ifstream log(dir / "log");
  const std::string text((std::istreambuf_iterator<char>(log)), std::istreambuf_iterator<char>());
  EXPECT_EQ(rc, 0) << text;
  EXPECT_EQ(text, "OK\n");
  fs::remove_all(dir);
}

// An incomplete result never replaces a file with more finished gaps (or a complete one): it goes
// to <stem>.partial.h5 beside it; one with as many or more gaps replaces an incomplete file; a
// complete result replaces the file and removes the partial one. Decided from the `complete`
// attribute and the /results/gap lengths (read_existing_results).
TEST(ResultsHdf5, AnIncompleteResultNeverReplacesAFileWithMoreFinishedGaps) {
  const fs::path dir = fresh_dir("partial");
  const fs::path out = dir / "run.h5";
  const auto commit = [&](int gaps, bool complete) {
    RunResult r = sample_result();
    r.points.resize(gaps);
    ResultsInfo info;
    info.quantities = {true, true, true};
    info.complete = complete;
    info.gaps_planned = 3;
    return ResultsWriter(out, "output.file").commit(r, info);
  };
  EXPECT_EQ(partial_results_path(out), dir / "run.partial.h5");
  EXPECT_EQ(partial_results_path(dir / "run"), dir / "run.partial.h5");
  EXPECT_FALSE(read_existing_results(out).readable);

  CommitOutcome c = commit(3, true);
  EXPECT_EQ(c.written, out);
  ExistingResults e = read_existing_results(out);
  EXPECT_TRUE(e.readable && e.complete);
  EXPECT_EQ(e.finished_gaps, 3);

  c = commit(2, false);  // interrupted rerun: the complete file stays
  EXPECT_TRUE(c.kept_existing);
  EXPECT_EQ(c.written, dir / "run.partial.h5");
  EXPECT_TRUE(read_existing_results(out).complete);
  e = read_existing_results(dir / "run.partial.h5");
  EXPECT_TRUE(e.readable && !e.complete);
  EXPECT_EQ(e.finished_gaps, 2);

  c = commit(3, true);  // the complete run replaces the file and removes the partial one
  EXPECT_EQ(c.written, out);
  EXPECT_TRUE(c.removed_partial);
  EXPECT_FALSE(fs::exists(dir / "run.partial.h5"));

  fs::remove(out);
  c = commit(2, false);
  EXPECT_EQ(c.written, out);
  c = commit(1, false);  // fewer finished gaps than the incomplete file: beside it
  EXPECT_EQ(c.written, dir / "run.partial.h5");
  EXPECT_EQ(read_existing_results(out).finished_gaps, 2);
  c = commit(2, false);  // as many: replaces it
  EXPECT_EQ(c.written, out);
  EXPECT_FALSE(c.kept_existing);
  for (const auto& f : fs::directory_iterator(dir))
    EXPECT_EQ(f.path().string().find(".tmp."), std::string::npos) << f.path();
  fs::remove_all(dir);
}

TEST(ResultsHdf5, AbandonedRunLeavesNoFile) {
  const fs::path dir = fresh_dir("abandon");
  { ResultsWriter w(dir / "run.h5", "output.file"); }  // no commit: the computation failed
  EXPECT_TRUE(fs::is_empty(dir));
  fs::remove_all(dir);
}

TEST(ResultsHdf5, UnwritablePathFailsBeforeComputing) {
  const fs::path dir = fresh_dir("unwritable");
  const auto message = [](const fs::path& p) -> std::string {
    try {
      ResultsWriter w(p, "output.file");
    } catch (const CaseError& e) {
      return e.what();
    }
    return "no error";
  };
  const std::string missing = message(dir / "no_such_dir" / "run.h5");
  EXPECT_NE(missing.find("output.file"), std::string::npos) << missing;
  EXPECT_NE(missing.find("does not exist"), std::string::npos) << missing;
  std::ofstream(dir / "case.toml") << "title = \"keep me\"\n";
  const std::string not_hdf5 = message(dir / "case.toml");
  EXPECT_NE(not_hdf5.find("not overwriting it"), std::string::npos) << not_hdf5;
  std::ifstream kept(dir / "case.toml");
  std::string first;
  std::getline(kept, first);
  EXPECT_EQ(first, "title = \"keep me\"");
  fs::remove(dir / "case.toml");
  const std::string is_dir = message(dir);
  EXPECT_NE(is_dir.find("is a directory"), std::string::npos) << is_dir;
  EXPECT_TRUE(fs::is_empty(dir));
  fs::remove_all(dir);
}

}  // namespace
}  // namespace roundtrip::io
