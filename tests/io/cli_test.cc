// The `roundtrip` program end to end: bad input is refused with a message naming the field and
// no output file; good input prints a table and writes an HDF5 file an outside reader (h5py)
// agrees with.
#include <fmt/format.h>
#include <gtest/gtest.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "common/cli_runner.h"

namespace {

namespace fs = std::filesystem;

using roundtrip::testing::Outcome;
using roundtrip::testing::slurp;

struct BadCase {
  const char* what;
  std::string text;
  std::vector<std::string> expected;  // fragments of the error message
};

// A scratch directory per test; the CLI runs with it as the current directory.
class Cli : public roundtrip::testing::CliTest {
 protected:
  // `run` on the bad case exits 1 with "roundtrip: error: " and every expected fragment, prints
  // nothing on stdout and writes no results file and no journal; `check` refuses it too.
  void expect_refused(const BadCase& c) {
    SCOPED_TRACE(c.what);
    write("bad.toml", c.text);
    const Outcome o = cli("run bad.toml --quiet");
    EXPECT_EQ(o.status, 1) << o.err;
    EXPECT_EQ(o.err.rfind("roundtrip: error: ", 0), 0u) << o.err;
    for (const auto& e : c.expected) EXPECT_NE(o.err.find(e), std::string::npos) << o.err;
    EXPECT_EQ(o.out, "");
    EXPECT_FALSE(any_h5()) << "an output file was written";
    EXPECT_FALSE(fs::exists(dir_ / "bad.h5.journal")) << "a journal was left";
    const Outcome chk = cli("check bad.toml");
    EXPECT_EQ(chk.status, 1) << chk.err;
    EXPECT_NE(chk.err.find(c.expected.front()), std::string::npos) << chk.err;
    EXPECT_FALSE(any_h5());
  }
};

// A small valid plate-plate case (invented numbers); tests break it one line at a time.
const std::string kGoodCase = R"(title = "cli test"
geometry = "plate-plate"
[plate]
material = "gold-drude"
[separations]
values = ["200 nm", "400 nm"]
[conditions]
temperature = "300 K"
[numerics]
rel_tol = 1e-4
[output]
file = "out.h5"
)";

std::string replaced(std::string text, const std::string& from, const std::string& to) {
  const auto at = text.find(from);
  EXPECT_NE(at, std::string::npos) << "test set-up: '" << from << "' not in the case";
  if (at != std::string::npos) text.replace(at, from.size(), to);
  return text;
}

TEST_F(Cli, EveryKindOfBadCaseFailsNamingTheFieldAndWritesNothing) {
  const std::vector<BadCase> cases = {
      {"unknown key",
       replaced(kGoodCase, "[conditions]\n", "[conditions]\ntemprature = \"1 K\"\n"),
       {"bad.toml:8: conditions.temprature = \"1 K\": unknown key"}},
      {"unknown table",
       kGoodCase + "[sphre]\nradius = \"1 um\"\n",
       {"bad.toml:13: sphre", "unknown key"}},
      {"missing table",
       replaced(kGoodCase, "[conditions]\ntemperature = \"300 K\"\n", ""),
       {"conditions", "missing table [conditions]"}},
      {"missing field",
       replaced(kGoodCase, "material = \"gold-drude\"\n", ""),
       {"plate", "missing required key 'material'"}},
      {"malformed TOML",
       replaced(kGoodCase, "\"plate-plate\"", "\"plate-plate"),
       {"bad.toml:2:", "malformed TOML"}},
      {"negative gap",
       replaced(kGoodCase, "\"400 nm\"", "\"-400 nm\""),
       {"bad.toml:6: separations.values[1] = \"-400 nm\": a gap must be > 0"}},
      {"zero gap",
       replaced(kGoodCase, "values = [\"200 nm\", \"400 nm\"]",
                "from = \"0 nm\"\nto = \"1 um\"\ncount = 3"),
       {"bad.toml:6: separations.from = \"0 nm\": a gap must be > 0"}},
      {"gap without unit",
       replaced(kGoodCase, "\"200 nm\"", "200e-9"),
       {"bad.toml:6: separations.values[0] = 2e-07: a bare number has no unit"}},
      {"NaN gap",
       replaced(kGoodCase, "\"200 nm\"", "\"nan nm\""),
       {"separations.values[0] = \"nan nm\": not a finite number"}},
      {"negative temperature",
       replaced(kGoodCase, "\"300 K\"", "\"-1 K\""),
       {"bad.toml:8: conditions.temperature = \"-1 K\": a temperature must be >= 0 K"}},
      {"NaN tolerance",
       replaced(kGoodCase, "1e-4", "nan"),
       {"bad.toml:10: numerics.rel_tol = nan: not a finite number"}},
      {"tolerance out of range",
       replaced(kGoodCase, "1e-4", "0.5"),
       {"bad.toml:10: numerics.rel_tol = 0.5", "0 < rel_tol < 0.1"}},
      {"unknown frequency rule",
       replaced(kGoodCase, "rel_tol = 1e-4\n", "rel_tol = 1e-4\nfrequency_rule = \"simpson\"\n"),
       {"bad.toml:11: numerics.frequency_rule = \"simpson\": unknown rule", "\"pade\""}},
      {"Pade decomposition at 0 K",
       replaced(replaced(kGoodCase, "\"300 K\"", "\"0 K\""), "rel_tol = 1e-4\n",
                "rel_tol = 1e-4\nfrequency_rule = \"pade\"\n"),
       {"bad.toml:11: numerics.frequency_rule = \"pade\": \"pade\" needs T > 0"}},
      {"unknown material",
       replaced(kGoodCase, "\"gold-drude\"", "\"unobtainium\""),
       {"bad.toml:4: plate.material = \"unobtainium\": unknown material", "gold-drude"}},
      {"wrong type",
       replaced(kGoodCase, "\"plate-plate\"", "3"),
       {"bad.toml:2: geometry = 3: expected a string"}},
      {"unknown geometry",
       replaced(kGoodCase, "\"plate-plate\"", "\"plate-cylinder\""),
       {"geometry = \"plate-cylinder\": unknown geometry"}},
      {"unwritable output",
       replaced(kGoodCase, "\"out.h5\"", "\"no_such_dir/out.h5\""),
       {"bad.toml:12: output.file = \"no_such_dir/out.h5\"", "does not exist"}},
  };
  for (const auto& c : cases) expect_refused(c);
}

