// Case files parsed directly (no CLI): defaults, gap ranges and keys that belong to another
// geometry.
#include "io/case_file.h"

#include <gtest/gtest.h>
#include <unistd.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>

#include "io/errors.h"
#include "io/units.h"

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

const std::string kSphereCase = R"(geometry = "sphere-plate"
[plate]
material = "gold-drude"
[sphere]
radius = "RADIUS"
material = "gold-drude"
[separations]
values = ["GAP"]
[conditions]
temperature = "300 K"
)";

std::string sphere_case(const std::string& radius, const std::string& gap) {
  std::string t = kSphereCase;
  t.replace(t.find("RADIUS"), 6, radius);
  t.replace(t.find("GAP"), 3, gap);
  return t;
}

// Absurd lengths were passed to the solver and came back as a solver failure (exit 4, no line).
// Now they are input errors naming file:line, key and value, with the accepted range. Ranges:
// lengths 0.1 nm (atomic scale, below which the continuum model fails) to 1 m (derived, README
// "Accepted ranges"); radius from 1 nm.
TEST(CaseFile, AbsurdLengthsAreRangeErrorsWithFileLineKeyAndValue) {
  std::string e = error_of(sphere_case("1e300 m", "100 nm"));
  EXPECT_NE(e.find("t.toml:5: sphere.radius = \"1e300 m\": a radius must be at most 1 m"),
            std::string::npos)
      << e;
  e = error_of(sphere_case("10 um", "1e-20 nm"));
  EXPECT_NE(e.find("t.toml:8: separations.values[0] = \"1e-20 nm\": a gap must be at least "
                   "1e-10 m"),
            std::string::npos)
      << e;
  e = error_of(kBase + "[separations]\nvalues = [\"1 um\", \"1e-300 nm\"]\n");
  EXPECT_NE(e.find("t.toml:7: separations.values[1] = \"1e-300 nm\": a gap must be at least"),
            std::string::npos)
      << e;
  e = error_of(kBase + "[separations]\nfrom = \"1 nm\"\nto = \"2 m\"\ncount = 3\n");
  EXPECT_NE(e.find("t.toml:8: separations.to = \"2 m\": a gap must be at most 1 m"),
            std::string::npos)
      << e;
  e = error_of(sphere_case("0.5 nm", "100 nm"));
  EXPECT_NE(e.find("sphere.radius = \"0.5 nm\": a radius must be at least 1e-09 m"),
            std::string::npos)
      << e;
  e = error_of(
      "geometry = \"plate-plate\"\n[plate]\nmaterial = \"silicon\"\nlayers = [{material = "
      "\"gold-drude\", thickness = \"1e-20 nm\"}]\n[separations]\nvalues = [\"1 um\"]\n"
      "[conditions]\ntemperature = \"300 K\"\n");
  EXPECT_NE(e.find("t.toml:4: plate.layers[0].thickness = \"1e-20 nm\": a layer thickness must "
                   "be at least 1e-10 m"),
            std::string::npos)
      << e;
  e = error_of(kBase +
               "[separations]\nvalues = [\"1 um\"]\n[materials.m]\nmodel = \"plasma\"\n"
               "plasma_frequency = \"1e290 eV\"\n");
  EXPECT_NE(e.find("t.toml:10: materials.m.plasma_frequency = \"1e290 eV\": a frequency must be "
                   "at most 1e+20 rad/s"),
            std::string::npos)
      << e;
  // The ends of the ranges are accepted.
  EXPECT_EQ(error_of(sphere_case("1 m", "0.1 nm")), "no error");
  EXPECT_EQ(error_of(sphere_case("1 nm", "1 m")), "no error");
}

// 50 000 dotted levels overflowed the stack of the TOML parser (a signal in `check` and `run`).
// The raw text is now measured before parsing: beyond 64 levels of dotted keys, headers,
// arrays and inline tables together, a CaseError names file:line:column.
TEST(CaseFile, DeepNestingIsACaseErrorNeverACrash) {
  const auto repeat = [](const std::string& s, int n) {
    std::string out;
    for (int i = 0; i < n; ++i) out += s;
    return out;
  };
  const std::string deep[] = {
      "title = \"x\"\n" + repeat("a.", 50000) + "a = 1\n",
      "title = \"x\"\n[" + repeat("a.", 50000) + "a]\n",
      "x = " + repeat("[", 50000) + repeat("]", 50000) + "\n",
      "x = " + repeat("{a = ", 50000) + "1" + repeat("}", 50000) + "\n",
      "x = " + repeat("[{a.b = ", 20000) + "1" + repeat("}]", 20000) + "\n",
      "[[" + repeat("a.", 70) + "a]]\n",
  };
  for (const auto& text : deep) {
    const std::string e = error_of(text);
    EXPECT_NE(e.find("nested deeper than 64 levels"), std::string::npos) << e.substr(0, 200);
    EXPECT_EQ(e.rfind("t.toml:", 0), 0u) << e.substr(0, 200);
  }
  EXPECT_NE(error_of(repeat("a.", 50000) + "a = 1\n").find("t.toml:1:"), std::string::npos);
  // 40 levels are fine for the pre-scan (the key is then unknown, an ordinary error).
  const std::string ok = error_of(repeat("a.", 40) + "a = 1\n" + kBase);
  EXPECT_EQ(ok.find("nested deeper"), std::string::npos) << ok;
  EXPECT_NE(ok.find("unknown key"), std::string::npos) << ok;
  // Strings and comments do not count: dots and brackets inside them are text.
  EXPECT_EQ(error_of(kBase + "[separations]\nvalues = [\"1 um\"]  # " + repeat("[a.", 100) +
                     "\ntitle = \"" + repeat("{a.", 100) + "\"\n")
                .find("nested deeper"),
            std::string::npos);
}

