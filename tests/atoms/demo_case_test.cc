// The rubidium demo case, reduced (3 gaps from 1 to 10 um), through the CLI: both scan points
// run, and at 10 um the gold/silica ratio is the static reflection ratio of the thermal term.
#include <H5Cpp.h>
#include <gtest/gtest.h>

#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <regex>
#include <string>
#include <vector>

#include "common/scratch.h"
#include "solver/atoms/polarizability.h"
#include "solver/constants.h"

namespace {

using roundtrip::testing::slurp;

TEST(AtomDemoCase, ReducedRubidiumScanRunsAndReachesTheThermalLimitAt10um) {
  namespace fs = std::filesystem;
  const fs::path dir = roundtrip::testing::fresh_dir("demo_rubidium");
  std::string text =
      slurp(fs::path(ROUNDTRIP_SOURCE_DIR) / "cases/rubidium_over_silica_and_gold.toml");
  ASSERT_FALSE(text.empty());
  text = std::regex_replace(text, std::regex("from = \"100 nm\""), "from = \"1 um\"");
  text = std::regex_replace(text, std::regex("count = 9"), "count = 3");
  { std::ofstream(dir / "case.toml") << text; }
  const std::string cmd = "cd '" + dir.string() + "' && '" + ROUNDTRIP_CLI +
                          "' run case.toml -o out.h5 > out.txt 2> err.txt";
  ASSERT_EQ(std::system(cmd.c_str()), 0) << slurp(dir / "err.txt");
  const std::string out = slurp(dir / "out.txt");
  EXPECT_NE(out.find("scan point 1 of 2: material = silica"), std::string::npos) << out;
  EXPECT_NE(out.find("scan point 2 of 2: material = gold-drude"), std::string::npos) << out;
  std::regex row(R"(\n\s*10\s+(-[0-9.e+-]+))");
  std::vector<double> e10;
  for (auto it = std::sregex_iterator(out.begin(), out.end(), row); it != std::sregex_iterator();
       ++it)
    e10.push_back(std::stod((*it)[1]));
  ASSERT_EQ(e10.size(), 2u) << out;
  // Standard: z >> hbar c/(k_B T) leaves the n = 0 term, U = -k_B T alpha(0) r/(4 z^3); gold
  // (Drude) r = 1, silica r = (eps0 - 1)/(eps0 + 1) with eps0 = 1 + 1.71 + 1.098 (the built-in
  // oscillators). The n >= 1 terms are at most 2q(2(bz)^2 + 2bz + 1) ~ 2e-5 of n = 0
  // (b = 2 pi k_B T/(hbar c), q = e^{-2bz}, bz = 8.2 at 10 um: the perfect-mirror geometric
  // series, derived in atom_plate_test.cc), and they differ between the plates: tolerance 5e-5.
  const double eps0 = 1.0 + 1.71 + 1.098;
  EXPECT_NEAR(e10[1] / e10[0], (eps0 + 1) / (eps0 - 1), 5e-5 * (eps0 + 1) / (eps0 - 1)) << out;
  EXPECT_TRUE(fs::exists(dir / "out.h5"));

  // The z^3 U and z^4 U columns (table and HDF5, README "HDF5 results"): z^3 U at 10 um over gold
  // is the thermal plateau -k_B T alpha(0)/4 (standard high-T limit, r = 1; the n >= 1 share
  // ~2e-5 as above), and the datasets are gap^p energy with their units.
  EXPECT_NE(out.find("L\u00b3E [J m\u00b3]"), std::string::npos) << out;
  EXPECT_NE(out.find("L\u2074E [J m\u2074]"), std::string::npos) << out;
  H5::H5File f((dir / "out.h5").string(), H5F_ACC_RDONLY);
  const H5::Group gold = f.openGroup("scan/1");
  const auto read = [&](const std::string& name) {
    const H5::DataSet ds = gold.openDataSet("results/" + name);
    hsize_t n = 0;
    ds.getSpace().getSimpleExtentDims(&n);
    std::vector<double> v(n);
    ds.read(v.data(), H5::PredType::NATIVE_DOUBLE);
    return v;
  };
  const auto units = [&](const std::string& name) {
    std::string u;
    const H5::Attribute a = gold.openDataSet("results/" + name).openAttribute("units");
    a.read(a.getStrType(), u);
    return u;
  };
  const auto z = read("gap"), e = read("energy"), e3 = read("energy_gap3"),
             e4 = read("energy_gap4");
  ASSERT_EQ(z.size(), 3u);
  for (std::size_t i = 0; i < z.size(); ++i) {
    EXPECT_DOUBLE_EQ(e3[i], std::pow(z[i], 3) * e[i]);
    EXPECT_DOUBLE_EQ(e4[i], std::pow(z[i], 4) * e[i]);
  }
  EXPECT_EQ(units("energy_gap3"), "J m^3");
  EXPECT_EQ(units("energy_gap4"), "J m^4");
  const double alpha0 = 318.8 * roundtrip::kBohrVolume;  // the built-in rubidium (from memory)
  EXPECT_NEAR(e3[2] / (-roundtrip::kBoltzmann * 300.0 * alpha0 / 4.0), 1.0, 5e-5);
  // Atom attributes beside the numbers.
  double a0 = 0.0;
  gold.openAttribute("atom_alpha0_m3").read(H5::PredType::NATIVE_DOUBLE, &a0);
  EXPECT_NEAR(a0 / alpha0, 1.0, 1e-12);
  std::string model;
  const H5::Attribute am = gold.openAttribute("atom_model");
  am.read(am.getStrType(), model);
  EXPECT_EQ(model, "rubidium");
  EXPECT_FALSE(gold.attrExists("atom_radius_m"));
}

}  // namespace