// A small sphere-plate case (invented numbers) for the bad-input cases that need a sphere or a
// user material.
const std::string kSphereCase = roundtrip::testing::kSmallSphereCase;

std::string with_user_material(const std::string& definition) {
  return replaced(kSphereCase, "[plate]\nmaterial = \"gold-drude\"",
                  "[plate]\nmaterial = \"mine\"") +
         "[materials.mine]\n" + definition;
}

TEST_F(Cli, OverlapRadiusInfinityAndTableMistakesFailNamingTheFieldAndWriteNothing) {
  write("garbage.csv", "wavelength,n\nfoo,bar\n");
  fs::create_directories(dir_ / "folder.csv");  // exists but cannot be read as a file
  const std::vector<BadCase> cases = {
      {"overlapping bodies",
       replaced(kSphereCase, "\"1 um\"", "\"-1 um\""),
       {"bad.toml:8: separations.values[0] = \"-1 um\"", "overlapping bodies"}},
      {"negative radius",
       replaced(kSphereCase, "\"5 um\"", "\"-5 um\""),
       {"bad.toml:3: sphere.radius = \"-5 um\": a radius must be > 0"}},
      {"zero radius",
       replaced(kSphereCase, "\"5 um\"", "\"0 um\""),
       {"bad.toml:3: sphere.radius = \"0 um\": a radius must be > 0"}},
      {"infinite radius",
       replaced(kSphereCase, "\"5 um\"", "\"inf um\""),
       {"bad.toml:3: sphere.radius = \"inf um\": not a finite number"}},
      {"infinite gap",
       replaced(kSphereCase, "\"1 um\"", "\"inf nm\""),
       {"bad.toml:8: separations.values[0] = \"inf nm\": not a finite number"}},
      {"infinite temperature",
       replaced(kSphereCase, "\"300 K\"", "\"inf K\""),
       {"bad.toml:10: conditions.temperature = \"inf K\": not a finite number"}},
      {"NaN temperature",
       replaced(kSphereCase, "\"300 K\"", "\"nan K\""),
       {"bad.toml:10: conditions.temperature = \"nan K\": not a finite number"}},
      {"infinite tolerance",
       kSphereCase + "[numerics]\nrel_tol = inf\n",
       {"bad.toml:12: numerics.rel_tol = inf: not a finite number"}},
      {"zero tolerance",
       kSphereCase + "[numerics]\nrel_tol = 0\n",
       {"bad.toml:12: numerics.rel_tol = 0", "0 < rel_tol < 0.1"}},
      {"infinite material parameter",
       with_user_material(
           "model = \"drude\"\nplasma_frequency = \"inf eV\"\ndamping = \"35 meV\"\n"),
       {"materials.mine.plasma_frequency = \"inf eV\": not a finite number"}},
      {"NaN material parameter",
       with_user_material("model = \"constant\"\neps = nan\n"),
       {"materials.mine.eps = nan: not a finite number"}},
      {"unknown material model",
       with_user_material("model = \"jellium\"\n"),
       {"materials.mine.model = \"jellium\""}},
      {"missing table file",
       with_user_material("model = \"table\"\nfile = \"missing.csv\"\n"),
       {"materials.mine.file = \"missing.csv\": no such file"}},
      {"unreadable table file",
       with_user_material("model = \"table\"\nfile = \"folder.csv\"\n"),
       {"materials.mine.file = \"folder.csv\""}},
      {"malformed table",
       with_user_material("model = \"table\"\nfile = \"garbage.csv\"\n"),
       {"materials.mine.file = \"garbage.csv\"", "garbage.csv:1: header"}},
      {"bad scan value",
       kSphereCase + "[scan]\nradius = [\"1 um\", \"-1 um\"]\n",
       {"bad.toml:12: scan.radius[1] = \"-1 um\": a radius must be > 0"}},
  };
  for (const auto& c : cases) expect_refused(c);
}

