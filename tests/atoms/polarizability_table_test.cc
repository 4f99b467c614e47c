// model = "table": alpha(i xi) from a CSV file. The interpolation (1/alpha linear in xi^2) is
// exact for one oscillator (derived: 1/alpha = (w^2 + xi^2)/(a w^2)); on the exact hydrogen
// spectrum its error is second order in the row spacing; bad tables name file:line, column and
// value.
#include <gtest/gtest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "common/scratch.h"
#include "io/case_file.h"
#include "io/errors.h"
#include "solver/atoms/polarizability.h"
#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/atom_plate.h"
#include "solver/input_error.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

constexpr double kA = 300.0 * kBohrVolume;       // m^3, an invented oscillator
constexpr double kW = 0.06 * kHartreeFrequency;  // rad/s
constexpr double kRoundoff = 1e-13;              // a few ulps after ~10 operations

TEST(PolarizabilityTable, OneOscillatorSampledAtFewRowsIsReproducedExactly) {
  const auto osc = make_oscillator_polarizability({{kA, kW}});
  PolarizabilityTable t;
  t.origin = "in memory";
  for (double u : {0.0, 0.3, 1.0, 2.5, 7.0, 1000.0}) {
    t.xi.push_back(u * kW);
    t.alpha.push_back(osc->alpha(u * kW));
  }
  const auto tab = make_table_polarizability(t);
  for (double u : {0.0, 0.01, 0.2, 0.7, 1.0, 1.9, 4.0, 50.0, 999.0})
    EXPECT_NEAR(tab->alpha(u * kW) / osc->alpha(u * kW), 1.0, kRoundoff) << u;
  // Beyond the last row alpha_N (xi_N/xi)^2: off from the oscillator by (w/xi_N)^2 = 1e-6.
  EXPECT_NEAR(tab->alpha(3000.0 * kW) / osc->alpha(3000.0 * kW), 1.0, 2e-6);
  // The half-value frequency of one oscillator is w (definition).
  EXPECT_NEAR(tab->characteristic_frequency() / kW, 1.0, kRoundoff);
}

// Casimir-Polder energy at T = 0 over a perfect mirror with the hydrogen table of n rows
// (xi = 0 and log-spaced from 1e-3 to 1e3 a.u.) against the exact hydrogen spectrum.
double hydrogen_table_error(int rows, double z) {
  const auto h = builtin_polarizability("hydrogen");
  PolarizabilityTable t;
  t.xi.push_back(0.0);
  t.alpha.push_back(h->alpha(0.0));
  for (int i = 0; i < rows - 1; ++i) {
    const double xi = 1e-3 * std::pow(1e6, i / double(rows - 2)) * kHartreeFrequency;
    t.xi.push_back(xi);
    t.alpha.push_back(h->alpha(xi));
  }
  const auto plate = make_half_space(make_perfect_conductor());
  FrequencyRuleOptions fo;
  fo.temperature_K = 0.0;
  fo.rel_tol = 1e-10;
  const auto e = [&](PolarizabilityPtr a) {
    const auto g = make_atom_plate(a, plate);
    return sum_over_frequencies(
               [&](double xi) { return g->at_frequency(xi, z, DerivativeOrder::kEnergy); },
               g->frequency_scale(z), fo)
        .total.value;
  };
  return std::abs(e(make_table_polarizability(t)) / e(h) - 1.0);
}

TEST(PolarizabilityTable, HydrogenTableConvergesAtSecondOrderInTheRowSpacing) {
  // Piecewise-linear interpolation: error ~ h^2 (standard), so doubling the rows per decade
  // divides it by ~4; accepted >= 3 (the tail and the end rows are not exactly quadratic).
  for (double z : {1e-9, 1e-7}) {
    const double e1 = hydrogen_table_error(25, z), e2 = hydrogen_table_error(49, z);
    const double e3 = hydrogen_table_error(97, z);
    EXPECT_LT(e3, 1e-3) << z;
    EXPECT_GT(e1 / e2, 3.0) << z << " " << e1 << " " << e2;
    EXPECT_GT(e2 / e3, 3.0) << z << " " << e2 << " " << e3;
  }
}

