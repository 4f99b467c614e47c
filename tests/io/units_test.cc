// Case-file quantities: unit strings -> SI, and clear errors for everything else.
#include "io/units.h"

#include <gtest/gtest.h>

#include <cmath>
#include <string>

namespace roundtrip::io {
namespace {

// Conversions are products of exact decimal factors: a few ulps of rounding at most.
constexpr double kConversionRelTol = 1e-14;
// CODATA 2018 electron volt-hertz relationship, 2.417989242... x 10^14 Hz per eV (exact in the
// 2019 SI; digits from memory). Only 10 digits are quoted, hence the looser tolerance.
constexpr double kEvHertz = 2.417989242e14;
constexpr double kEvRelTol = 1e-9;

double rel_diff(double a, double b) { return std::abs(a - b) / std::abs(b); }

TEST(Units, LengthStringsConvertToMetres) {
  EXPECT_NEAR(parse_quantity_string("150 nm", Dimension::kLength, "x"), 150e-9,
              150e-9 * kConversionRelTol);
  EXPECT_NEAR(parse_quantity_string("2 um", Dimension::kLength, "x"), 2e-6,
              2e-6 * kConversionRelTol);
  EXPECT_NEAR(parse_quantity_string("2 \u00b5m", Dimension::kLength, "x"), 2e-6,
              2e-6 * kConversionRelTol);
  EXPECT_NEAR(parse_quantity_string("2\u03bcm", Dimension::kLength, "x"), 2e-6,
              2e-6 * kConversionRelTol);
  EXPECT_NEAR(parse_quantity_string("1.5e-6 m", Dimension::kLength, "x"), 1.5e-6,
              1.5e-6 * kConversionRelTol);
  EXPECT_NEAR(parse_quantity_string("  +3 mm ", Dimension::kLength, "x"), 3e-3,
              3e-3 * kConversionRelTol);
}

// Decimal prefixes divide by an exact power of ten: the result is the double nearest to the
// decimal value, bit for bit the same as the C++ literal.
TEST(Units, DecimalPrefixesGiveTheNearestDouble) {
  EXPECT_EQ(parse_quantity_string("100 nm", Dimension::kLength, "x"), 100e-9);
  EXPECT_EQ(parse_quantity_string("2 um", Dimension::kLength, "x"), 2e-6);
  EXPECT_EQ(parse_quantity_string("3 mm", Dimension::kLength, "x"), 3e-3);
  EXPECT_EQ(parse_quantity_string("50 mK", Dimension::kTemperature, "x"), 50e-3);
}

TEST(Units, TemperatureStringsConvertToKelvin) {
  EXPECT_EQ(parse_quantity_string("300 K", Dimension::kTemperature, "t"), 300.0);
  EXPECT_EQ(parse_quantity_string("0 K", Dimension::kTemperature, "t"), 0.0);
  EXPECT_NEAR(parse_quantity_string("50 mK", Dimension::kTemperature, "t"), 0.05,
              0.05 * kConversionRelTol);
}

TEST(Units, PhotonEnergiesConvertToRadPerSecondByCodata2018) {
  const double nine_ev = parse_quantity_string("9 eV", Dimension::kFrequency, "wp");
  EXPECT_LT(rel_diff(nine_ev, 9.0 * 2.0 * M_PI * kEvHertz), kEvRelTol);
  const double gamma = parse_quantity_string("35 meV", Dimension::kFrequency, "g");
  EXPECT_LT(rel_diff(gamma, 0.035 * 2.0 * M_PI * kEvHertz), kEvRelTol);
}

TEST(Units, HertzAreCyclesAndRadPerSecondIsAngular) {
  EXPECT_EQ(parse_quantity_string("1.37e16 rad/s", Dimension::kFrequency, "f"), 1.37e16);
  EXPECT_NEAR(parse_quantity_string("2 THz", Dimension::kFrequency, "f"), 2.0 * M_PI * 2e12,
              2.0 * M_PI * 2e12 * kConversionRelTol);
}

TEST(Units, TomlNodesCarryTheirUnits) {
  const auto doc = toml::parse(std::string_view("gap = \"100 nm\"\nrel_tol = 1e-6\nl_max = 12\n"),
                               std::string_view("case.toml"));
  EXPECT_NEAR(parse_quantity(*doc.get("gap"), Dimension::kLength, "gap"), 100e-9,
              100e-9 * kConversionRelTol);
  EXPECT_EQ(parse_quantity(*doc.get("rel_tol"), Dimension::kDimensionless, "rel_tol"), 1e-6);
  EXPECT_EQ(parse_quantity(*doc.get("l_max"), Dimension::kDimensionless, "l_max"), 12.0);
}

// Expects a CaseError whose message contains every fragment.
void expect_error(const std::string& text, Dimension dim,
                  std::initializer_list<std::string> parts) {
  try {
    parse_quantity_string(text, dim, "plate.thickness");
    ADD_FAILURE() << "no error for '" << text << "'";
  } catch (const CaseError& e) {
    const std::string msg = e.what();
    EXPECT_NE(msg.find("plate.thickness"), std::string::npos) << msg;
    for (const auto& p : parts) EXPECT_NE(msg.find(p), std::string::npos) << msg;
  }
}

TEST(Units, BadStringsAreErrorsNamingFieldAndValue) {
  expect_error("150", Dimension::kLength, {"\"150\"", "missing unit"});
  expect_error("150 furlongs", Dimension::kLength, {"unknown length unit 'furlongs'"});
  expect_error("150 K", Dimension::kLength, {"unknown length unit 'K'"});
  expect_error("nan nm", Dimension::kLength, {"nan nm"});
  expect_error("inf K", Dimension::kTemperature, {"inf K"});
  expect_error("1e999 m", Dimension::kLength, {"out of the range"});
  expect_error("nm", Dimension::kLength, {"does not start with a number"});
  expect_error("1.2.3 nm", Dimension::kLength, {"unknown length unit '.3 nm'"});
  expect_error("", Dimension::kLength, {"empty"});
  expect_error("0.5 x", Dimension::kDimensionless, {"unexpected text"});
}

TEST(Units, TomlErrorsNameFileLineFieldAndValue) {
  const auto doc =
      toml::parse(std::string_view("a = 1\n\ngap = 100\nt = \"300 C\"\nr = nan\ns = [1]\n"),
                  std::string_view("c.toml"));
  const auto message = [&](const char* key, Dimension dim) -> std::string {
    try {
      parse_quantity(*doc.get(key), dim, std::string("conditions.") + key);
    } catch (const CaseError& e) {
      return e.what();
    }
    return "no error";
  };
  const std::string gap = message("gap", Dimension::kLength);
  EXPECT_NE(gap.find("c.toml:3: conditions.gap = 100: a bare number has no unit"),
            std::string::npos)
      << gap;
  const std::string t = message("t", Dimension::kTemperature);
  EXPECT_NE(t.find("c.toml:4: conditions.t = \"300 C\": unknown temperature unit 'C'"),
            std::string::npos)
      << t;
  const std::string r = message("r", Dimension::kDimensionless);
  EXPECT_NE(r.find("c.toml:5: conditions.r = nan: not a finite number"), std::string::npos) << r;
  const std::string s = message("s", Dimension::kDimensionless);
  EXPECT_NE(s.find("c.toml:6: conditions.s"), std::string::npos) << s;
  EXPECT_NE(s.find("expected a number"), std::string::npos) << s;
}

// Issue 16, item 6: the header's lengths in the case's own units ("R = 1e-05 m" beside
// radius = "10 um" was the complaint). Values are compared as printed (6 significant digits).
TEST(Units, DescriptionLengthsComeBackInTheUnitsTheCaseWrote) {
  const std::string case_text =
      "[sphere]\nradius = \"10 um\"\n[separations]\nvalues = [\"250 nm\", \"1.5 \u00b5m\"]\n";
  EXPECT_EQ(lengths_in_case_units("sphere (R = 1e-05 m) over gold", case_text),
            "sphere (R = 10 um) over gold");
  EXPECT_EQ(lengths_in_case_units("at L = 2.5e-07, 1.5e-06 m", case_text),
            "at L = 2.5e-07, 1.5 \u00b5m")
      << "only '<number> m' is a length; a bare number in a list stays as it is";
  EXPECT_EQ(lengths_in_case_units("L = 2.5e-07 m and L = 1.5e-06 m", case_text),
            "L = 250 nm and L = 1.5 \u00b5m");
  // Not written in the case: a unit by size.
  EXPECT_EQ(lengths_in_case_units("H = 3.2e-08 m, W = 4e-05 m, D = 0.002 m, Z = 2 m", case_text),
            "H = 32 nm, W = 40 um, D = 2 mm, Z = 2 m");
  // Not lengths: other units, parts of words, areas.
  const std::string others = "p = 3e+06 1/m, v = 1.4e+06 m/s, A = 1e-12 m\u00b2, x2 m, 1e-3 mol";
  EXPECT_EQ(lengths_in_case_units(others, case_text), others);
  EXPECT_EQ(lengths_in_case_units("R = 1e-05 m", "not toml = ["), "R = 10 um");
}

}  // namespace
}  // namespace roundtrip::io
