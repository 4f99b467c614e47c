// The geometry registry (io/kinds): every kind parses a minimal case of its own, builds a solver
// Geometry of the kind and scale it declares, and its bodies come out in lower/upper order.
#include <gtest/gtest.h>

#include <string>

#include "io/case_file.h"
#include "io/errors.h"
#include "io/kinds/kind.h"

namespace roundtrip::io {
namespace {

// A minimal body table for a slot's shape (invented values).
// A kind with a cylinder gets perfect conductors throughout (the fast scalar path of
// solver/geometries/cylinder_plate.h).
std::string table_for(const BodySlot& s, bool pec = false) {
  if (s.shape == geometry::Shape::kAtom) return "[" + s.table + "]\nspecies = \"rubidium\"\n";
  if (pec)
    return "[" + s.table + "]\n" +
           (s.shape == geometry::Shape::kPlate ? "" : "radius = \"2 um\"\n") +
           "material = \"perfect-conductor\"\n";
  if (s.shape == geometry::Shape::kSphere)
    return "[" + s.table + "]\nradius = \"2 um\"\nmaterial = \"gold-drude\"\n";
  if (s.shape == geometry::Shape::kGrating)
    return "[" + s.table +
           "]\nperiod = \"400 nm\"\nprofile = \"lamellar\"\nfilling = 0.5\ndepth = \"100 nm\"\n"
           "material = \"silicon\"\n";
  return "[" + s.table + "]\nmaterial = \"gold-drude\"\n";
}

std::string minimal_case(const GeometryKind& k) {
  std::string text = "geometry = \"" + k.name + "\"\n";
  const bool pec =
      k.lower.shape == geometry::Shape::kCylinder || k.upper.shape == geometry::Shape::kCylinder;
  for (const BodySlot* s : {&k.lower, &k.upper})
    if (s->defaults_to.empty()) text += table_for(*s, pec);
  return text +
         "[separations]\nvalues = [\"500 nm\"]\n[conditions]\ntemperature = \"0 K\"\n"
         "[numerics]\nrel_tol = 1e-3\n";
}

TEST(GeometryKinds, EveryKindBuildsAGeometryOfItsOwnNameAndScale) {
  ASSERT_GE(geometry_kinds().size(), 2u);
  for (const auto& k : geometry_kinds()) {
    SCOPED_TRACE(k.name);
    const CaseSpec spec = parse_case(minimal_case(k), "k.toml");
    ASSERT_EQ(spec.kind, find_geometry_kind(k.name));
    ASSERT_EQ(spec.bodies.size(), 2u);
    EXPECT_EQ(spec.bodies[0].table, k.lower.table);
    EXPECT_EQ(spec.bodies[1].table, k.upper.table);
    const auto g = build_geometry(spec);
    ASSERT_NE(g, nullptr);
    EXPECT_EQ(g->kind(), k.name);
    EXPECT_EQ(g->scale(), k.scale);
    EXPECT_EQ(spec.configuration().validate(), "");
  }
}

TEST(GeometryKinds, ADefaultedBodyIsACopyOfItsTableAndSaysSo) {
  for (const auto& k : geometry_kinds()) {
    if (k.upper.defaults_to.empty()) continue;
    SCOPED_TRACE(k.name);
    const CaseSpec spec = parse_case(minimal_case(k), "k.toml");
    const BodySpec& up = spec.body(k.upper.table);
    const BodySpec& from = spec.body(k.upper.defaults_to);
    EXPECT_EQ(up.defaulted_from, k.upper.defaults_to);
    EXPECT_EQ(up.plate, from.plate);
    EXPECT_EQ(up.radius, from.radius);
    EXPECT_EQ(up.material, from.material);
    EXPECT_NE(up.describe().find("same as [" + k.upper.defaults_to + "]"), std::string::npos);
  }
}

TEST(GeometryKinds, AnUnknownKindListsTheKnownOnes) {
  try {
    (void)parse_case("geometry = \"torus-plate\"\n", "k.toml");
    FAIL() << "no error";
  } catch (const CaseError& e) {
    const std::string m = e.what();
    EXPECT_NE(m.find("k.toml:1: geometry"), std::string::npos) << m;
    for (const auto& n : geometry_kind_names()) EXPECT_NE(m.find(n), std::string::npos) << m;
  }
}

TEST(GeometryKinds, ShellsAreReadOutermostFirstAndCheckedAgainstTheRadius) {
  const std::string base =
      "geometry = \"sphere-plate\"\n[plate]\nmaterial = \"gold-drude\"\n"
      "[separations]\nvalues = [\"500 nm\"]\n[conditions]\ntemperature = \"0 K\"\n"
      "[sphere]\nradius = \"2 um\"\nmaterial = \"silica\"\n";
  const auto err = [&](const std::string& shells) {
    try {
      (void)parse_case(base + shells, "s.toml");
    } catch (const CaseError& e) {
      return std::string(e.what());
    }
    return std::string("no error");
  };
  const std::string thick =
      err("shells = [{ material = \"gold-drude\", thickness = \"1.5 um\" },\n"
          "          { material = \"silica\", thickness = \"0.6 um\" }]\n");
  EXPECT_NE(thick.find("s.toml:12: sphere.shells[1].thickness"), std::string::npos) << thick;
  EXPECT_NE(thick.find("not less than the radius"), std::string::npos) << thick;
  const std::string zero = err("shells = [{ material = \"gold-drude\", thickness = \"0 nm\" }]\n");
  EXPECT_NE(zero.find("sphere.shells[0].thickness"), std::string::npos) << zero;
  const std::string unknown =
      err("shells = [{ material = \"gold-drude\", thickness = \"5 nm\", colour = \"red\" }]\n");
  EXPECT_NE(unknown.find("sphere.shells[0].colour"), std::string::npos) << unknown;
}

// Cylinders take shells with the sphere's keys and order (README "Case files"): read outermost
// first, built into a coated cylinder (its name lists the shells), copied to a defaulted
// [cylinder2], and refused with file:line, key and value when together not thinner than the
// radius, not positive, or given with a scalar test field.
TEST(GeometryKinds, CylinderShellsAreReadLikeTheSpheresAndCheckedAgainstTheRadius) {
  const std::string tail =
      "[separations]\nvalues = [\"500 nm\"]\n[conditions]\ntemperature = \"0 K\"\n"
      "[cylinder]\nradius = \"1 um\"\nmaterial = \"silica\"\n";
  const std::string plate = "geometry = \"cylinder-plate\"\n[plate]\nmaterial = \"silicon\"\n";
  const auto err = [&](const std::string& head, const std::string& shells) {
    try {
      (void)parse_case(head + tail + shells, "c.toml");
    } catch (const CaseError& e) {
      return std::string(e.what());
    }
    return std::string("no error");
  };
  const std::string thick = err(plate,
                                "shells = [{ material = \"gold-drude\", thickness = \"0.7 um\" },\n"
                                "          { material = \"silica\", thickness = \"0.3 um\" }]\n");
  EXPECT_NE(thick.find("c.toml:12: cylinder.shells[1].thickness"), std::string::npos) << thick;
  EXPECT_NE(thick.find("not less than the radius"), std::string::npos) << thick;
  const std::string zero =
      err(plate, "shells = [{ material = \"gold-drude\", thickness = \"0 nm\" }]\n");
  EXPECT_NE(zero.find("c.toml:11: cylinder.shells[0].thickness"), std::string::npos) << zero;
  const std::string negative =
      err(plate, "shells = [{ material = \"gold-drude\", thickness = \"-5 nm\" }]\n");
  EXPECT_NE(negative.find("cylinder.shells[0].thickness"), std::string::npos) << negative;
  EXPECT_NE(negative.find("-5 nm"), std::string::npos) << negative;
  const std::string scalar =
      err("geometry = \"cylinder-plate\"\nfield = \"dirichlet\"\n",
          "shells = [{ material = \"gold-drude\", thickness = \"5 nm\" }]\n");
  EXPECT_NE(scalar.find("cylinder.shells"), std::string::npos) << scalar;
  EXPECT_NE(scalar.find("scalar test fields take no shells"), std::string::npos) << scalar;

  const std::string good =
      "shells = [{ material = \"gold-drude\", thickness = \"50 nm\" },\n"
      "          { material = \"silicon\", thickness = \"20 nm\" }]\n";
  const CaseSpec pc = parse_case(plate + tail + good, "c.toml");
  const BodySpec& c = pc.body("cylinder");
  ASSERT_EQ(c.shells.size(), 2u);
  EXPECT_EQ(c.shells[0].material->name(), "gold-drude");
  EXPECT_DOUBLE_EQ(c.shells[1].thickness, 20e-9);
  EXPECT_EQ(c.cylinder_material()->name(), "gold-drude (5e-08 m) on silicon (2e-08 m) on silica");
  EXPECT_NE(build_geometry(pc)->describe().find("gold-drude (5e-08 m) on silicon"),
            std::string::npos);
  const CaseSpec cc = parse_case("geometry = \"cylinder-cylinder\"\n" + tail + good, "c.toml");
  EXPECT_EQ(cc.body("cylinder2").shells.size(), 2u);  // [cylinder2] defaults to [cylinder]
  EXPECT_NE(build_geometry(cc)->describe().find("gold-drude (5e-08 m) on silicon"),
            std::string::npos);
}

}  // namespace
}  // namespace roundtrip::io