// Two spheres (invented numbers): overlapping spheres, shells thicker than the radius, a zero or
// negative shell thickness and an unknown key in [sphere2] each name file:line, key and value,
// and nothing is written (no results file, no journal).
const std::string kTwoSpheres = R"(geometry = "sphere-sphere"
[sphere]
radius = "1 um"
material = "gold-drude"
[sphere2]
radius = "2 um"
material = "gold-drude"
[separations]
values = ["100 nm"]
[conditions]
temperature = "0 K"
)";

TEST_F(Cli, BadTwoSphereAndShellCasesNameTheFieldAndWriteNothing) {
  const std::vector<BadCase> cases = {
      {"overlapping spheres",
       replaced(kTwoSpheres, "\"100 nm\"", "\"-10 nm\""),
       {"bad.toml:9: separations.values[0] = \"-10 nm\"", "overlapping bodies"}},
      {"touching spheres",
       replaced(kTwoSpheres, "\"100 nm\"", "\"0 nm\""),
       {"bad.toml:9: separations.values[0] = \"0 nm\"", "touch"}},
      {"shells thicker than the radius",
       replaced(kTwoSpheres, "radius = \"2 um\"\n",
                "radius = \"2 um\"\nshells = [{ material = \"silica\", thickness = \"1.5 um\" "
                "},\n  { material = \"silica\", thickness = \"0.5 um\" }]\n"),
       {"bad.toml:8: sphere2.shells[1].thickness = \"0.5 um\"", "not less than the radius"}},
      {"zero shell thickness",
       replaced(kTwoSpheres, "radius = \"1 um\"\n",
                "radius = \"1 um\"\nshells = [{ material = \"silica\", thickness = \"0 nm\" }]\n"),
       {"bad.toml:4: sphere.shells[0].thickness = \"0 nm\""}},
      {"negative shell thickness",
       replaced(kTwoSpheres, "radius = \"1 um\"\n",
                "radius = \"1 um\"\nshells = [{ material = \"silica\", thickness = \"-5 nm\" }]\n"),
       {"bad.toml:4: sphere.shells[0].thickness = \"-5 nm\""}},
      {"unknown key in [sphere2]",
       replaced(kTwoSpheres, "radius = \"2 um\"\n", "radius = \"2 um\"\ncolour = \"gold\"\n"),
       {"bad.toml:7: sphere2.colour = \"gold\": unknown key"}},
      {"[plate] in a two-sphere case",
       kTwoSpheres + "[plate]\nmaterial = \"gold-drude\"\n",
       {"bad.toml:12: [plate] is not used by geometry = \"sphere-sphere\""}},
  };
  for (const auto& c : cases) expect_refused(c);
  // The same two spheres without the mistakes run (T = 0, one gap, small R/L).
  write("good.toml", kTwoSpheres + "[numerics]\nrel_tol = 1e-3\n");
  const Outcome ok = cli("run good.toml --quiet");
  EXPECT_EQ(ok.status, 0) << ok.err;
  EXPECT_NE(ok.out.find("spheres of gold-drude (R1 = 1 um) and gold-drude (R2 = 2 um)"),
            std::string::npos)
      << ok.out;
}