// A case file must be text: not UTF-8, over 16 MiB, a directory or a device is refused with a
// clear message (before: /dev/zero read until bad_alloc, a directory "missing required key").
TEST(CaseFile, OnlyRegularUtf8FilesOfSaneSizeAreRead) {
  std::string e = error_of("title = \"caf\xe9\"\n" + kBase);
  EXPECT_NE(e.find("t.toml:1:13: byte 0xE9 is not UTF-8"), std::string::npos) << e;
  e = error_of("title = \"\xc0\xaf\"\n" + kBase);  // overlong form of '/'
  EXPECT_NE(e.find("is not UTF-8"), std::string::npos) << e;
  e = error_of(kBase + "# " + std::string((16u << 20) + 1, 'x') + "\n");
  EXPECT_NE(e.find("more than the 16 MiB"), std::string::npos) << e.substr(0, 200);
  const auto load_error = [](const std::filesystem::path& p) -> std::string {
    try {
      load_case(p);
    } catch (const CaseError& err) {
      return err.what();
    }
    return "no error";
  };
  EXPECT_NE(load_error("/tmp").find("/tmp: is a directory, not a case file"), std::string::npos);
  for (const char* dev : {"/dev/zero", "/dev/urandom", "/dev/null"})
    EXPECT_NE(load_error(dev).find("not a regular file"), std::string::npos) << load_error(dev);
  EXPECT_NE(load_error("/nonexistent/c.toml").find("no such file"), std::string::npos);
  // A sparse 17 MiB file is refused by its size, before anything is read.
  const auto big = std::filesystem::temp_directory_path() /
                   ("roundtrip_big_case_" + std::to_string(getpid()) + ".toml");
  { std::ofstream(big) << "# big\n"; }
  std::filesystem::resize_file(big, 17u << 20);
  EXPECT_NE(load_error(big).find("more than the 16 MiB"), std::string::npos) << load_error(big);
  std::filesystem::remove(big);
}

// A byte-order mark and CRLF line ends (editors on some systems) parse like the plain file.
TEST(CaseFile, ByteOrderMarkAndCrlfCasesParse) {
  const std::string plain = "title = \"t\"\n" + kBase + "[separations]\nvalues = [\"1 um\"]\n";
  std::string crlf;
  for (char c : plain) crlf += c == '\n' ? std::string("\r\n") : std::string(1, c);
  for (const std::string& text : {"\xEF\xBB\xBF" + plain, crlf, "\xEF\xBB\xBF" + crlf}) {
    const CaseSpec s = parse_case(text, "t.toml");
    EXPECT_EQ(s.title, "t");
    EXPECT_EQ(s.gaps, std::vector<double>{1e-6});
    EXPECT_EQ(s.frequency.temperature_K, 300.0);
  }
  // Lines are still counted right after CR LF.
  EXPECT_NE(error_of(crlf + "[numerics]\r\nrel_tol = 2\r\n").find("t.toml:10: numerics.rel_tol"),
            std::string::npos)
      << error_of(crlf + "[numerics]\r\nrel_tol = 2\r\n");
}

// Control characters in any string of the case (title, names, sources) would reach the terminal
// raw when printed: they are refused at parse time with file:line, and the message shows them
// escaped. Tab is allowed.
TEST(CaseFile, ControlCharactersInStringsAreRefusedAndShownEscaped) {
  std::string e = error_of("title = \"red \\u001b[31m alert\"\n" + kBase);
  EXPECT_NE(e.find("t.toml:1: title = \"red \\u001B[31m alert\": contains a control character"),
            std::string::npos)
      << e;
  EXPECT_EQ(e.find('\x1b'), std::string::npos);
  e = error_of("title = \"\"\"two\nlines\"\"\"\n" + kBase);
  EXPECT_NE(e.find("title = \"two\\u000Alines\""), std::string::npos) << e;
  e = error_of("title = \"c1 \\u0085\"\n" + kBase);
  EXPECT_NE(e.find("contains a control character"), std::string::npos) << e;
  e = error_of(kBase +
               "[materials.m]\nmodel = \"plasma\"\nplasma_frequency = \"9 eV\"\n"
               "source = \"\\u0007bell\"\n");
  EXPECT_NE(e.find("t.toml:9: materials.m.source"), std::string::npos) << e;
  e = error_of("\"k\\u001b\" = 1\n" + kBase);
  EXPECT_NE(e.find("k\\u001B = 1: the key contains a control character"), std::string::npos) << e;
  const CaseSpec s = parse_case(
      "title = \"a\\tb \u00b5m\"\n" + kBase + "[separations]\nvalues = [\"1 um\"]\n", "t.toml");
  EXPECT_EQ(s.title, "a\tb \u00b5m");
  // The escaping used in messages (io/units.h printable): C0, DEL, C1 and stray bytes.
  EXPECT_EQ(printable("a\x1b[0m\x7f\xc2\x9b\xff\u00b5\t"),
            "a\\u001B[0m\\u007F\\u009B\\xFF\u00b5\t");
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
