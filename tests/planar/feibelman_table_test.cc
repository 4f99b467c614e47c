// plate.d_parameters = { model = "table", file = ... }: Feibelman d_perp(i xi), d_par(i xi) from
// a CSV (solver/planar/feibelman.h). A one-pole model sampled into a table reproduces the model
// within the stated bound of linear interpolation; a d = 0 table is the Fresnel half-space
// exactly; bad tables name the case file:line, the key, the table's file:line and column.
#include <fmt/format.h>
#include <gtest/gtest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <memory>
#include <string>
#include <vector>

#include "common/scratch.h"
#include "io/case_file.h"
#include "io/errors.h"
#include "solver/atoms/polarizability.h"
#include "solver/constants.h"
#include "solver/geometries/atom_plate.h"
#include "solver/materials/library.h"
#include "solver/materials/models.h"
#include "solver/planar/feibelman.h"

namespace roundtrip {
namespace {

constexpr double kEv = kRadPerSecondPerEv;
// Invented one-pole surface (feibelman.h: d = d_inf + (d_0 - d_inf) W^2/(W^2 + xi^2)).
const SurfaceParameter kPerp{-0.2e-9, 0.1e-9, 5.0 * kEv};
const SurfaceParameter kPar{0.08e-9, 0.02e-9, 9.0 * kEv};

// Rows every h from 0 to n h.
std::shared_ptr<DParameterTable> sampled(double h, int n) {
  auto t = std::make_shared<DParameterTable>();
  t->origin = "in memory";
  for (int i = 0; i <= n; ++i) {
    t->xi.push_back(i * h);
    t->perpendicular.push_back(kPerp.at(i * h));
    t->parallel.push_back(kPar.at(i * h));
  }
  return t;
}

// Largest error of linear interpolation of one pole p in rows of width h: h^2 max|d''|/8 with
// max|d''| = 2 |d_0 - d_inf|/W^2 (at xi = 0; derived from d'' of W^2/(W^2 + xi^2)); standard.
double interpolation_bound(const SurfaceParameter& p, double h) {
  return h * h / 8.0 * 2.0 * std::abs(p.static_value - p.high_frequency) / (p.pole * p.pole);
}

TEST(FeibelmanTable, OnePoleSampledIntoATableIsThePoleWithinTheInterpolationBound) {
  const double h = 0.25 * kEv;
  const auto t = sampled(h, 400);  // to 100 eV
  EXPECT_TRUE(t->validate().empty()) << t->validate();
  // At the rows: the model to rounding; between rows within h^2 max|d''|/8; second order: the
  // largest error falls by 4 (3.5 to 4.5) when h halves.
  EXPECT_EQ(t->perp_at(0.0), kPerp.at(0.0));
  EXPECT_NEAR(t->par_at(40 * h), kPar.at(40 * h), 1e-25);
  double worst[2] = {0.0, 0.0};
  const auto finer = sampled(h / 2, 800);
  for (double x = 0.0; x < 20 * kEv; x += 0.0137 * kEv) {
    EXPECT_LE(std::abs(t->perp_at(x) - kPerp.at(x)), interpolation_bound(kPerp, h)) << x;
    EXPECT_LE(std::abs(t->par_at(x) - kPar.at(x)), interpolation_bound(kPar, h)) << x;
    worst[0] = std::max(worst[0], std::abs(t->perp_at(x) - kPerp.at(x)));
    worst[1] = std::max(worst[1], std::abs(finer->perp_at(x) - kPerp.at(x)));
  }
  EXPECT_GT(worst[0] / worst[1], 3.5);
  EXPECT_LT(worst[0] / worst[1], 4.5);
  // Beyond the last row: the last row's value.
  EXPECT_EQ(t->perp_at(1e3 * kEv), t->perpendicular.back());

  // The plate and an atom over it (hydrogen over Drude gold at 2 and 20 nm): the atom's s(xi) is
  // linear in r and r in (d_perp, d_par) (feibelman.h), so s_table - s_model = A dd_perp +
  // B dd_par exactly, with A, B from constant-d plates; the bound is |A| b_perp + |B| b_par
  // (b the interpolation bounds) plus rounding (1e-13 relative of s).
  const auto gold = builtin_material("gold-drude");
  FeibelmanParameters model{kPerp, kPar, nullptr}, table{{}, {}, t};
  const auto atom = builtin_polarizability("hydrogen");
  const auto plate_model = make_feibelman_half_space(gold, model);
  const auto plate_table = make_feibelman_half_space(gold, table);
  const auto constant = [&](double dp, double dl) {
    return make_feibelman_half_space(gold, FeibelmanParameters{{dp, dp, 0.0}, {dl, dl, 0.0}});
  };
  const double unit = 1e-10;  // m: the step of the slopes A, B (exact for a linear function)
  for (double z : {2e-9, 2e-8})
    for (double xi : {0.0, 0.3 * kEv, 2.9 * kEv, 13.7 * kEv, 60.0 * kEv}) {
      const auto s = [&](const PlanarPtr& p) {
        return make_atom_plate(atom, p)->at_frequency(xi, z, DerivativeOrder::kEnergy).value;
      };
      const double s0 = s(constant(0.0, 0.0));
      const double a = (s(constant(unit, 0.0)) - s0) / unit;
      const double b = (s(constant(0.0, unit)) - s0) / unit;
      const double sm = s(plate_model), st = s(plate_table);
      const double bound = std::abs(a) * interpolation_bound(kPerp, h) +
                           std::abs(b) * interpolation_bound(kPar, h) + 1e-13 * std::abs(sm);
      EXPECT_LE(std::abs(st - sm), bound) << z << " " << xi;
      EXPECT_GT(std::abs(sm - s0), 100 * bound) << "the d correction itself must be resolved";
    }
}

TEST(FeibelmanTable, ZeroTableIsFresnelExactly) {
  auto t = std::make_shared<DParameterTable>();
  t->origin = "zeros";
  t->xi = {0.0, 1.0 * kEv, 10.0 * kEv};
  t->perpendicular = t->parallel = {0.0, 0.0, 0.0};
  const auto vac = make_vacuum();
  const auto water = builtin_material("water");
  for (const std::string name : {"gold-drude", "gold-plasma", "silica"}) {
    const auto m = builtin_material(name);
    const auto f = make_half_space(m);
    const auto d0 = make_feibelman_half_space(m, FeibelmanParameters{{}, {}, t});
    for (const auto* medium : {vac.get(), water.get()})
      for (double xi : {0.0, 1e12, 1e15, 1e17})
        for (double k : {0.0, 1e5, 1e8, 1e10}) {
          const auto a = f->at(xi, *medium)->reflect(k), b = d0->at(xi, *medium)->reflect(k);
          EXPECT_EQ(a.te, b.te) << name << " " << xi << " " << k;
          EXPECT_EQ(a.tm, b.tm) << name << " " << xi << " " << k;
        }
  }
}

std::string table_case(const std::string& d = "{ model = \"table\", file = \"d.csv\" }") {
  return "geometry = \"atom-plate\"\n"  // 1
         "[plate]\n"                    // 2
         "material = \"gold-drude\"\n"  // 3
         "d_parameters = " +
         d +
         "\n"  // 4
         "[separations]\nvalues = [\"2 nm\"]\n[conditions]\ntemperature = \"300 K\"\n"
         "[atom]\nspecies = \"hydrogen\"\n";
}

TEST(FeibelmanTable, CaseFileTableEqualsTheSameRowsInMemoryAndBadTablesAreNamed) {
  const auto dir = testing::fresh_dir("feibelman_table");
  // The pole model written in Angstrom and nm columns in another order than the reader's.
  std::string text = "# invented surface\nd_par_A, xi_eV, d_perp_nm\n";
  const auto t = sampled(0.25 * kEv, 40);
  for (std::size_t i = 0; i < t->xi.size(); ++i)
    text += fmt::format("{:.17g}, {:.17g}, {:.17g}\n", t->parallel[i] * 1e10, t->xi[i] / kEv,
                        t->perpendicular[i] * 1e9);
  std::ofstream(dir / "d.csv") << text;
  const io::CaseSpec c = io::parse_case(table_case(), dir / "case.toml");
  const PlanarPtr plate = c.body("plate").plate;
  EXPECT_NE(plate->describe().find("from table"), std::string::npos) << plate->describe();
  const auto memory =
      make_feibelman_half_space(builtin_material("gold-drude"), FeibelmanParameters{{}, {}, t});
  const auto vac = make_vacuum();
  for (double xi : {0.0, 0.1 * kEv, 3.3 * kEv, 50.0 * kEv})
    for (double k : {1e6, 1e9}) {
      const auto a = plate->at(xi, *vac)->reflect(k), b = memory->at(xi, *vac)->reflect(k);
      // The file holds 17 digits and the unit factors round once: a few ulps of d.
      EXPECT_NEAR(a.tm, b.tm, 1e-14) << xi << " " << k;
      EXPECT_NEAR(a.te, b.te, 1e-14) << xi << " " << k;
    }
  bool keyed = false;
  for (const auto& [k, v] : io::case_key_fields(c))
    keyed = keyed || k == "plate.d_parameters.file (contents)";
  EXPECT_TRUE(keyed);

  struct Bad {
    std::string table, expect;
  };
  const std::string head = "xi_eV, d_perp_nm, d_par_nm\n";
  const std::vector<Bad> bad{
      {head + "0, 0.1, 0\n1, 0.1, 0\n0.5, 0.1, 0\n", "d.csv:4: xi_eV = 0.5: not increasing"},
      {head + "0, 0.1, 0\n1, 0.1, 0\n1, 0.2, 0\n", "d.csv:4: xi_eV = 1: not increasing"},
      {head + "0, nan, 0\n1, 0.1, 0\n", "d.csv:2: d_perp_nm = 'nan': not a finite number"},
      {head + "0, 0.1, 0\n1, 0.1, inf\n", "d.csv:3: d_par_nm = 'inf': not a finite number"},
      {head + "0, 0.1, 0\n1, 0.1, 12\n", "d.csv:3: d_par_nm = 12: |d| must be at most 10 nm"},
      {head + "0, -10.5, 0\n1, 0.1, 0\n", "d.csv:2: d_perp_nm = -10.5: |d| must be at most"},
      {"xi_eV, d_perp_nm\n0, 0.1\n1, 0.1\n",
       "d.csv:1: header 'xi_eV, d_perp_nm': missing column d_par"},
      {"d_perp_nm, d_par_nm\n0.1, 0\n", "d.csv:1: header 'd_perp_nm, d_par_nm': missing column xi"},
      {"xi_eV, d_perp_um, d_par_nm\n", "d.csv:1: unknown column 'd_perp_um'"},
      {"xi_eV, d_perp_nm, d_perp_A\n", "d.csv:1: column 'd_perp_A': a second d_perp column"},
      {head + "0.5, 0.1, 0\n1, 0.1, 0\n", "d.csv:2: xi_eV = 0.5: the first row must be xi = 0"},
      {head + "0, 0.1\n", "d.csv:2: expected 3 values, found 2"},
      {head + "0, 0.1, 0\n", "1 data rows; at least 2 are needed"},
      {"# nothing\n", "no header line"},
  };
  for (const auto& b : bad) {
    std::ofstream(dir / "d.csv") << b.table;
    std::string m = "no error";
    try {
      (void)io::parse_case(table_case(), dir / "case.toml");
    } catch (const io::CaseError& e) {
      m = e.what();
    }
    EXPECT_NE(m.find("case.toml:4: plate.d_parameters.file = \"d.csv\""), std::string::npos) << m;
    EXPECT_NE(m.find(b.expect), std::string::npos) << m << "\n  expected: " << b.expect;
  }
  // The model key and the file key.
  const std::vector<Bad> bad_keys{
      {"{ model = \"pole\", file = \"d.csv\" }", "case.toml:4: plate.d_parameters.model"},
      {"{ model = \"table\" }", "plate.d_parameters.file: missing required key"},
      {"{ model = \"table\", file = \"none.csv\" }", "plate.d_parameters.file = \"none.csv\": no"},
      {"{ model = \"table\", file = \"d.csv\", perpendicular = \"0.1 nm\" }",
       "plate.d_parameters.perpendicular"},
  };
  for (const auto& b : bad_keys) {
    std::string m = "no error";
    try {
      (void)io::parse_case(table_case(b.table), dir / "case.toml");
    } catch (const io::CaseError& e) {
      m = e.what();
    }
    EXPECT_NE(m.find(b.expect), std::string::npos) << m << "\n  expected: " << b.expect;
  }
}

}  // namespace
}  // namespace roundtrip
