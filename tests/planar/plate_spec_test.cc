// Plates from case files (io/material_spec.h planar_from_toml): the three forms and their errors.
#include <gtest/gtest.h>

#include <cmath>
#include <string>

#include "io/errors.h"
#include "io/material_spec.h"
#include "solver/materials/library.h"
#include "solver/materials/models.h"
#include "solver/planar/hydrodynamic.h"
#include "solver/planar/layered.h"

namespace roundtrip::io {
namespace {

constexpr double kRoundoff = 1e-14;
const MaterialPtr kVacuum = make_vacuum();
const std::filesystem::path kSource(ROUNDTRIP_SOURCE_DIR);

struct Case {
  toml::table doc;
  MaterialResolver resolver;
  explicit Case(const std::string& text)
      : doc(toml::parse(text, std::string_view("case.toml"))),
        resolver(doc["materials"].as_table(), kSource) {}
  PlanarPtr plate() const {
    return planar_from_toml(*doc["plate"].as_table(), "plates.a", resolver);
  }
};

void expect_same(const PlanarPtr& a, const PlanarPtr& b) {
  for (double xi : {0.0, 1e14, 1e16})
    for (double k : {1e5, 1e7, 1e9}) {
      const Reflection ra = a->at(xi, *kVacuum)->reflect(k), rb = b->at(xi, *kVacuum)->reflect(k);
      EXPECT_NEAR(ra.te, rb.te, kRoundoff) << xi << " " << k;
      EXPECT_NEAR(ra.tm, rb.tm, kRoundoff) << xi << " " << k;
    }
}

void expect_case_error(const std::string& text, std::initializer_list<std::string> parts) {
  try {
    Case c(text);
    c.plate();
    ADD_FAILURE() << "no CaseError for:\n" << text;
  } catch (const CaseError& e) {
    for (const auto& s : parts)
      EXPECT_NE(std::string(e.what()).find(s), std::string::npos)
          << "message '" << e.what() << "' lacks '" << s << "'";
  }
}

TEST(PlateSpec, HalfSpaceLayersAndNonlocalFormsBuildTheRightBodies) {
  const MaterialPtr au = builtin_material("gold-drude"), si = builtin_material("silicon");
  expect_same(Case("[plate]\nmaterial = \"gold-drude\"\n").plate(), make_half_space(au));
  expect_same(Case("[plate]\nmaterial = \"silicon\"\nlayers = [{material = \"gold-drude\", "
                   "thickness = \"100 nm\"}, {material = \"silica\", thickness = \"0.5 um\"}]\n")
                  .plate(),
              make_layered({{au, 100e-9}, {builtin_material("silica"), 0.5e-6}}, si));
  const double beta = hydrodynamic_beta(1.40e6, HydrodynamicRegime::kHighFrequency);
  expect_same(Case("[plate]\nmaterial = \"gold-drude\"\nnonlocal = {model = \"hydrodynamic\", "
                   "fermi_velocity = \"1.40e6 m/s\"}\n")
                  .plate(),
              make_hydrodynamic(au, beta));
  expect_same(Case("[plate]\nmaterial = \"gold-drude\"\nnonlocal = {model = \"hydrodynamic\", "
                   "fermi_velocity = \"1.40e8 cm/s\", regime = \"low-frequency\"}\n")
                  .plate(),
              make_hydrodynamic(au, hydrodynamic_beta(1.4e6, HydrodynamicRegime::kLowFrequency)));
  expect_same(Case("[plate]\nmaterial = \"gold-drude\"\nnonlocal = {model = \"hydrodynamic\", "
                   "beta = \"1.08e6 m/s\"}\n")
                  .plate(),
              make_hydrodynamic(au, 1.08e6));
  // Films on a nonlocal substrate.
  expect_same(
      Case("[plate]\nmaterial = \"gold-drude\"\nlayers = [{material = \"silica\", "
           "thickness = \"2 nm\"}]\nnonlocal = {model = \"hydrodynamic\", beta = \"1e6 m/s\"}\n")
          .plate(),
      make_layered_on_hydrodynamic({{builtin_material("silica"), 2e-9}}, au, 1e6));
  // A user material in a layer.
  expect_same(Case("[materials.film]\nmodel = \"constant\"\neps = 4\n[plate]\nmaterial = "
                   "\"silicon\"\nlayers = [{material = \"film\", thickness = \"3 nm\"}]\n")
                  .plate(),
              make_layered({{make_constant("film", 4.0), 3e-9}}, si));
}

TEST(PlateSpec, MalformedPlatesNameFieldValueAndLine) {
  expect_case_error("[plate]\nmaterial = \"goldd\"\n",
                    {"case.toml:2", "plates.a.material", "goldd"});
  expect_case_error("[plate]\nlayers = []\n", {"plates.a", "material"});
  expect_case_error("[plate]\nmaterial = 3\n", {"plates.a.material", "string"});
  expect_case_error("[plate]\nmaterial = \"silicon\"\ncoating = \"gold\"\n",
                    {"case.toml:3", "plates.a.coating", "unknown key"});
  expect_case_error("[plate]\nmaterial = \"silicon\"\nlayers = {material = \"gold-drude\"}\n",
                    {"plates.a.layers", "array"});
  expect_case_error(
      "[plate]\nmaterial = \"silicon\"\nlayers = [{material = \"gold-drude\", thickness = \"0 "
      "nm\"}]\n",
      {"case.toml:3", "plates.a.layers[0].thickness", "0 nm", "> 0"});
  expect_case_error(
      "[plate]\nmaterial = \"silicon\"\nlayers = [{material = \"gold-drude\", thickness = 100}]\n",
      {"plates.a.layers[0].thickness", "unit"});
  expect_case_error("[plate]\nmaterial = \"silicon\"\nlayers = [{material = \"gold-drude\"}]\n",
                    {"plates.a.layers[0]", "thickness"});
  expect_case_error(
      "[plate]\nmaterial = \"silicon\"\nlayers = [{material = \"au\", thickness = \"1 nm\"}]\n",
      {"plates.a.layers[0].material", "au", "unknown material"});
  expect_case_error(
      "[plate]\nmaterial = \"silicon\"\nlayers = [{material = \"gold-drude\", thickness = \"1 "
      "nm\", "
      "rough = 1}]\n",
      {"plates.a.layers[0].rough", "unknown key"});
  expect_case_error(
      "[plate]\nmaterial = \"gold-drude\"\nnonlocal = {model = \"specular\", beta = "
      "\"1e6 m/s\"}\n",
      {"plates.a.nonlocal.model", "specular"});
  expect_case_error("[plate]\nmaterial = \"gold-drude\"\nnonlocal = {model = \"hydrodynamic\"}\n",
                    {"plates.a.nonlocal", "fermi_velocity", "beta"});
  expect_case_error(
      "[plate]\nmaterial = \"gold-drude\"\nnonlocal = {model = \"hydrodynamic\", "
      "fermi_velocity = \"1.4e6 m\"}\n",
      {"plates.a.nonlocal.fermi_velocity", "1.4e6 m", "speed"});
  expect_case_error(
      "[plate]\nmaterial = \"gold-drude\"\nnonlocal = {model = \"hydrodynamic\", "
      "beta = \"1e6 m/s\", regime = \"low-frequency\"}\n",
      {"plates.a.nonlocal.regime"});
  expect_case_error(
      "[plate]\nmaterial = \"silica\"\nnonlocal = {model = \"hydrodynamic\", beta = "
      "\"1e6 m/s\"}\n",
      {"plates.a.material", "silica", "plasma_frequency"});
}

}  // namespace
}  // namespace roundtrip::io