TEST_F(Cli, MissingCaseFileAndBadOptionsAreErrors) {
  Outcome o = cli("run nowhere.toml");
  EXPECT_EQ(o.status, 1);
  EXPECT_NE(o.err.find("nowhere.toml: cannot open the case file"), std::string::npos) << o.err;
  write("good.toml", kGoodCase);
  o = cli("run good.toml -o /proc/roundtrip.h5");
  EXPECT_EQ(o.status, 1);
  EXPECT_NE(o.err.find("-o = \"/proc/roundtrip.h5\""), std::string::npos) << o.err;
  o = cli("run good.toml --threads 0");
  EXPECT_EQ(o.status, 2);
  EXPECT_NE(o.err.find("--threads"), std::string::npos) << o.err;
  o = cli("frobnicate");
  EXPECT_EQ(o.status, 2);
  EXPECT_FALSE(any_h5());
}

TEST_F(Cli, CheckPrintsThePlanAndComputesNothing) {
  write("good.toml", kGoodCase);
  const Outcome o = cli("check good.toml");
  EXPECT_EQ(o.status, 0) << o.err;
  for (const char* s :
       {"plate-plate", "gold-drude", "200, 400", "Matsubara",
        "check only: no results were computed or written", "plan (estimates)", "time from"})
    EXPECT_NE(o.out.find(s), std::string::npos) << s << "\n" << o.out;
  EXPECT_FALSE(any_h5());
}

TEST_F(Cli, HelpAndVersionExitZero) {
  Outcome o = cli("--version");
  EXPECT_EQ(o.status, 0);
  EXPECT_EQ(o.out.rfind("roundtrip 0.", 0), 0u) << o.out;
  o = cli("--help");
  EXPECT_EQ(o.status, 0);
  for (const char* s : {"run", "check", "materials", "plot", "preview"})
    EXPECT_NE(o.out.find(s), std::string::npos) << s;
  o = cli("run --help");
  EXPECT_EQ(o.status, 0);
  for (const char* s : {"--threads", "--progress", "--restart", "--quiet"})
    EXPECT_NE(o.out.find(s), std::string::npos) << s << "\n" << o.out;
}

// Drude model eps(i xi) = 1 + wp^2 / (xi (xi + gamma)) with wp = 9.0 eV, gamma = 35 meV
// (common practice for gold; Svetovoy et al., PRB 77, 035439 (2008)); eV -> rad/s by CODATA 2018.
TEST_F(Cli, MaterialsEpsPrintsTheDrudeFormulaForGold) {
  const Outcome o =
      cli("materials eps gold-drude --from \"1e15 rad/s\" --to \"1e16 rad/s\" --count 2");
  ASSERT_EQ(o.status, 0) << o.err;
  const double ev = 2.0 * M_PI * 2.417989242e14;  // rad/s per eV (CODATA 2018, from memory)
  const double wp = 9.0 * ev, gamma = 0.035 * ev;
  const double expected = 1.0 + wp * wp / (1e15 * (1e15 + gamma));
  // The table prints 8 significant digits.
  constexpr double kPrintedRelTol = 1e-7;
  const auto line_at = o.out.find("1.00000e+15");
  ASSERT_NE(line_at, std::string::npos) << o.out;
  std::istringstream row(o.out.substr(line_at));
  double xi = 0, ev_col = 0, eps = 0;
  row >> xi >> ev_col >> eps;
  EXPECT_NEAR(eps, expected, expected * kPrintedRelTol);
  EXPECT_NEAR(ev_col, 1e15 / ev, 1e15 / ev * 1e-5);
  const Outcome list = cli("materials list");
  EXPECT_EQ(list.status, 0);
  EXPECT_NE(list.out.find("gold-drude"), std::string::npos);
  EXPECT_NE(list.out.find("source: "), std::string::npos);
  const Outcome bad = cli("materials eps unobtainium");
  EXPECT_EQ(bad.status, 1);
  EXPECT_NE(bad.err.find("NAME = \"unobtainium\": unknown material"), std::string::npos) << bad.err;
}

