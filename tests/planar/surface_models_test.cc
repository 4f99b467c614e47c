// Named surface models of one plate (surface = "NAME", [plate.surfaces.NAME]) compared through
// [scan] plate.surface: each point builds the chosen variant, bad variants are named with their
// line (the variants are read where written, not from copies), and in the
// doped-silicon demo case screening changes the zero-frequency term only.
#include <H5Cpp.h>
#include <gtest/gtest.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <regex>
#include <string>
#include <vector>

#include "common/scratch.h"
#include "io/case_file.h"
#include "io/errors.h"
#include "solver/materials/library.h"
#include "solver/materials/models.h"
#include "solver/planar/screened.h"

namespace roundtrip {
namespace {

const std::string kCase = R"(geometry = "plate-plate"
[plate]
material = "silicon"
surface = "plain"
[plate.surfaces.plain]
[plate.surfaces.screened]
screening = { debye_length = "50 nm" }
[plate.surfaces.gold]
material = "gold-drude"
[plate2]
material = "gold-drude"
[separations]
values = ["1 um"]
[conditions]
temperature = "300 K"
)";

TEST(SurfaceModels, ScanPointsBuildTheChosenVariant) {
  const io::CaseSpec c = io::parse_case(
      kCase + "[scan]\nplate.surface = [\"plain\", \"screened\", \"gold\"]\n", "a.toml");
  const auto points = io::scan_points(c);
  ASSERT_EQ(points.size(), 3u);
  EXPECT_EQ(points[0].spec.body("plate").plate->describe(), "half-space of silicon");
  EXPECT_EQ(points[2].spec.body("plate").plate->describe(), "half-space of gold-drude");
  // The screened variant is the plate make_screened_half_space builds (same r at xi = 0).
  Screening s;
  s.debye_length = 50e-9;
  const auto direct = make_screened_half_space(builtin_material("silicon"), s);
  const auto vac = make_vacuum();
  const auto& p = points[1].spec.body("plate").plate;
  for (double k : {1e6, 2e7, 1e9})
    EXPECT_EQ(p->at(0.0, *vac)->reflect(k).tm, direct->at(0.0, *vac)->reflect(k).tm) << k;
}

TEST(SurfaceModels, BadVariantsAreNamed) {
  struct Bad {
    std::string from, to, expect;
  };
  const std::vector<Bad> bad{
      {"surface = \"plain\"", "surface = \"rough\"",
       "a.toml:4: plate.surface = \"rough\": unknown surface model (defined: \"gold\", \"plain\", "
       "\"screened\")"},
      {"debye_length = \"50 nm\"", "debye_length = \"-5 nm\"",
       "a.toml:7: plate.surfaces.screened.screening.debye_length = \"-5 nm\""},
      {"surface = \"plain\"\n", "", "give surface = \"NAME\" to choose"},
      {"[plate.surfaces.gold]\nmaterial = \"gold-drude\"", "[plate.surfaces.gold]\ncolour = 1",
       "a.toml:9: plate.surfaces.gold.colour = 1"},
      {"surface = \"plain\"\n", "surface = \"plain\"\nlayers = []\n",
       "a.toml:5: plate.layers = []: with surface"},
  };
  for (const auto& b : bad) {
    std::string text = kCase;
    text.replace(text.find(b.from), b.from.size(), b.to);
    std::string m = "no error";
    try {
      (void)io::parse_case(text, "a.toml");
    } catch (const io::CaseError& e) {
      m = e.what();
    }
    EXPECT_NE(m.find(b.expect), std::string::npos) << m << "\n  expected: " << b.expect;
  }
}

std::vector<double> dataset(const H5::Group& g, const std::string& name) {
  const H5::DataSet ds = g.openDataSet(name);
  hsize_t n = 0;
  ds.getSpace().getSimpleExtentDims(&n);
  std::vector<double> v(n);
  ds.read(v.data(), H5::PredType::NATIVE_DOUBLE);
  return v;
}

TEST(SurfaceModels, DopedSiliconDemoDiffersOnlyInTheZeroFrequencyTerm) {
  // Reduced demo case (one gap, 5 um; intrinsic and 1e18 cm^-3): screening changes only the
  // static TM reflection (Pitaevskii, PRL 101, 163202 (2008)), so every xi > 0 contribution is
  // the same in both points (same frequencies, same code path: bitwise) and the xi = 0 one is
  // larger in magnitude for the doped wafer (r_TM(0, k) > (eps - 1)/(eps + 1) for kappa_D > 0).
  namespace fs = std::filesystem;
  const fs::path dir = testing::fresh_dir("demo_doped_silicon");
  std::string text =
      testing::slurp(fs::path(ROUNDTRIP_SOURCE_DIR) / "cases/doped_silicon_under_gold_sphere.toml");
  ASSERT_FALSE(text.empty());
  text = std::regex_replace(text, std::regex("from = \"200 nm\""), "from = \"5 um\"");
  text = std::regex_replace(text, std::regex("count = 6"), "count = 1");
  text =
      std::regex_replace(text, std::regex("\\[\"intrinsic\", \"n1e12\", \"n1e15\", \"n1e18\"\\]"),
                         "[\"intrinsic\", \"n1e18\"]");
  { std::ofstream(dir / "case.toml") << text; }
  const std::string cmd = "cd '" + dir.string() + "' && '" + ROUNDTRIP_CLI +
                          "' run case.toml -o out.h5 > out.txt 2> err.txt && /usr/bin/python3 '" +
                          ROUNDTRIP_SOURCE_DIR + "/io/plot/roundtrip_plot.py' out.h5 > plot.txt";
  ASSERT_EQ(std::system(cmd.c_str()), 0) << testing::slurp(dir / "err.txt");
  EXPECT_NE(testing::slurp(dir / "plot.txt").find("out_surface_models.png"), std::string::npos);
  H5::H5File f((dir / "out.h5").string(), H5F_ACC_RDONLY);
  const H5::Group a = f.openGroup("scan/0/frequencies/0"), b = f.openGroup("scan/1/frequencies/0");
  const auto xa = dataset(a, "xi"), xb = dataset(b, "xi");
  const auto da = dataset(a, "ds_dL"), db = dataset(b, "ds_dL");
  ASSERT_EQ(xa, xb);
  ASSERT_GT(xa.size(), 2u);
  ASSERT_EQ(xa[0], 0.0);
  for (std::size_t j = 1; j < xa.size(); ++j) EXPECT_EQ(da[j], db[j]) << xa[j];
  EXPECT_GT(std::abs(db[0]), std::abs(da[0]) * 1.05);
}

}  // namespace
}  // namespace roundtrip
