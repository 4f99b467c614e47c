// Ions in the gap medium (solver/planar/electrolyte.h): the Debye length of salt water, the
// screened zero-frequency plate-plate term (I -> 0, conductors in closed form, large kappa L,
// direct mpmath quadrature), and the case key [medium] ionic_strength with its bad input.
#include "solver/planar/electrolyte.h"

#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <string>
#include <vector>

#include "io/case_file.h"
#include "io/errors.h"
#include "solver/constants.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/library.h"
#include "solver/materials/models.h"

namespace roundtrip {
namespace {

Spectral static_term(const PlanarPtr& a, const MaterialPtr& medium, double kappa, double gap) {
  return PlatePlate(a, a, medium, kappa, 1e-13).at_frequency(0.0, gap, DerivativeOrder::kGradient);
}

TEST(Electrolyte, DebyeLengthOfMolarSaltWaterIs0304Nanometres) {
  // Israelachvili, Intermolecular and Surface Forces (2011): 1/kappa = 0.304 nm/sqrt(I [M]) for a
  // 1:1 electrolyte in water (eps = 78.4) at 25 C; quoted to 3 digits (tolerance 2e-3).
  for (double molar : {1.0, 0.1, 1e-3}) {
    const double kappa = std::sqrt(electrolyte_kappa_sq(1e3 * molar, 78.4, 298.15));
    EXPECT_NEAR(1e9 / kappa * std::sqrt(molar), 0.304, 0.304 * 2e-3) << molar;
  }
  EXPECT_EQ(electrolyte_kappa_sq(0.0, 78.4, 300.0), 0.0);
  EXPECT_TRUE(std::isinf(electrolyte_kappa_sq(1.0, 78.4, 0.0)));  // T = 0: complete screening
}

TEST(Electrolyte, ScreenedReflectionLimits) {
  // Derived (electrolyte.h): q = k returns r; a conductor stays 1; a dielectric half-space gives
  // (eps_b k - eps_m q)/(eps_b k + eps_m q).
  for (double r : {-0.3, 0.0, 0.5, 1.0}) EXPECT_EQ(screened_static_tm(r, 2e7, 2e7), r);
  EXPECT_NEAR(screened_static_tm(1.0, 1e6, 5e8), 1.0, 1e-15);
  const double eb = 3.9, em = 78.5, k = 3e7, q = 5e7;
  const double r = (eb - em) / (eb + em);
  EXPECT_NEAR(screened_static_tm(r, k, q), (eb * k - em * q) / (eb * k + em * q), 1e-15);
}

TEST(Electrolyte, VanishingIonicStrengthGivesTheUnscreenedStaticTerm) {
  // kappa = 0 takes the unscreened path (bitwise); kappa L = 1e-6 differs by O(kappa L) (derived:
  // the integrand changes by O(kappa^2/k^2) only below k ~ kappa, measure k dk).
  const auto water = make_constant("water-like", 78.5);
  for (const char* m : {"silica", "gold-drude", "gold-plasma"}) {
    const auto a = make_half_space(builtin_material(m));
    const double gap = 50e-9;
    const Spectral plain =
        PlatePlate(a, a, water).at_frequency(0.0, gap, DerivativeOrder::kGradient);
    const Spectral zero = static_term(a, water, 0.0, gap);
    EXPECT_EQ(plain.value, zero.value) << m;
    EXPECT_EQ(plain.d1, zero.d1) << m;
    const Spectral tiny = static_term(a, water, 1e-6 / gap, gap);
    EXPECT_NEAR(tiny.value / plain.value, 1.0, 1e-5) << m;
    EXPECT_NEAR(tiny.d1 / plain.d1, 1.0, 1e-5) << m;
  }
}

// Conductors (r' = 1) in closed form (derived: ln(1 - e^{-2qL}) = -sum_n e^{-2nqL}/n and
// int_kappa^inf q dq e^{-2nqL} = e^{-2n kappa L}(kappa/(2nL) + 1/(4 n^2 L^2))):
//   s_0 = -(1/2pi) [kappa/(2L) Li_2(e^{-2 kappa L}) + Li_3(e^{-2 kappa L})/(4 L^2)],
// -> -zeta(3)/(8 pi L^2) at kappa = 0 (Lifshitz n = 0 term of conductors, standard).
double conductor_static(double kappa, double gap) {
  const double z = std::exp(-2.0 * kappa * gap);
  double li2 = 0.0, li3 = 0.0, zn = 1.0;
  for (int n = 1; n < 100000; ++n) {
    zn *= z;
    li2 += zn / (double(n) * n);
    li3 += zn / (double(n) * n * n);
    if (zn < 1e-18 * li2) break;
  }
  return -(kappa / (2.0 * gap) * li2 + li3 / (4.0 * gap * gap)) / (2.0 * kPi);
}

TEST(Electrolyte, DrudeConductorsFollowTheClosedFormAtAnyKappa) {
  const auto water = make_constant("water-like", 78.5);
  const auto gold = make_half_space(builtin_material("gold-drude"));  // static TE = 0
  const double gap = 20e-9;
  for (double kl : {0.01, 0.3, 1.0, 5.0, 20.0}) {
    const double kappa = kl / gap;
    const Spectral s = static_term(gold, water, kappa, gap);
    EXPECT_NEAR(s.value / conductor_static(kappa, gap), 1.0, 1e-11) << kl;
    // dS/dL against a central difference, step h = 1e-4 L: step error h^2 s'''/(6 s'), i.e.
    // 2 (h/L)^2 for s ~ 1/L^2 (small kappa L) and (2 kappa h)^2/6 for s ~ e^{-2 kappa L}; the
    // tolerance is 1.5 times their sum.
    const double h = 1e-4 * gap;
    const double fd = (static_term(gold, water, kappa, gap + h).value -
                       static_term(gold, water, kappa, gap - h).value) /
                      (2 * h);
    EXPECT_NEAR(s.d1 / fd, 1.0, 1.5e-8 * (2 + 2 * kl * kl / 3)) << kl;
  }
  EXPECT_NEAR(static_term(gold, water, 0.0, gap).value / (-kZeta3 / (8 * kPi * gap * gap)), 1.0,
              1e-12);
}

TEST(Electrolyte, LargeKappaLSuppressesTheStaticTermLikeExpMinus2KappaL) {
  // Asymptotic form (electrolyte.h, derived): s_0 -> -(kappa/(4 pi L))(1 + 1/(2 kappa L))
  // e^{-2 kappa L} [1 - sqrt(pi)(eps_a + eps_b)/(eps_m sqrt(kappa L)) + ...] for two dielectrics
  // (r' = -1 + 2 eps_b k/(eps_m q) + ..., k ~ sqrt(kappa/L)). Checked: the ratio's deviation
  // from 1 divided by the stated first correction tends to 1 (remainder falls, < 1 % at
  // kappa L = 320).
  const auto water = make_constant("water-like", 78.5);
  const auto silica = make_half_space(make_constant("silica-like", 3.9));
  const double gap = 10e-9;
  double last = 1.0;
  for (double kl : {5.0, 20.0, 80.0, 320.0}) {
    const double kappa = kl / gap;
    const double lead = -(kappa / (4 * kPi * gap)) * (1 + 1 / (2 * kl)) * std::exp(-2 * kl);
    const double first = std::sqrt(kPi) * 2 * 3.9 / (78.5 * std::sqrt(kl));
    const double ratio = static_term(silica, water, kappa, gap).value / lead;
    const double rest = std::abs((1.0 - ratio) / first - 1.0);
    EXPECT_LT(rest, last) << kl;
    last = rest;
  }
  EXPECT_LT(last, 0.01);
}

TEST(Electrolyte, StaticTermMatchesDirectQuadrature) {
  // tests/planar/electrolyte_reference.py: mpmath quadrature (30 digits) of the stated formula,
  // eps_b = 3.9 in eps_m = 78.5, L = 10 nm, kappa L = 1; tolerance 1e-10 (k_rel_tol 1e-13 and the
  // derivative's mpmath.diff are far below).
  const auto water = make_constant("water-like", 78.5);
  const auto silica = make_half_space(make_constant("silica-like", 3.9));
  const Spectral s = static_term(silica, water, 1e8, 1e-8);
  EXPECT_NEAR(s.value / -144876246442943.41761, 1.0, 1e-10);
  EXPECT_NEAR(s.d1 / 4.8457331083713262685e+22, 1.0, 1e-10);
}

TEST(Electrolyte, PlasmaStaticTeIsNotScreened) {
  // Ions do not screen static magnetic fields: with complete TM screening (kappa = inf) what is
  // left of a plasma metal's xi = 0 term is its TE term, unchanged (derived).
  const auto water = make_constant("water-like", 78.5);
  const auto p = make_half_space(builtin_material("gold-plasma"));
  const auto g = make_half_space(builtin_material("gold-drude"));
  const double gap = 100e-9;
  const double inf = std::numeric_limits<double>::infinity();
  const double te = static_term(p, water, 0.0, gap).value - static_term(g, water, 0.0, gap).value;
  EXPECT_NEAR(static_term(p, water, inf, gap).value / te, 1.0, 1e-12);
  EXPECT_EQ(static_term(g, water, inf, gap).value, 0.0);
}

const std::string kCase = R"(geometry = "plate-plate"
[plate]
material = "silica"
[medium]
material = "water"
ionic_strength = "0.1 mol/L"
[separations]
values = ["10 nm"]
[conditions]
temperature = "298.15 K"
)";

TEST(Electrolyte, CaseKeyBuildsTheScreenedPlatePlate) {
  const io::CaseSpec c = io::parse_case(kCase, "a.toml");
  EXPECT_EQ(c.ionic_strength, 100.0);  // mol/m^3
  const auto g = io::build_geometry(c);
  const auto* pp = dynamic_cast<const PlatePlate*>(g.get());
  ASSERT_NE(pp, nullptr);
  const double eps_w = builtin_material("water")->static_limit().static_eps;
  EXPECT_NEAR(pp->kappa_ion(), std::sqrt(electrolyte_kappa_sq(100.0, eps_w, 298.15)), 1e-6);
  // Israelachvili (2011): ~0.96 nm at 0.1 M (water's eps(0) = 78.5 here).
  EXPECT_NEAR(1e9 / pp->kappa_ion(), 0.304 / std::sqrt(0.1), 0.01);
}

TEST(Electrolyte, BadIonicStrengthIsNamed) {
  struct Bad {
    std::string from, to, expect;
  };
  const std::vector<Bad> bad{
      {"\"0.1 mol/L\"", "\"-0.1 mol/L\"", "a.toml:6: medium.ionic_strength = \"-0.1 mol/L\""},
      {"\"0.1 mol/L\"", "\"0.1 kg\"", "unknown unit"},
      {"\"0.1 mol/L\"", "0.1", "a.toml:6: medium.ionic_strength = 0.1"},
      {"\"0.1 mol/L\"", "\"20 M\"", "at most 10 mol/L"},
      {"material = \"water\"", "material = \"vacuum\"", "dielectric solvent"},
      {"geometry = \"plate-plate\"\n[plate]",
       "geometry = \"sphere-sphere\"\n[sphere]\nradius = \"1 um\"",
       "medium.ionic_strength = \"0.1 mol/L\": ions in the medium are built for plate-plate, "
       "sphere-plate and atom-plate only"},
      {"geometry = \"plate-plate\"",
       "geometry = \"sphere-plate\"\n[sphere]\nradius = \"1 um\"\n"
       "material = \"gold-drude\"",
       "a.toml:9: medium.ionic_strength = \"0.1 mol/L\": ions in the medium are built for a "
       "conducting sphere over a conducting plate"},
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

}  // namespace
}  // namespace roundtrip
