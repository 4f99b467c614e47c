// geometry = "grating-grating" and the [offsets] table (io/kinds/grating_grating.cc,
// io/offsets_spec.cc, the offset axis of scan_points in io/case_file.cc).
#include <gtest/gtest.h>

#include <string>

#include "io/case_file.h"
#include "io/errors.h"
#include "solver/geometries/grating_grating.h"

namespace roundtrip::io {
namespace {

std::string gg_case(const std::string& extra, const std::string& grating2 = "") {
  return "geometry = \"grating-grating\"\n"  // 1
         "[grating]\n"                       // 2
         "period = \"400 nm\"\n"             // 3
         "profile = \"lamellar\"\n"          // 4
         "filling = 0.5\n"                   // 5
         "depth = \"100 nm\"\n"              // 6
         "material = \"silicon\"\n"          // 7
         "[separations]\n"                   // 8
         "values = [\"200 nm\"]\n"           // 9
         "[conditions]\n"                    // 10
         "temperature = \"0 K\"\n"           // 11
         + extra + grating2;                 // 12 ...
}

std::string error_of(const std::string& text) {
  try {
    const CaseSpec s = parse_case(text, "gg.toml");
    for (const auto& p : scan_points(s)) (void)build_geometry(p.spec);
  } catch (const CaseError& e) {
    return e.what();
  }
  return "no error";
}

TEST(GratingGratingCase, Grating2DefaultsToGratingAndOffsetToZero) {
  const CaseSpec s = parse_case(gg_case(""), "gg.toml");
  EXPECT_EQ(s.body("grating2").defaulted_from, "grating");
  EXPECT_EQ(s.body("grating2").grating.period, 400e-9);
  ASSERT_EQ(s.offsets.size(), 1u);
  EXPECT_EQ(s.offsets[0], 0.0);
  EXPECT_TRUE(s.scan.empty());
  const auto g = build_geometry(s);
  EXPECT_EQ(g->kind(), "grating-grating");
  EXPECT_EQ(dynamic_cast<const GratingGrating&>(*g).offset(), 0.0);
}

TEST(GratingGratingCase, OffsetsAreTheLastScanAxisWithOneOffsetPerPoint) {
  const CaseSpec s = parse_case(gg_case("[offsets]\nvalues = [\"0 nm\", \"-50 nm\", \"0.1 um\"]\n"
                                        "[scan]\ntemperature = [\"0 K\", \"300 K\"]\n"),
                                "gg.toml");
  ASSERT_EQ(s.scan.size(), 2u);
  EXPECT_EQ(s.scan.back().key, "offset");
  const auto points = scan_points(s);
  ASSERT_EQ(points.size(), 6u);  // temperature slowest, offset fastest
  EXPECT_EQ(points[1].parameters.back().second, "-50 nm");
  EXPECT_EQ(points[1].parameters.front().second, "0 K");
  EXPECT_EQ(points[5].parameters.front().second, "300 K");
  ASSERT_EQ(points[2].spec.offsets.size(), 1u);
  EXPECT_NEAR(points[2].spec.offsets[0], 100e-9, 1e-20);
  const auto lengths = points[1].spec.body_lengths();
  bool found = false;
  for (const auto& [k, v] : lengths)
    if (k == "offset_m") found = (v == -50e-9);
  EXPECT_TRUE(found);
  const auto g = build_geometry(points[1].spec);
  EXPECT_EQ(dynamic_cast<const GratingGrating&>(*g).offset(), -50e-9);
  // A range: from/to/count, linear.
  const CaseSpec r =
      parse_case(gg_case("[offsets]\nfrom = \"0 nm\"\nto = \"200 nm\"\ncount = 5\n"), "gg.toml");
  ASSERT_EQ(r.offsets.size(), 5u);
  EXPECT_NEAR(r.offsets[1], 50e-9, 1e-20);
  EXPECT_EQ(r.offsets[4], 200e-9);
}

TEST(GratingGratingCase, BadInputNamesFileLineKeyAndValue) {
  // Common practice: the message names file:line, the dotted key and the value.
  std::string m = error_of(gg_case("[offsets]\nvalues = [\"0 nm\", 50]\n"));
  EXPECT_NE(m.find("gg.toml:13: offsets.values[1] = 50"), std::string::npos) << m;
  m = error_of(gg_case("[offsets]\nvalues = [\"2 m\"]\n"));
  EXPECT_NE(m.find("gg.toml:13: offsets.values[0] = \"2 m\""), std::string::npos) << m;
  m = error_of(gg_case("[offsets]\nfrom = \"100 nm\"\nto = \"0 nm\"\ncount = 3\n"));
  EXPECT_NE(m.find("gg.toml:14: offsets.to = \"0 nm\""), std::string::npos) << m;
  m = error_of(gg_case("[offsets]\nvalues = [\"0 nm\", \"0 um\"]\n"));
  EXPECT_NE(m.find("listed twice"), std::string::npos) << m;
  m = error_of(gg_case("[offsets]\nstep = \"1 nm\"\n"));
  EXPECT_NE(m.find("gg.toml:13: offsets.step"), std::string::npos) << m;
  // [offsets] where the kind has none.
  const std::string plate =
      "geometry = \"plate-plate\"\n[plate]\nmaterial = \"silicon\"\n[separations]\n"
      "values = [\"200 nm\"]\n[conditions]\ntemperature = \"0 K\"\n[offsets]\nvalues = [\"0 "
      "nm\"]\n";
  m = error_of(plate);
  EXPECT_NE(m.find("gg.toml:8: offsets: geometry = \"plate-plate\" has no lateral offsets"),
            std::string::npos)
      << m;
  // Gratings of different periods; bad [grating2] values as for [grating].
  const std::string g2 =
      "[grating2]\nperiod = \"300 nm\"\nprofile = \"lamellar\"\nfilling = 0.5\n"
      "depth = \"100 nm\"\nmaterial = \"silicon\"\n";
  m = error_of(gg_case("", g2));
  EXPECT_NE(m.find("grating2.period = \"300 nm\": must equal grating.period"), std::string::npos)
      << m;
  std::string g2f = g2;
  g2f.replace(g2f.find("filling = 0.5"), 13, "filling = 2");
  m = error_of(gg_case("", g2f));
  EXPECT_NE(m.find("gg.toml:15: grating2.filling = 2"), std::string::npos) << m;
  // Conducting ridges: built at T = 0 (the balanced-basis FMM) and, Drude ridges on a Drude
  // substrate, at T > 0 (the xi = 0 term is the equipotential conductor, grating_pec.h);
  // plasma-model metals are refused at T > 0.
  std::string au = g2;
  au.replace(au.find("\"silicon\""), 9, "\"gold-drude\"");
  au.replace(au.find("300 nm"), 6, "400 nm");
  EXPECT_EQ(error_of(gg_case("", au)), "no error");
  std::string au_warm = gg_case("", au);
  au_warm.replace(au_warm.find("\"0 K\""), 5, "\"300 K\"");
  EXPECT_EQ(error_of(au_warm), "no error");
  {
    std::string pl = au_warm;
    pl.replace(pl.find("\"gold-drude\""), 12, "\"gold-plasma\"");
    const std::string m = error_of(pl);
    EXPECT_NE(m.find("grating2.material = \"gold-plasma\": the xi = 0 term of a plasma-model "
                     "grating"),
              std::string::npos)
        << m;
  }
  std::string pec = au;
  pec.replace(pec.find("\"gold-drude\""), 12, "\"perfect-conductor\"");
  EXPECT_EQ(error_of(gg_case("", pec)), "no error");
  // Non-lamellar profiles: the PFA columns and overlap assume rectangular ridges.
  const std::string sine =
      "[grating2]\nperiod = \"400 nm\"\nprofile = \"sinusoidal\"\namplitude = \"50 nm\"\n"
      "material = \"silicon\"\n";
  m = error_of(gg_case("", sine));
  EXPECT_NE(m.find("gg.toml:14: grating2.profile = \"sinusoidal\": grating-grating is built for "
                   "lamellar profiles only"),
            std::string::npos)
      << m;
}

}  // namespace
}  // namespace roundtrip::io
