// The [grating] table and geometry = "grating-plate" (io/case_file.cc, io/kinds/grating_plate.cc).
#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <string>

#include "io/case_file.h"
#include "io/errors.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/grating_plate.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/library.h"

namespace roundtrip::io {
namespace {

std::string grating_case(const std::string& grating_lines, const std::string& temperature = "0 K") {
  return "geometry = \"grating-plate\"\n"  // line 1
         "[plate]\n"                       // 2
         "material = \"gold-drude\"\n"     // 3
         "[separations]\n"                 // 4
         "values = [\"200 nm\"]\n"         // 5
         "[conditions]\n"                  // 6
         "temperature = \"" +
         temperature +
         "\"\n"         // 7
         "[grating]\n"  // 8
         + grating_lines;
}

const std::string kGood =
    "period = \"400 nm\"\n"      // 9
    "profile = \"lamellar\"\n"   // 10
    "filling = 0.5\n"            // 11
    "depth = \"200 nm\"\n"       // 12
    "material = \"silicon\"\n";  // 13

std::string error_of(const std::string& text) {
  try {
    const CaseSpec s = parse_case(text, "g.toml");
    (void)build_geometry(s);
  } catch (const CaseError& e) {
    return e.what();
  }
  return "no error";
}

TEST(GratingCase, ReadsALamellarGratingWithTheRidgeMaterialAsSubstrate) {
  const CaseSpec s = parse_case(grating_case(kGood), "g.toml");
  const LamellarGrating& g = s.body("grating").grating;
  EXPECT_DOUBLE_EQ(g.period, 400e-9);
  EXPECT_DOUBLE_EQ(g.filling, 0.5);
  EXPECT_DOUBLE_EQ(g.depth, 200e-9);
  EXPECT_EQ(g.ridge->name(), "silicon");
  EXPECT_EQ(g.substrate, g.ridge);
  const auto geo = build_geometry(s);
  EXPECT_EQ(geo->kind(), "grating-plate");
  EXPECT_EQ(geo->scale(), ResultScale::kPerArea);
  const CaseSpec s2 = parse_case(grating_case(kGood + "substrate = \"silica\"\n"), "g.toml");
  EXPECT_EQ(s2.body("grating").grating.substrate->name(), "silica");
}

TEST(GratingCase, BadValuesNameFileLineKeyAndValue) {
  const auto with = [&](const std::string& from, const std::string& to) {
    std::string g = kGood;
    g.replace(g.find(from), from.size(), to);
    return error_of(grating_case(g));
  };
  std::string m = with("filling = 0.5", "filling = 1.5");
  EXPECT_NE(m.find("g.toml:11: grating.filling = 1.5"), std::string::npos) << m;
  m = with("filling = 0.5", "filling = -0.1");
  EXPECT_NE(m.find("g.toml:11: grating.filling = -0.1"), std::string::npos) << m;
  m = with("depth = \"200 nm\"", "depth = \"0 nm\"");
  EXPECT_NE(m.find("g.toml:12: grating.depth = \"0 nm\""), std::string::npos) << m;
  m = with("depth = \"200 nm\"", "depth = \"-5 nm\"");
  EXPECT_NE(m.find("g.toml:12: grating.depth = \"-5 nm\""), std::string::npos) << m;
  m = with("period = \"400 nm\"", "period = \"0 nm\"");
  EXPECT_NE(m.find("g.toml:9: grating.period = \"0 nm\""), std::string::npos) << m;
  m = with("period = \"400 nm\"", "period = \"-400 nm\"");
  EXPECT_NE(m.find("g.toml:9: grating.period = \"-400 nm\""), std::string::npos) << m;
  m = with("\"lamellar\"", "\"sinusoidal\"");
  EXPECT_NE(m.find("g.toml:8: grating.amplitude: missing required key"), std::string::npos) << m;
  m = with("\"lamellar\"", "\"wavy\"");
  EXPECT_NE(m.find("g.toml:10: grating.profile = \"wavy\": unknown profile"), std::string::npos)
      << m;
}

TEST(GratingCase, WhatIsNotBuiltIsAClearError) {
  // Perfect conductors (solver/scatterers/grating_pec.h): ridges and substrate both, lamellar,
  // T = 0 and T > 0 (the xi = 0 term is built); otherwise a clear error naming file:line, key
  // and value.
  std::string g = kGood;
  g.replace(g.find("\"silicon\""), 9, "\"perfect-conductor\"");
  EXPECT_EQ(error_of(grating_case(g)), "no error");
  EXPECT_EQ(error_of(grating_case(g, "300 K")), "no error");
  std::string m = error_of(grating_case(g + "substrate = \"silicon\"\n"));
  EXPECT_NE(m.find("grating.substrate = \"silicon\": a perfectly conducting grating is "
                   "built only with ridges and substrate both perfect conductors"),
            std::string::npos)
      << m;
  std::string au = kGood;
  au.replace(au.find("\"silicon\""), 9, "\"gold-drude\"");
  // Conducting ridges: T = 0 (every xi > 0, the balanced-basis FMM); at T > 0 Drude ridges on a
  // Drude substrate (the xi = 0 term is the equipotential conductor, grating_pec.h); plasma-model
  // metals (a static TE reflection) are refused at T > 0.
  EXPECT_EQ(error_of(grating_case(au, "0 K")), "no error");
  EXPECT_EQ(error_of(grating_case(au, "300 K")), "no error");
  std::string pl = kGood;
  pl.replace(pl.find("\"silicon\""), 9, "\"gold-plasma\"");
  EXPECT_EQ(error_of(grating_case(pl, "0 K")), "no error");
  m = error_of(grating_case(pl, "300 K"));
  EXPECT_NE(m.find("g.toml:13: grating.material = \"gold-plasma\": the xi = 0 term of a "
                   "plasma-model grating ('gold-plasma') is not built"),
            std::string::npos)
      << m;
  // Gold ridges on a silicon substrate: T = 0 only.
  m = error_of(grating_case(au + "substrate = \"silicon\"\n", "300 K"));
  EXPECT_NE(m.find("grating.material = \"gold-drude\": the xi = 0 term of a grating with "
                   "conducting ridges ('gold-drude') on a dielectric substrate ('silicon') is not "
                   "built"),
            std::string::npos)
      << m;
  // A non-lamellar gold grating: T = 0 only.
  std::string tri = au;
  tri.replace(tri.find("\"lamellar\""), 10, "\"triangular\"");
  tri.replace(tri.find("filling = 0.5\n"), 14, "");
  m = error_of(grating_case(tri, "300 K"));
  EXPECT_NE(m.find("built for profile = \"lamellar\" only"), std::string::npos) << m;
  EXPECT_EQ(error_of(grating_case(tri, "0 K")), "no error");
  // A conducting substrate under dielectric ridges: T = 0 only (no xi = 0 term built).
  const std::string on_gold = kGood + "substrate = \"gold-drude\"\n";
  m = error_of(grating_case(on_gold, "300 K"));
  EXPECT_NE(m.find("grating.substrate = \"gold-drude\": the xi = 0 term of a grating with "
                   "conducting substrate"),
            std::string::npos)
      << m;
  EXPECT_EQ(error_of(grating_case(on_gold, "0 K")), "no error");
}

TEST(GratingCase, FillingOneIsThePlatePlateEnergyAndItsPfa) {
  // Lifshitz (1956) through PlatePlate, summed by the same frequency rule (300 K, rel_tol 1e-5):
  // f = 1 is the ridge half-space at L; the grating PFA (Bao et al., PRL 105, 250402 (2010))
  // is then the plate-plate value as well.
  std::string g = kGood;
  g.replace(g.find("filling = 0.5"), 13, "filling = 1.0");
  const CaseSpec s =
      parse_case(grating_case(g + "[numerics]\nrel_tol = 1e-5\norders = 3\n", "300 K"), "g.toml");
  const auto geo = build_geometry(s);
  const double L = 200e-9;
  const FrequencySum e = sum_over_frequencies(
      [&](double xi) { return geo->at_frequency(xi, L, DerivativeOrder::kForce); },
      geo->frequency_scale(L), s.frequency);
  const PlatePlate pp(make_half_space(builtin_material("silicon")),
                      make_half_space(builtin_material("gold-drude")), nullptr);
  const FrequencySum r = sum_over_frequencies(
      [&](double xi) { return pp.at_frequency(xi, L, DerivativeOrder::kForce); },
      pp.frequency_scale(L), s.frequency);
  EXPECT_NEAR(e.total.value, r.total.value, 1e-5 * std::abs(r.total.value));
  EXPECT_NEAR(e.total.d1, r.total.d1, 1e-5 * std::abs(r.total.d1));
  const auto pfa = geo->pfa(L, s.frequency);
  ASSERT_TRUE(pfa.has_value());
  EXPECT_NEAR(pfa->energy, r.total.value, 1e-5 * std::abs(r.total.value));
  EXPECT_NEAR(pfa->force, -r.total.d1, 1e-5 * std::abs(r.total.d1));
}

TEST(GratingCase, GoldFillingOneAt300KIsTheDrudePlatePlateEnergyAndPressure) {
  // Lifshitz (1956) through PlatePlate (its n = 0 term for Drude plates: r_TM(0) = 1,
  // r_TE(0) = 0), summed by the same frequency rule (300 K, rel_tol 1e-5): a gold-drude grating
  // with f = 1 is the gold half-space at L, its n = 0 term the equipotential conductor
  // (grating_pec.h), its n >= 1 terms the balanced-basis FMM. E and P to rel_tol.
  std::string g = kGood;
  g.replace(g.find("filling = 0.5"), 13, "filling = 1.0");
  g.replace(g.find("\"silicon\""), 9, "\"gold-drude\"");
  const CaseSpec s =
      parse_case(grating_case(g + "[numerics]\nrel_tol = 1e-5\norders = 3\n", "300 K"), "g.toml");
  const auto geo = build_geometry(s);
  const double L = 200e-9;
  const FrequencySum e = sum_over_frequencies(
      [&](double xi) { return geo->at_frequency(xi, L, DerivativeOrder::kForce); },
      geo->frequency_scale(L), s.frequency);
  const PlatePlate pp(make_half_space(builtin_material("gold-drude")),
                      make_half_space(builtin_material("gold-drude")), nullptr);
  const FrequencySum r = sum_over_frequencies(
      [&](double xi) { return pp.at_frequency(xi, L, DerivativeOrder::kForce); },
      pp.frequency_scale(L), s.frequency);
  std::printf("gold f = 1, 300 K: E = %.10e (plates %.10e), dE/dL = %.10e (plates %.10e)\n",
              e.total.value, r.total.value, e.total.d1, r.total.d1);
  EXPECT_NEAR(e.total.value, r.total.value, 1e-5 * std::abs(r.total.value));
  EXPECT_NEAR(e.total.d1, r.total.d1, 1e-5 * std::abs(r.total.d1));
}

TEST(GratingCase, PfaSphereGivesTheSphereForcesBesideTheExactEnergy) {
  // Derjaguin, Kolloid-Z. 69, 155 (1934): a sphere of radius R in place of the plate feels
  // F(L) = 2 pi R E(L) (E per area). The three forces: 2 pi R times the point's own E (exact
  // arithmetic), the grating PFA energy (Bao et al., PRL 105, 250402 (2010)), and the flat
  // wafer E_pp(L) (Lifshitz (1956) through an independent PlatePlate, same frequency rule and
  // rel_tol 1e-5). At f = 1 all three coincide with 2 pi R E_pp; at f = 0.5 the flat one still
  // is 2 pi R E_pp (silicon ridges on silicon: a silicon half-space at L).
  constexpr double kRuleTol = 1e-5;
  const double R = 50e-6, L = 200e-9, two_pi_r = 2.0 * 3.141592653589793 * R;
  const PlatePlate pp(make_half_space(builtin_material("silicon")),
                      make_half_space(builtin_material("gold-drude")), nullptr);
  for (const char* f : {"filling = 1.0", "filling = 0.5"}) {
    SCOPED_TRACE(f);
    std::string g = kGood;
    g.replace(g.find("filling = 0.5"), 13, f);
    const CaseSpec s =
        parse_case(grating_case(g + "[pfa_sphere]\nradius = \"50 um\"\n[numerics]\nrel_tol = 1e-5\n"
                                    "orders = 3\n",
                                "300 K"),
                   "g.toml");
    EXPECT_DOUBLE_EQ(s.pfa_sphere_radius, R);
    const auto geo = build_geometry(s);
    const FrequencySum r = sum_over_frequencies(
        [&](double xi) { return pp.at_frequency(xi, L, DerivativeOrder::kEnergy); },
        pp.frequency_scale(L), s.frequency);
    const double e = -1.25e-8;  // any point energy: F_sphere is 2 pi R times it
    const auto x = geo->extra_quantities_of(L, s.frequency, e, 1e-12);
    ASSERT_EQ(x.size(), 3u);
    EXPECT_EQ(x[0].name, "sphere_force");
    EXPECT_EQ(x[0].units, "N");
    EXPECT_DOUBLE_EQ(x[0].value, two_pi_r * e);
    EXPECT_DOUBLE_EQ(x[0].abs_error, two_pi_r * 1e-12);
    EXPECT_EQ(x[1].name, "sphere_force_grating_pfa");
    EXPECT_NEAR(x[1].value, two_pi_r * geo->pfa(L, s.frequency)->energy,
                1e-14 * std::abs(x[1].value));
    EXPECT_EQ(x[2].name, "sphere_force_flat");
    EXPECT_NEAR(x[2].value, two_pi_r * r.total.value, kRuleTol * std::abs(x[2].value));
    if (std::string(f) == "filling = 1.0")
      EXPECT_NEAR(x[1].value, two_pi_r * r.total.value, kRuleTol * std::abs(x[1].value));
    else
      EXPECT_GT(x[1].value, x[2].value) << "trenches weaken the PFA force";
  }
  // Without [pfa_sphere]: no extra quantities.
  EXPECT_TRUE(build_geometry(parse_case(grating_case(kGood), "g.toml"))
                  ->extra_quantities_of(L, FrequencyRuleOptions{}, -1e-8, 0.0)
                  .empty());
  // Bad input names file:line, key and value; other kinds have no [pfa_sphere].
  std::string m = error_of(grating_case(kGood + "[pfa_sphere]\nradius = \"-5 um\"\n"));
  EXPECT_NE(m.find("g.toml:15: pfa_sphere.radius = \"-5 um\""), std::string::npos) << m;
  m = error_of(grating_case(kGood + "[pfa_sphere]\nradius = \"5 um\"\ncolour = 1\n"));
  EXPECT_NE(m.find("g.toml:16: pfa_sphere.colour"), std::string::npos) << m;
  m = error_of(
      "geometry = \"plate-plate\"\n[plate]\nmaterial = \"silicon\"\n[separations]\n"
      "values = [\"200 nm\"]\n[conditions]\ntemperature = \"0 K\"\n[pfa_sphere]\n"
      "radius = \"5 um\"\n");
  EXPECT_NE(m.find("g.toml:8: pfa_sphere: geometry = \"plate-plate\" has no [pfa_sphere]"),
            std::string::npos)
      << m;
}

TEST(GratingCase, ReadsSinusoidalTriangularAndTableProfiles) {
  const auto read = [&](const std::string& lines) {
    return parse_case(grating_case(lines), "g.toml").body("grating").grating;
  };
  const auto sin = read(
      "period = \"500 nm\"\nprofile = \"sinusoidal\"\namplitude = \"40 nm\"\n"
      "material = \"silicon\"\n");
  EXPECT_EQ(sin.profile, GratingProfile::kSinusoidal);
  EXPECT_DOUBLE_EQ(sin.amplitude, 40e-9);
  EXPECT_DOUBLE_EQ(sin.height(), 80e-9);
  const auto tri = read(
      "period = \"500 nm\"\nprofile = \"triangular\"\ndepth = \"60 nm\"\n"
      "material = \"silicon\"\n");
  EXPECT_EQ(tri.profile, GratingProfile::kTriangular);
  // A table of one period, symmetric about its middle, starting anywhere (shifted to the crest).
  const auto dir = std::filesystem::temp_directory_path() / "roundtrip_grating_case_test";
  std::filesystem::create_directories(dir);
  const auto write = [&](const std::string& name, const std::string& text) {
    std::ofstream(dir / name) << text;
    return (dir / name).string();
  };
  const std::string good =
      write("good.csv", "x, height\n100, 0\n250, 90\n300, 100\n350, 90\n500, 0\n");
  const auto tab = read("period = \"400 nm\"\nprofile = \"table\"\ntable = \"" + good +
                        "\"\ntable_unit = \"nm\"\nmaterial = \"silicon\"\n");
  EXPECT_EQ(tab.profile, GratingProfile::kTable);
  EXPECT_NEAR(tab.depth, 100e-9, 1e-18);
  EXPECT_NEAR(tab.height_at(0.0), 100e-9, 1e-18);    // the crest moved to x = 0
  EXPECT_NEAR(tab.height_at(200e-9), 0.0, 1e-18);    // the trough at half a period
  EXPECT_NEAR(tab.height_at(-50e-9), 90e-9, 1e-18);  // even
  const auto table_error = [&](const std::string& csv, const std::string& period = "400 nm") {
    return error_of(grating_case("period = \"" + period + "\"\nprofile = \"table\"\ntable = \"" +
                                 csv + "\"\ntable_unit = \"nm\"\nmaterial = \"silicon\"\n"));
  };
  // Not single-valued (x goes back), not periodic, not one period, asymmetric: file:line or the
  // case's line 11 (table = ...), with the key.
  std::string m = table_error(write("back.csv", "0, 0\n200, 50\n150, 60\n400, 0\n"));
  EXPECT_NE(m.find("back.csv:3: grating.table: x = 150 does not increase"), std::string::npos) << m;
  m = table_error(write("open.csv", "0, 0\n200, 50\n400, 10\n"));
  EXPECT_NE(m.find("g.toml:11: grating.table"), std::string::npos) << m;
  EXPECT_NE(m.find("not periodic"), std::string::npos) << m;
  m = table_error(good, "300 nm");
  EXPECT_NE(m.find("not one period"), std::string::npos) << m;
  m = table_error(write("skew.csv", "0, 0\n100, 80\n150, 0\n400, 0\n"));
  EXPECT_NE(m.find("not symmetric"), std::string::npos) << m;
  m =
      error_of(grating_case("period = \"500 nm\"\nprofile = \"sinusoidal\"\namplitude = \"40 nm\"\n"
                            "filling = 0.5\nmaterial = \"silicon\"\n"));
  EXPECT_NE(m.find("g.toml:12: grating.filling = 0.5: not a key of profile = \"sinusoidal\""),
            std::string::npos)
      << m;
  std::filesystem::remove_all(dir);
}

}  // namespace
}  // namespace roundtrip::io
