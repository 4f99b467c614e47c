// Case files parsed directly (no CLI): defaults, gap ranges and keys that belong to another
// geometry.
#include "io/case_file.h"

#include <gtest/gtest.h>

#include <cmath>
#include <string>

#include "io/errors.h"

namespace roundtrip::io {
namespace {

// Range end points are exact; interior points carry a few ulps of pow/multiply rounding.
constexpr double kGapRelTol = 1e-14;

const std::string kBase = R"(geometry = "plate-plate"
[plate]
material = "gold-drude"
[conditions]
temperature = "300 K"
)";

std::string error_of(const std::string& text) {
  try {
    parse_case(text, "t.toml");
  } catch (const CaseError& e) {
    return e.what();
  }
  return "no error";
}

TEST(CaseFile, DefaultsAreVacuumEnergyAndForceAndTheSamePlateTwice) {
  const CaseSpec s = parse_case(kBase + "[separations]\nvalues = [\"1 um\"]\n", "t.toml");
  EXPECT_EQ(s.medium->name(), "vacuum");
  EXPECT_TRUE(s.quantities.energy && s.quantities.force && !s.quantities.gradient);
  EXPECT_EQ(s.frequency.rel_tol, 1e-6);
  EXPECT_EQ(s.frequency.temperature_K, 300.0);
  ASSERT_EQ(s.bodies.size(), 2u);
  EXPECT_EQ(s.body("plate2").plate, s.body("plate").plate);
  EXPECT_EQ(s.body("plate2").defaulted_from, "plate");
  EXPECT_EQ(s.kind, io::find_geometry_kind("plate-plate"));
  EXPECT_TRUE(s.output_file.empty());
  ASSERT_EQ(s.gaps.size(), 1u);
  EXPECT_NEAR(s.gaps[0], 1e-6, 1e-6 * kGapRelTol);
  EXPECT_NE(build_geometry(s), nullptr);
}

// A log range is geometric: the middle of three points is the geometric mean (common practice).
TEST(CaseFile, LogRangeIsGeometricAndLinearRangeIsArithmetic) {
  const CaseSpec lg = parse_case(
      kBase + "[separations]\nfrom = \"100 nm\"\nto = \"2 um\"\ncount = 3\nspacing = \"log\"\n",
      "t.toml");
  ASSERT_EQ(lg.gaps.size(), 3u);
  EXPECT_EQ(lg.gaps.front(), 100e-9);
  EXPECT_EQ(lg.gaps.back(), 2e-6);
  EXPECT_NEAR(lg.gaps[1], std::sqrt(100e-9 * 2e-6), 447e-9 * kGapRelTol);
  const CaseSpec li = parse_case(
      kBase + "[separations]\nfrom = \"100 nm\"\nto = \"300 nm\"\ncount = 3\n", "t.toml");
  ASSERT_EQ(li.gaps.size(), 3u);
  EXPECT_NEAR(li.gaps[1], 200e-9, 200e-9 * kGapRelTol);
}

TEST(CaseFile, SphereKeysInAPlateCaseAreErrors) {
  const std::string gaps = "[separations]\nvalues = [\"1 um\"]\n";
  EXPECT_NE(error_of("field = \"dirichlet\"\n" + kBase + gaps).find("t.toml:1: field"),
            std::string::npos);
  EXPECT_NE(error_of(kBase + gaps + "[sphere]\nradius = \"1 um\"\n")
                .find("[sphere] is not used by geometry = \"plate-plate\""),
            std::string::npos);
  EXPECT_NE(error_of(kBase + gaps + "[numerics]\nl_max = 4\n").find("numerics.l_max"),
            std::string::npos);
}

TEST(CaseFile, RangeMistakesNameTheirKey) {
  const auto sep = [](const std::string& body) { return kBase + "[separations]\n" + body; };
  EXPECT_NE(error_of(sep("from = \"1 um\"\nto = \"100 nm\"\ncount = 3\n")).find("separations.to"),
            std::string::npos);
  EXPECT_NE(error_of(sep("from = \"1 um\"\nto = \"2 um\"\n")).find("separations.count"),
            std::string::npos);
  EXPECT_NE(error_of(sep("from = \"1 um\"\nto = \"2 um\"\ncount = 0\n")).find("separations.count"),
            std::string::npos);
  EXPECT_NE(error_of(sep("values = [\"1 um\"]\ncount = 2\n")).find("not both"), std::string::npos);
  EXPECT_NE(error_of(sep("values = []\n")).find("at least one gap"), std::string::npos);
  EXPECT_NE(error_of(sep("from = \"1 um\"\nto = \"2 um\"\ncount = 2\nspacing = \"cubic\"\n"))
                .find("separations.spacing"),
            std::string::npos);
}

TEST(CaseFile, SpherePlateNeedsARadiusAboveZero) {
  const std::string sp = R"(geometry = "sphere-plate"
[plate]
material = "gold-drude"
[sphere]
radius = "0 um"
material = "gold-drude"
[separations]
values = ["1 um"]
[conditions]
temperature = "0 K"
)";
  const std::string e = error_of(sp);
  EXPECT_NE(e.find("t.toml:5: sphere.radius = \"0 um\": a radius must be > 0"), std::string::npos)
      << e;
}

}  // namespace
}  // namespace roundtrip::io

namespace roundtrip::geometry {
namespace {

// The plain-C++ configuration check gives the same verdicts as the case-file parser.
TEST(Configuration, ValidateNamesTheFirstBadGapOrRadius) {
  Configuration c;
  c.gaps = {1e-7, 0.0};
  EXPECT_NE(c.validate().find("gaps[1]"), std::string::npos) << c.validate();
  c.gaps = {1e-7, std::nan("")};
  EXPECT_NE(c.validate().find("finite"), std::string::npos) << c.validate();
  c.gaps = {1e-7};
  EXPECT_EQ(c.validate(), "");
  c.upper = Body{"sphere", Shape::kSphere, -1e-6, {}};
  EXPECT_NE(c.validate().find("sphere.radius"), std::string::npos) << c.validate();
  c.upper.radius = 1e-6;
  EXPECT_EQ(c.validate(), "");
  c.upper.shell_thicknesses = {0.2e-6, 0.0};
  EXPECT_NE(c.validate().find("sphere.shells[1].thickness"), std::string::npos) << c.validate();
  c.upper.shell_thicknesses = {0.6e-6, 0.4e-6};
  EXPECT_NE(c.validate().find("not less than the radius"), std::string::npos) << c.validate();
  c.upper.shell_thicknesses = {0.6e-6, 0.3e-6};
  EXPECT_EQ(c.validate(), "");
}

}  // namespace
}  // namespace roundtrip::geometry