// `materials eps NAME --case CASE.toml` (issue 16, item 6): a case's own model material and
// its tabulated optical data, read as `run` reads them. The table is the shipped
// cases/data/example-gold-like-nk.csv, generated (its header says) from the Drude-Lorentz model
// wp = 9 eV, gamma = 35 meV, (C, w, g) = (1.5, 3 eV, 0.8 eV), (2, 6 eV, 2 eV), whose eps(i xi)
// is closed-form: 1 + wp^2/(xi(xi + gamma)) + sum C w^2/(w^2 + xi^2 + g xi) (Lorentz oscillators
// at imaginary frequency, textbook, e.g. Jackson, Classical Electrodynamics, sec. 7.5).
TEST_F(Cli, MaterialsEpsReadsACaseFilesModelAndTabulatedMaterials) {
  const std::string table =
      (fs::path(ROUNDTRIP_SOURCE_DIR) / "cases" / "data" / "example-gold-like-nk.csv").string();
  write("mats.toml", fmt::format(R"(geometry = "plate-plate"
[plate]
material = "film-gold"
[separations]
values = ["200 nm"]
[conditions]
temperature = "300 K"
[materials.film-gold]
model = "drude"
plasma_frequency = "8.4 eV"
damping = "42 meV"
[materials.au7]
model = "table"
file = "{}"
plasma_frequency = "9 eV"
damping = "35 meV"
)",
                                 table));
  const double ev = 2.0 * M_PI * 2.417989242e14;  // rad/s per eV (CODATA 2018, from memory)
  // The value in the row of xi = 1e15 rad/s (the table's first row with --from 1e15).
  const auto eps_at_1e15 = [](const std::string& out) {
    const auto at = out.find("1.00000e+15");
    if (at == std::string::npos) return std::nan("");
    std::istringstream row(out.substr(at));
    double xi = 0, ev_col = 0, eps = 0;
    row >> xi >> ev_col >> eps;
    return eps;
  };
  const std::string range = "--from \"1e15 rad/s\" --to \"1e16 rad/s\" --count 2";
  const Outcome drude = cli("materials eps film-gold --case mats.toml " + range);
  ASSERT_EQ(drude.status, 0) << drude.err;
  EXPECT_NE(drude.out.find("film-gold"), std::string::npos) << drude.out;
  const double wp = 8.4 * ev, gamma = 0.042 * ev, xi = 1e15;
  const double expected = 1.0 + wp * wp / (xi * (xi + gamma));
  constexpr double kPrintedRelTol = 1e-7;  // the table prints 8 significant digits
  EXPECT_NEAR(eps_at_1e15(drude.out), expected, expected * kPrintedRelTol) << drude.out;

  const Outcome tab = cli("materials eps au7 --case mats.toml " + range);
  ASSERT_EQ(tab.status, 0) << tab.err;
  const double wp9 = 9.0 * ev, g9 = 0.035 * ev;
  const double model = 1.0 + wp9 * wp9 / (xi * (xi + g9)) +
                       1.5 * 9.0 * ev * ev / (9.0 * ev * ev + xi * xi + 0.8 * ev * xi) +
                       2.0 * 36.0 * ev * ev / (36.0 * ev * ev + xi * xi + 2.0 * ev * xi);
  // 601 points over four decades: linear interpolation of eps'' errs by ~3e-4 (derived in
  // tests/materials/optical_csv_test.cc, which asks for 1e-3 over the whole xi range).
  constexpr double kShippedTableRelTol = 1e-3;
  EXPECT_NEAR(eps_at_1e15(tab.out), model, model * kShippedTableRelTol) << tab.out;

  // A case material without --case, an unknown name with it: errors that say what to do.
  const Outcome no_case = cli("materials eps film-gold");
  EXPECT_EQ(no_case.status, 1);
  EXPECT_NE(no_case.err.find("needs --case CASE.toml"), std::string::npos) << no_case.err;
  const Outcome unknown = cli("materials eps au8 --case mats.toml");
  EXPECT_EQ(unknown.status, 1);
  EXPECT_NE(unknown.err.find("--case = \"mats.toml\": NAME = \"au8\": unknown material"),
            std::string::npos)
      << unknown.err;
  EXPECT_NE(unknown.err.find("case file: au7, film-gold"), std::string::npos) << unknown.err;
}

