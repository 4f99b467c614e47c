// plate.sheet = { model = "table", file = ... }: sigma(i xi) from a CSV. 1/sigma linear in xi is
// exact for a Drude sheet (1/sigma = (xi + gamma)/D; derived), so a few rows sampled from one
// reproduce it, and the sheet built from them reflects as the Drude sheet; bad tables name the
// case file:line, the key, the table's file:line, column and value.
#include <fmt/format.h>
#include <gtest/gtest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "common/scratch.h"
#include "io/case_file.h"
#include "io/errors.h"
#include "solver/constants.h"
#include "solver/materials/library.h"
#include "solver/materials/models.h"
#include "solver/planar/sheet.h"

namespace roundtrip {
namespace {

constexpr double kRoundoff = 1e-13;                   // a few ulps after ~10 operations
constexpr double kGamma = 5e-3 * kRadPerSecondPerEv;  // invented damping, rad/s

SheetConductivity drude() {
  SheetConductivity s;
  s.drude_weight = SheetConductivity::weight(1e17, 0.03);  // invented 2D gas
  s.damping = kGamma;
  return s;
}

std::shared_ptr<SheetTable> sampled(const SheetConductivity& d) {
  auto t = std::make_shared<SheetTable>();
  t->origin = "in memory";
  for (double u : {0.0, 0.5, 3.0, 40.0, 1e4}) {
    t->xi.push_back(u * kGamma);
    t->sigma.push_back(d.at(u * kGamma));
  }
  return t;
}

TEST(SheetTable, DrudeSheetSampledAtFewRowsIsReproducedExactly) {
  const SheetConductivity d = drude();
  SheetConductivity t;
  t.table = sampled(d);
  EXPECT_TRUE(t.validate().empty()) << t.validate();
  for (double u : {0.0, 0.1, 1.0, 2.9, 700.0, 9999.0})
    EXPECT_NEAR(t.at(u * kGamma) / d.at(u * kGamma), 1.0, kRoundoff) << u;
  // Beyond the last row sigma_N xi_N/xi: off from D/(xi + gamma) by gamma/xi_N = 1e-4.
  EXPECT_NEAR(t.at(1e6 * kGamma) / d.at(1e6 * kGamma), 1.0, 1.1e-4);
  // The planar sheet on silica: the same reflection as the Drude sheet inside the table, and the
  // same exact static limits (r_TM = 1: sigma(0) > 0; r_TE = 0: damped; sheet.h).
  const auto silica = builtin_material("silica");
  const auto a = make_sheet(d, silica), b = make_sheet(t, silica);
  const auto vac = make_vacuum();
  for (double xi : {0.0, 1e12, 1e14, 1e16})
    for (double k : {0.0, 1e6, 1e8}) {
      const auto ra = a->at(xi, *vac)->reflect(k), rb = b->at(xi, *vac)->reflect(k);
      EXPECT_NEAR(rb.tm, ra.tm, kRoundoff) << xi << " " << k;
      EXPECT_NEAR(rb.te, ra.te, kRoundoff) << xi << " " << k;
    }
  EXPECT_EQ(b->at(0.0, *vac)->reflect(1e6).tm, 1.0);
  EXPECT_EQ(b->at(0.0, *vac)->reflect(1e6).te, 0.0);
}

std::string sheet_case() {
  return "geometry = \"atom-plate\"\n"                            // 1
         "[plate]\n"                                              // 2
         "material = \"silica\"\n"                                // 3
         "sheet = { model = \"table\", file = \"sigma.csv\" }\n"  // 4
         "[separations]\nvalues = [\"1 um\"]\n[conditions]\ntemperature = \"300 K\"\n"
         "[atom]\nspecies = \"helium\"\n";
}

TEST(SheetTable, CaseFileTableAndBadTables) {
  const auto dir = testing::fresh_dir("sheet_table");
  std::string text = "# invented 2D gas\nxi_eV, sigma_S\n";
  const SheetConductivity d = drude();
  for (double u : {0.0, 0.5, 3.0, 40.0, 1e4})
    text += fmt::format("{:.17g}, {:.17g}\n", u * 5e-3, d.at(u * kGamma));
  std::ofstream(dir / "sigma.csv") << text;
  const io::CaseSpec c = io::parse_case(sheet_case(), dir / "case.toml");
  EXPECT_NE(c.body("plate").plate->describe().find("from table"), std::string::npos);
  bool keyed = false;
  for (const auto& [k, v] : io::case_key_fields(c))
    keyed = keyed || k == "plate.sheet.file (contents)";
  EXPECT_TRUE(keyed);
  struct Bad {
    std::string table, expect;
  };
  const std::vector<Bad> bad{
      {"xi_eV, sigma_S\n0, 1e-3\n1, -1e-4\n", "sigma.csv:3: sigma_S = -0.0001: a sheet"},
      {"xi_eV, sigma_S\n0, 1e-3\n1, 2e-3\n", "sigma.csv:3: sigma_S = 0.002: larger than"},
      {"xi_eV, sigma_S\n0, 1e-3\n1, 1e-4\n0.5, 1e-5\n", "sigma.csv:4: xi_eV = 0.5: not increasing"},
      {"xi_eV, sigma_ohm\n0, 1e-3\n", "sigma.csv:1: unknown column 'sigma_ohm'"},
  };
  for (const auto& b : bad) {
    std::ofstream(dir / "sigma.csv") << b.table;
    std::string m = "no error";
    try {
      (void)io::parse_case(sheet_case(), dir / "case.toml");
    } catch (const io::CaseError& e) {
      m = e.what();
    }
    EXPECT_NE(m.find("case.toml:4: plate.sheet.file = \"sigma.csv\""), std::string::npos) << m;
    EXPECT_NE(m.find(b.expect), std::string::npos) << m << "\n  expected: " << b.expect;
  }
}

}  // namespace
}  // namespace roundtrip