std::filesystem::path write_table(const std::filesystem::path& dir, const std::string& text) {
  const auto p = dir / "pol.csv";
  std::ofstream(p) << text;
  return p;
}

std::string case_with_table(const std::string& file) {
  return "geometry = \"atom-plate\"\n"  // 1
         "[plate]\n"                    // 2
         "material = \"gold-drude\"\n"  // 3
         "[separations]\n"              // 4
         "values = [\"100 nm\"]\n"      // 5
         "[conditions]\n"               // 6
         "temperature = \"300 K\"\n"    // 7
         "[atom]\n"                     // 8
         "polarizability = { model = \"table\", file = \"" +
         file + "\" }\n";  // 9
}

TEST(PolarizabilityTable, CaseFileTableGivesTheOscillatorItWasSampledFrom) {
  const auto dir = testing::fresh_dir("atom_table");
  // alpha = 300 w^2/(w^2 + xi^2) a.u. at w = 0.06 a.u., rows in eV (xi_au = xi_eV/27.211...).
  std::string text = "# invented atom, one oscillator\nxi_au, alpha_au\n";
  for (double u : {0.0, 0.5, 1.0, 3.0, 100.0})
    text += fmt::format("{:.17g}, {:.17g}\n", u * 0.06, 300.0 / (1.0 + u * u));
  write_table(dir, text);
  const io::CaseSpec c = io::parse_case(case_with_table("pol.csv"), dir / "case.toml");
  const auto& a = *c.body("atom").atom;
  const auto osc = make_oscillator_polarizability({{kA, kW}});
  for (double u : {0.0, 0.25, 2.0, 40.0})
    EXPECT_NEAR(a.alpha(u * kW) / osc->alpha(u * kW), 1.0, 1e-12);
  EXPECT_EQ(a.name(), "table");
  // The table's contents are part of the checkpoint key (a changed table is a new case).
  bool keyed = false;
  for (const auto& [k, v] : io::case_key_fields(c))
    keyed = keyed || k == "atom.polarizability.file (contents)";
  EXPECT_TRUE(keyed);
}

TEST(PolarizabilityTable, BadTablesNameFileLineColumnAndValue) {
  const auto dir = testing::fresh_dir("atom_table_bad");
  struct Bad {
    std::string table, expect;
  };
  const std::vector<Bad> bad{
      {"xi_eV, alpha_au\n0, 300\n1, 200\n0.5, 100\n", "pol.csv:4: xi_eV = 0.5: not increasing"},
      {"xi_eV, alpha_au\n0, 300\n1, 200\n2, -3\n", "pol.csv:4: alpha_au = -3: a polarizability"},
      {"xi_eV, alpha_au\n0, 300\n1, 200\n2, 250\n",
       "pol.csv:4: alpha_au = 250: larger than on the row before"},
      {"xi_eV, alpha_au\n0.1, 300\n1, 200\n", "pol.csv:2: xi_eV = 0.1: the first row must be"},
      {"xi_eV, alpha_cm\n0, 300\n1, 200\n", "pol.csv:1: unknown column 'alpha_cm'"},
      {"xi_eV, alpha_au\n0, 300\n1, x\n", "pol.csv:3: column 2: 'x' is not a finite number"},
      {"xi_eV, alpha_au\n0, 300\n", "1 data rows; at least 2"},
  };
  for (const auto& b : bad) {
    write_table(dir, b.table);
    std::string m = "no error";
    try {
      (void)io::parse_case(case_with_table("pol.csv"), dir / "case.toml");
    } catch (const io::CaseError& e) {
      m = e.what();
    }
    EXPECT_NE(m.find("case.toml:9: atom.polarizability.file = \"pol.csv\""), std::string::npos)
        << m;
    EXPECT_NE(m.find(b.expect), std::string::npos) << m << "\n  expected: " << b.expect;
  }
}

}  // namespace
}  // namespace roundtrip