// Lengths in the header in the case's own units (issue 16, item 6: "R = 1e-05 m" beside
// radius = "10 um"), in `check`'s bodies line and `run`'s header.
TEST_F(Cli, HeaderLengthsAreInTheUnitsOfTheCase) {
  write("sp.toml", R"(geometry = "sphere-plate"
[sphere]
radius = "10 um"
material = "gold-drude"
[plate]
material = "gold-drude"
[separations]
values = ["2 um"]
[conditions]
temperature = "0 K"
[compute]
quantities = ["energy"]
[numerics]
rel_tol = 1e-3
)");
  const Outcome chk = cli("check sp.toml");
  ASSERT_EQ(chk.status, 0) << chk.err;
  EXPECT_NE(chk.out.find("(R = 10 um)"), std::string::npos) << chk.out;
  EXPECT_EQ(chk.out.find("e-05 m"), std::string::npos) << chk.out;
  const Outcome run = cli("run sp.toml --quiet");
  ASSERT_EQ(run.status, 0) << run.err;
  EXPECT_NE(run.out.find("sphere of gold-drude (R = 10 um) over"), std::string::npos) << run.out;
}

// `check --csv` (issue 16, item 7: every table as CSV): the plan table of every scan point, read
// back by Python's csv module (RFC 4180), with the printed table's gaps and frequency counts.
TEST_F(Cli, CheckWritesItsPlanTablesAsCsv) {
  write("scan.toml", kGoodCase + "[scan]\nmaterial = [\"gold-drude\", \"gold-plasma\"]\n");
  const Outcome o = cli("check scan.toml --csv plan.csv");
  ASSERT_EQ(o.status, 0) << o.err;
  EXPECT_NE(o.out.find("csv          plan.csv"), std::string::npos) << o.out;
  EXPECT_FALSE(any_h5());
  write("read.py",
        "import csv\nrows = list(csv.reader(open('plan.csv', newline='')))\n"
        "print('|'.join(rows[0]))\n"
        "for r in rows[1:]: print('|'.join(r))\n");
  ASSERT_EQ(sh("/usr/bin/python3 read.py > rows.txt 2>&1"), 0) << slurp(dir_ / "rows.txt");
  std::istringstream rows(slurp(dir_ / "rows.txt"));
  std::string header;
  std::getline(rows, header);
  EXPECT_EQ(header, "material|gap [nm]|k_rel_tol|frequencies|time [s]");
  // The printed plan rows ("     200      1e-13           21  1.7 ms"): gap and frequencies.
  std::vector<std::pair<double, int>> printed;
  std::istringstream text(o.out);
  for (std::string l; std::getline(text, l);) {
    std::istringstream cells(l);
    double gap = 0;
    std::string trunc;
    int freq = 0;
    if (l.starts_with("     ") && cells >> gap >> trunc >> freq) printed.emplace_back(gap, freq);
  }
  ASSERT_EQ(printed.size(), 4u) << o.out;
  std::vector<std::string> lines;
  for (std::string l; std::getline(rows, l);) lines.push_back(l);
  ASSERT_EQ(lines.size(), 4u) << slurp(dir_ / "rows.txt");
  constexpr double kFullPrecision = 1e-15;  // CSV numbers read back to the same double
  for (std::size_t i = 0; i < lines.size(); ++i) {
    std::vector<std::string> c;
    std::istringstream cells(lines[i]);
    for (std::string x; std::getline(cells, x, '|');) c.push_back(x);
    ASSERT_EQ(c.size(), 5u) << lines[i];
    EXPECT_EQ(c[0], i < 2 ? "gold-drude" : "gold-plasma");
    EXPECT_NEAR(std::stod(c[1]), printed[i].first, printed[i].first * kFullPrecision) << lines[i];
    EXPECT_EQ(std::stoi(c[3]), printed[i].second) << lines[i];
    EXPECT_GT(std::stod(c[4]), 0.0) << lines[i];
  }
  // A CSV path that cannot be written: refused before anything is timed.
  const Outcome bad = cli("check scan.toml --csv nodir/plan.csv");
  EXPECT_EQ(bad.status, 1);
  EXPECT_NE(bad.err.find("--csv"), std::string::npos) << bad.err;
}

