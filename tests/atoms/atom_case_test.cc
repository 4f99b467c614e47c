// [atom] tables of geometry = "atom-plate": what they build and how bad input is reported
// ("file:line: key = value: what is wrong", README "Case files").
#include <gtest/gtest.h>

#include <string>

#include "io/case_file.h"
#include "io/errors.h"
#include "solver/atoms/polarizability.h"
#include "solver/constants.h"
#include "solver/geometries/atom_plate.h"

namespace roundtrip::io {
namespace {

std::string with_atom(const std::string& atom, const std::string& gaps = "[\"100 nm\"]") {
  return "geometry = \"atom-plate\"\n"  // line 1
         "[plate]\n"                    // 2
         "material = \"gold-drude\"\n"  // 3
         "[separations]\n"              // 4
         "values = " +
         gaps +
         "\n"                         // 5
         "[conditions]\n"             // 6
         "temperature = \"300 K\"\n"  // 7
         "[atom]\n" +
         atom;  // 8, the atom's keys from line 9
}

std::string error_of(const std::string& text) {
  try {
    (void)parse_case(text, "a.toml");
  } catch (const CaseError& e) {
    return e.what();
  }
  return "no error";
}

TEST(AtomCase, SpeciesAndUserModelsBuildTheirPolarizability) {
  const CaseSpec rb = parse_case(with_atom("species = \"rubidium\"\n"), "a.toml");
  EXPECT_NEAR(rb.body("atom").atom->alpha(0.0) / kBohrVolume, 318.8, 1e-9);
  // Units of the volume: m^3, Å^3 and a.u. (a_0^3) give the same atom (CODATA a_0; derived).
  for (const std::string v : {"\"4.72413e-29 m^3\"", "\"47.2413 Å^3\"", "\"318.8 au\""}) {
    const CaseSpec c = parse_case(
        with_atom("polarizability = { model = \"constant\", alpha = " + v + " }\n"), "a.toml");
    EXPECT_NEAR(c.body("atom").atom->alpha(1e16) / (318.8 * kBohrVolume), 1.0, 2e-6) << v;
  }
  const CaseSpec o = parse_case(
      with_atom("polarizability = { model = \"oscillators\", oscillators = [{ strength = \"300 "
                "au\", frequency = \"0.058 au\" }, { strength = \"9 au\", frequency = \"27.2 "
                "eV\" }] }\n"),
      "a.toml");
  const auto& a = *o.body("atom").atom;
  EXPECT_NEAR(a.alpha(0.0) / kBohrVolume, 309.0, 1e-9);
  // At xi = 0.058 a.u. the first term is halved (alpha = a w^2/(w^2 + xi^2); definition).
  const double xi = 0.058 * kHartreeFrequency, w2 = 27.2 * kRadPerSecondPerEv;
  EXPECT_NEAR(a.alpha(xi) / kBohrVolume, 150.0 + 9.0 / (1.0 + (xi / w2) * (xi / w2)), 1e-9);
  const auto g = build_geometry(o);
  EXPECT_EQ(g->kind(), "atom-plate");
  EXPECT_EQ(g->scale(), ResultScale::kTotal);
}

TEST(AtomCase, BadInputNamesFileLineKeyAndValue) {
  struct Bad {
    std::string atom, gaps, expect;
  };
  const std::vector<Bad> bad{
      {"species = \"argonium\"\n", "[\"100 nm\"]",
       "a.toml:9: atom.species = \"argonium\": unknown species"},
      {"species = \"helium\"\n", "[\"-5 nm\"]", "separations"},
      {"polarizability = { model = \"constant\", alpha = \"-3 au\" }\n", "[\"100 nm\"]",
       "a.toml:9: atom.polarizability.alpha = \"-3 au\": a polarizability must be > 0"},
      {"polarizability = { model = \"constant\", alpha = \"3 m^2\" }\n", "[\"100 nm\"]",
       "a.toml:9: atom.polarizability.alpha = \"3 m^2\": unknown unit"},
      {"polarizability = { model = \"constant\", alpha = 3.0 }\n", "[\"100 nm\"]",
       "a.toml:9: atom.polarizability.alpha = 3: expected a polarizability volume"},
      {"polarizability = { model = \"oscillators\", oscillators = [{ strength = \"1 au\", "
       "frequency = \"-1 eV\" }] }\n",
       "[\"100 nm\"]", "atom.polarizability.oscillators[0].frequency = \"-1 eV\""},
      {"polarizability = { model = \"oscillators\", oscillators = [] }\n", "[\"100 nm\"]",
       "a.toml:9: atom.polarizability.oscillators = []"},
      {"polarizability = { model = \"table\", file = \"no-such.csv\" }\n", "[\"100 nm\"]",
       "a.toml:9: atom.polarizability.file = \"no-such.csv\": no such file"},
      {"polarizability = { model = \"cubic\" }\n", "[\"100 nm\"]", "unknown model"},
      {"species = \"helium\"\nradius = \"1 nm\"\n", "[\"100 nm\"]", "a.toml:10: atom.radius"},
      {"", "[\"100 nm\"]", "atom.species: missing"},
  };
  for (const auto& b : bad) {
    const std::string m = error_of(with_atom(b.atom, b.gaps));
    EXPECT_NE(m.find(b.expect), std::string::npos) << m << "\n  expected: " << b.expect;
  }
  // Negative distance: the gap check names the value (README "Accepted ranges").
  const std::string m = error_of(with_atom("species = \"helium\"\n", "[\"-5 nm\"]"));
  EXPECT_NE(m.find("-5 nm"), std::string::npos) << m;
  // A [scan] of the atom's material does not exist.
  EXPECT_NE(error_of(with_atom("species = \"helium\"\n") + "[scan]\natom.material = [\"a\"]\n")
                .find("scan.atom.material"),
            std::string::npos);
}

std::string with_sheet(const std::string& sheet, const std::string& extra = "") {
  return "geometry = \"atom-plate\"\n"  // 1
         "[plate]\n"                    // 2
         "material = \"silica\"\n" +    // 3
         extra +
         "sheet = " + sheet + "\n" +  // 4 (5 with extra)
         "[separations]\nvalues = [\"1 um\"]\n[conditions]\ntemperature = \"300 K\"\n"
         "[atom]\nspecies = \"helium\"\n";
}

TEST(AtomCase, PlateSheetKeyBuildsASheetAndNamesBadValues) {
  const CaseSpec c = parse_case(
      with_sheet("{ model = \"drude\", density = \"1e13 cm^-2\", mass_ratio = 0.03, damping = "
                 "\"5 meV\" }"),
      "a.toml");
  EXPECT_NE(c.body("plate").plate->describe().find("conducting sheet"), std::string::npos);
  EXPECT_NE(c.body("plate").plate->describe().find("silica"), std::string::npos);
  (void)parse_case(with_sheet("{ model = \"constant\", conductance = \"6.08e-5 S\" }"), "a.toml");
  struct Bad {
    std::string sheet, extra, expect;
  };
  const std::vector<Bad> bad{
      {"{ model = \"drude\", density = \"-1 m^-2\", mass_ratio = 0.03, damping = \"5 meV\" }", "",
       "a.toml:4: plate.sheet.density = \"-1 m^-2\": must be >= 0"},
      {"{ model = \"drude\", density = \"1e17 m^-2\", mass_ratio = 0, damping = \"5 meV\" }", "",
       "a.toml:4: plate.sheet.mass_ratio = 0: must be between"},
      {"{ model = \"drude\", density = \"1e17 m^-3\", mass_ratio = 0.03, damping = \"5 meV\" }", "",
       "plate.sheet.density = \"1e17 m^-3\": unknown unit"},
      {"{ model = \"constant\", conductance = \"1e12 S\" }", "", "above 1e10 S"},
      {"{ model = \"constant\" }", "", "plate.sheet.conductance: missing required key"},
      {"{ model = \"graphene\" }", "", "a.toml:4: plate.sheet.model = \"graphene\": unknown"},
      {"{ model = \"constant\", conductance = \"1 S\" }",
       "layers = [{ material = \"gold-drude\", thickness = \"10 nm\" }]\n",
       "a.toml:5: plate.sheet = { conductance = '1 S', model = 'constant' }: a sheet on layers"},
  };
  for (const auto& b : bad) {
    const std::string m = error_of(with_sheet(b.sheet, b.extra));
    EXPECT_NE(m.find(b.expect), std::string::npos) << m << "\n  expected: " << b.expect;
  }
}

}  // namespace
}  // namespace roundtrip::io
