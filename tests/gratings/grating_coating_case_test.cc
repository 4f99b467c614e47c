// [grating] coating = { material, thickness } (io/grating_spec.cc) through grating-plate.
#include <gtest/gtest.h>

#include <cmath>
#include <string>

#include "io/case_file.h"
#include "io/errors.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/grating_plate.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/library.h"
#include "solver/planar/layered.h"

namespace roundtrip::io {
namespace {

std::string grating_case(const std::string& grating_lines, const std::string& temperature = "0 K",
                         const std::string& geometry = "grating-plate") {
  return "geometry = \"" + geometry +
         "\"\n"                         // line 1
         "[plate]\n"                    // 2
         "material = \"gold-drude\"\n"  // 3
         "[separations]\n"              // 4
         "values = [\"200 nm\"]\n"      // 5
         "[conditions]\n"               // 6
         "temperature = \"" +
         temperature +
         "\"\n"         // 7
         "[grating]\n"  // 8
         + grating_lines;
}

const std::string kGood =
    "period = \"400 nm\"\n"                                          // 9
    "profile = \"lamellar\"\n"                                       // 10
    "filling = 0.5\n"                                                // 11
    "depth = \"200 nm\"\n"                                           // 12
    "material = \"silicon\"\n"                                       // 13
    "coating = { material = \"silica\", thickness = \"20 nm\" }\n";  // 14

std::string error_of(const std::string& text) {
  try {
    const CaseSpec s = parse_case(text, "g.toml");
    (void)build_geometry(s);
  } catch (const CaseError& e) {
    return e.what();
  }
  return "no error";
}

std::string with(const std::string& from, const std::string& to,
                 const std::string& temperature = "0 K") {
  std::string g = kGood;
  g.replace(g.find(from), from.size(), to);
  return error_of(grating_case(g, temperature));
}

TEST(GratingCoatingCase, ReadsTheCoating) {
  const CaseSpec s = parse_case(grating_case(kGood, "300 K"), "g.toml");
  const LamellarGrating& g = s.body("grating").grating;
  ASSERT_TRUE(g.coated());
  EXPECT_EQ(g.coating->name(), "silica");
  EXPECT_DOUBLE_EQ(g.coating_thickness, 20e-9);
  const auto geo = build_geometry(s);
  EXPECT_NE(geo->describe().find("coated with 2e-08 m of silica"), std::string::npos)
      << geo->describe();
}

TEST(GratingCoatingCase, BadCoatingsNameFileLineKeyAndValue) {
  // Common practice: file:line, key and value, and what is supported.
  std::string m = with("\"20 nm\"", "\"0 nm\"");
  EXPECT_NE(m.find("g.toml:14: grating.coating.thickness = \"0 nm\": a coating thickness must be "
                   "> 0"),
            std::string::npos)
      << m;
  m = with("\"20 nm\"", "\"-3 nm\"");
  EXPECT_NE(m.find("g.toml:14: grating.coating.thickness = \"-3 nm\""), std::string::npos) << m;
  m = with("\"20 nm\"", "\"100 nm\"");
  EXPECT_NE(m.find("g.toml:14: grating.coating.thickness = \"100 nm\": the coating fills the "
                   "grooves"),
            std::string::npos)
      << m;
  EXPECT_NE(m.find("supported for profile = \"lamellar\": 2 t < (1 - filling) period"),
            std::string::npos)
      << m;
  EXPECT_EQ(with("\"20 nm\"", "\"99 nm\""), "no error");
  m = with("\"silica\"", "\"unobtainium\"");
  EXPECT_NE(m.find("g.toml:14"), std::string::npos) << m;
  EXPECT_NE(m.find("grating.coating.material = \"unobtainium\": unknown material"),
            std::string::npos)
      << m;
  m = with("thickness = \"20 nm\"", "thick = \"20 nm\"");
  EXPECT_NE(m.find("g.toml:14: grating.coating.thick = \"20 nm\": unknown key of a coating"),
            std::string::npos)
      << m;
  m = with("thickness = \"20 nm\"", "material2 = \"x\"");
  EXPECT_NE(m.find("grating.coating.material2"), std::string::npos) << m;
  m = with("{ material = \"silica\", thickness = \"20 nm\" }", "\"silica\"");
  EXPECT_NE(m.find("g.toml:14: grating.coating = \"silica\": expected a table"), std::string::npos)
      << m;
  m = with(", thickness = \"20 nm\"", "");
  EXPECT_NE(m.find("g.toml:14: grating.coating.thickness: missing required key"), std::string::npos)
      << m;
}

TEST(GratingCoatingCase, WhatIsNotBuiltIsAClearError) {
  // Conducting coatings as conducting ridges: the FMM at xi > 0 (T = 0), no xi = 0 term (T > 0);
  // perfectly conducting coatings and coatings on perfect conductors are not built.
  EXPECT_EQ(with("\"silica\"", "\"gold-drude\""), "no error");
  std::string m = with("\"silica\"", "\"gold-drude\"", "300 K");
  EXPECT_NE(m.find("g.toml:14: grating.coating.material = \"gold-drude\": the xi = 0 term of a "
                   "grating with a conducting coating ('gold-drude') is not built"),
            std::string::npos)
      << m;
  m = with("\"silica\"", "\"perfect-conductor\"");
  EXPECT_NE(m.find("grating.coating.material = \"perfect-conductor\": a perfectly conducting "
                   "coating is not built"),
            std::string::npos)
      << m;
  m = with("\"silicon\"", "\"perfect-conductor\"");
  EXPECT_NE(m.find("grating.coating.material = \"silica\": a coating on a perfectly conducting "
                   "grating is not built"),
            std::string::npos)
      << m;
  // grating-grating takes coated gratings ([grating2] defaults to the coated [grating]).
  std::string gg = grating_case(kGood, "0 K", "grating-grating");
  gg.replace(gg.find("[plate]\nmaterial = \"gold-drude\"\n"), 32, "# no plate\n# line 3\n");
  EXPECT_EQ(error_of(gg), "no error");
  const CaseSpec s = parse_case(gg, "g.toml");
  EXPECT_TRUE(s.body("grating2").grating.coated());
}

TEST(GratingCoatingCase, FillingOneIsTheThreeLayerPlatePlateEnergyAndPfa) {
  // Lifshitz (1956) through PlatePlate with the layered plate (silica 20 nm on silicon 200 nm on
  // silicon), summed by the same rule (300 K, rel_tol 1e-5): f = 1 coated is that stack at L;
  // its grating PFA and flat-sample energy are the same value.
  std::string g = kGood;
  g.replace(g.find("filling = 0.5"), 13, "filling = 1.0");
  const CaseSpec s =
      parse_case(grating_case(g + "[numerics]\nrel_tol = 1e-5\norders = 3\n", "300 K"), "g.toml");
  const auto geo = build_geometry(s);
  const double L = 200e-9;
  const FrequencySum e = sum_over_frequencies(
      [&](double xi) { return geo->at_frequency(xi, L, DerivativeOrder::kForce); },
      geo->frequency_scale(L), s.frequency);
  const PlatePlate pp(
      make_layered({{builtin_material("silica"), 20e-9}}, builtin_material("silicon")),
      make_half_space(builtin_material("gold-drude")), nullptr);
  const FrequencySum r = sum_over_frequencies(
      [&](double xi) { return pp.at_frequency(xi, L, DerivativeOrder::kForce); },
      pp.frequency_scale(L), s.frequency);
  EXPECT_NEAR(e.total.value, r.total.value, 1e-5 * std::abs(r.total.value));
  EXPECT_NEAR(e.total.d1, r.total.d1, 1e-5 * std::abs(r.total.d1));
  const auto pfa = geo->pfa(L, s.frequency);
  ASSERT_TRUE(pfa.has_value());
  EXPECT_NEAR(pfa->energy, r.total.value, 1e-5 * std::abs(r.total.value));
  const auto* gp = dynamic_cast<const GratingPlate*>(geo.get());
  ASSERT_NE(gp, nullptr);
  EXPECT_NEAR(gp->flat_energy(L, s.frequency), r.total.value, 1e-5 * std::abs(r.total.value));
}

}  // namespace
}  // namespace roundtrip::io