// Perfect mirrors at T = 0: E/A = -pi^2 hbar c / (720 L^3) (Casimir, Proc. KNAW 51, 793 (1948)),
// through case file, CLI and HDF5 file (read back by h5py).
TEST_F(Cli, PerfectMirrorsAtZeroKelvinMatchCasimir1948ThroughTheHdf5File) {
  write("pec.toml", R"(geometry = "plate-plate"
[plate]
material = "perfect-conductor"
[separations]
values = ["100 nm", "1 um"]
[conditions]
temperature = "0 K"
[compute]
quantities = ["energy", "force", "gradient"]
[numerics]
rel_tol = 1e-7
)");
  const Outcome o = cli("run pec.toml --quiet -o pec.h5");
  ASSERT_EQ(o.status, 0) << o.err;
  ASSERT_TRUE(fs::exists(dir_ / "pec.h5"));
  write("read.py", R"PY(import h5py, math
f = h5py.File("pec.h5", "r")
r = f["results"]
hbar, c = 1.054571817e-34, 299792458.0
for i, L in enumerate(r["gap"][:]):
    e = -math.pi**2 * hbar * c / (720 * L**3)
    print(L, r["energy"][i] / e, r["force"][i] / (3 * e / L), r["gradient"][i] / (-12 * e / L**2))
assert f["input/case_file"].asstr()[()] == open("pec.toml").read()
assert r["energy"].attrs["units"] == "J/m^2" and r["force"].attrs["units"] == "Pa"
)PY");
  const std::string cmd =
      fmt::format("cd '{}' && /usr/bin/python3 read.py > py.txt 2>&1", dir_.string());
  ASSERT_EQ(std::system(cmd.c_str()), 0) << slurp(dir_ / "py.txt");
  std::istringstream py(slurp(dir_ / "py.txt"));
  // rel_tol = 1e-7 asked; allow 10x for the error estimate being an estimate.
  constexpr double kRatioTol = 1e-6;
  int rows = 0;
  for (double gap, re, rf, rg; py >> gap >> re >> rf >> rg; ++rows) {
    EXPECT_NEAR(re, 1.0, kRatioTol) << "energy at L = " << gap;
    EXPECT_NEAR(rf, 1.0, kRatioTol) << "force F = -dE/dL = 3E/L at L = " << gap;
    EXPECT_NEAR(rg, 1.0, kRatioTol) << "gradient dF/dL = -12E/L^2 at L = " << gap;
  }
  EXPECT_EQ(rows, 2);
  EXPECT_NE(o.out.find("gap [nm]"), std::string::npos) << o.out;
}

// The reduced demo: cases/gold_plates.toml with 3 gaps instead of 20.
TEST_F(Cli, ReducedGoldPlatesDemoRunsAndWritesItsFile) {
  const std::string demo = slurp(fs::path(ROUNDTRIP_SOURCE_DIR) / "cases" / "gold_plates.toml");
  ASSERT_FALSE(demo.empty());
  write("gold_plates.toml", replaced(demo, "count = 20", "count = 3"));
  const Outcome o = cli("run gold_plates.toml --progress");
  ASSERT_EQ(o.status, 0) << o.err;
  EXPECT_NE(o.out.find("gap [nm]"), std::string::npos) << o.out;
  EXPECT_NE(o.out.find("F [Pa]"), std::string::npos) << o.out;
  EXPECT_NE(o.err.find("gap 3 of 3 done"), std::string::npos) << o.err;
  EXPECT_NE(o.err.find("ETA"), std::string::npos) << o.err;
  EXPECT_FALSE(fs::exists(dir_ / "gold_plates.h5.journal")) << "removed after success";
  // The case's opening comment shows what it prints: the reduced run shares the header lines
  // and the 100 nm row (same gap, same tolerance).
  std::istringstream comment(demo);
  std::vector<std::string> shown;
  bool in_block = false;
  for (std::string line; std::getline(comment, line);) {
    if (line.rfind("# It prints", 0) == 0) {
      in_block = true;
    } else if (in_block) {
      if (line.rfind("#   ...", 0) == 0 || line.rfind("#", 0) != 0) break;
      shown.push_back(line.size() > 4 ? line.substr(4) : "");
    }
  }
  constexpr std::size_t kHeaderAndFirstRow = 8;
  ASSERT_GE(shown.size(), kHeaderAndFirstRow);
  for (std::size_t i = 0; i < kHeaderAndFirstRow; ++i)
    EXPECT_NE(o.out.find(shown[i] + "\n"), std::string::npos) << "line '" << shown[i] << "'\n"
                                                              << o.out;
  EXPECT_TRUE(fs::exists(dir_ / "gold_plates.h5"));
  const std::string cmd =
      fmt::format("cd '{}' && h5dump -A gold_plates.h5 > dump.txt 2>&1", dir_.string());
  ASSERT_EQ(std::system(cmd.c_str()), 0);
  const std::string dump = slurp(dir_ / "dump.txt");
  for (const char* s : {"\"roundtrip-results\"", "DATASET \"gap\"", "DATASET \"energy\"",
                        "DATASET \"force\"", "GROUP \"frequencies\"", "\"units\""})
    EXPECT_NE(dump.find(s), std::string::npos) << s;
}

// The reduced AFM demo: cases/sphere_plate_afm.toml at its two largest-gap settings and a
// looser tolerance (the full case takes about a minute). Checks the PFA columns and datasets.
TEST_F(Cli, ReducedSpherePlateDemoWritesPfaRatiosAndTruncations) {
  const std::string demo =
      slurp(fs::path(ROUNDTRIP_SOURCE_DIR) / "cases" / "sphere_plate_afm.toml");
  ASSERT_FALSE(demo.empty());
  std::string reduced = replaced(demo, "from = \"200 nm\"", "from = \"700 nm\"");
  reduced = replaced(reduced, "count = 5", "count = 2");
  reduced = replaced(reduced, "rel_tol = 1e-4", "rel_tol = 1e-3");
  write("afm.toml", reduced);
  const Outcome o = cli("run afm.toml --quiet");
  ASSERT_EQ(o.status, 0) << o.err;
  // Lines the case's opening comment shows that do not depend on the gaps or the tolerance.
  for (const char* line : {"#   Quillfeather AFM session Q-17", "#   sphere of gold-drude",
                           "#   gap [nm]          E [J]          F [N]      F′ [N/m]   E/E_PFA"}) {
    const auto at = demo.find(line);
    ASSERT_NE(at, std::string::npos) << line;
    const std::string shown = demo.substr(at + 4, demo.find('\n', at) - at - 4);
    EXPECT_NE(o.out.find(shown + "\n"), std::string::npos) << shown << "\n" << o.out;
  }
  write("read.py", R"PY(import h5py, math
f = h5py.File("sphere_plate_afm.h5", "r")
r = f["results"]
assert f.attrs["geometry"] == "sphere-plate" and int(f.attrs["per_area"]) == 0
for q in ["energy", "force", "gradient"]:
    for i in range(2):
        ratio = r[q][i] / r[q + "_pfa"][i]
        assert abs(ratio - r[q + "_ratio"][i]) < 1e-12 * abs(ratio), q
assert r["energy"].attrs["units"] == "J" and r["force"].attrs["units"] == "N"
assert r["gradient"].attrs["units"] == "N/m"
lmax = r["truncation/l_max"][:]
assert len(lmax) == 2 and all(l >= 1 and l == int(l) for l in lmax), lmax
print("OK")
)PY");
  const std::string cmd =
      fmt::format("cd '{}' && /usr/bin/python3 read.py > py.txt 2>&1", dir_.string());
  EXPECT_EQ(std::system(cmd.c_str()), 0) << slurp(dir_ / "py.txt");
  EXPECT_EQ(slurp(dir_ / "py.txt"), "OK\n");
}

// Progress goes to stderr only on a terminal or with --progress, never with --quiet.
TEST_F(Cli, ProgressOnlyWhenAskedForOrOnATerminal) {
  write("good.toml", kGoodCase);
  Outcome o = cli("run good.toml");
  ASSERT_EQ(o.status, 0) << o.err;
  EXPECT_EQ(o.err, "") << "stderr is a file here: no progress unless --progress";
  o = cli("run good.toml --progress --quiet");
  EXPECT_EQ(o.err, "");
  o = cli("run good.toml --progress");
  EXPECT_NE(o.err.find("roundtrip: gap 2 of 2 done"), std::string::npos) << o.err;
}

// A second Ctrl-C does not wait for the current frequency: the process dies of the signal and
// removes its temporary results file (the first one stops the run cleanly: resume_test.cc).
TEST_F(Cli, SecondInterruptLeavesNoTemporaryFile) {
  const std::string demo =
      slurp(fs::path(ROUNDTRIP_SOURCE_DIR) / "cases" / "sphere_plate_drude_plasma.toml");
  write("long.toml", demo);  // tens of seconds: certainly still running after the pause below
  const std::string cmd = fmt::format(
      "cd '{}' && ('{}' run long.toml --quiet -o long.h5 > out.txt 2> err.txt & pid=$!; "
      "sleep 1; kill -INT $pid; sleep 0.05; kill -INT $pid; wait $pid; echo $? > status.txt)",
      dir_.string(), ROUNDTRIP_CLI);
  ASSERT_EQ(std::system(cmd.c_str()), 0);
  EXPECT_EQ(slurp(dir_ / "status.txt"), "130\n") << "128 + SIGINT expected";
  for (const auto& e : fs::directory_iterator(dir_))
    EXPECT_EQ(e.path().string().find(".tmp."), std::string::npos) << e.path();
}

}  // namespace
