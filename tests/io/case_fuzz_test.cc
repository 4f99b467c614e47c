// Randomised mutation test of the case parser: the shipped cases, mutated byte- and token-wise
// and structure-aware with a fixed seed, never crash the parser, and every rejection is a
// CaseError whose message starts with the file name (no other exception type, no bare message).
// Accepted mutants also go through the scan expansion, the journal key and build_geometry, which
// must keep to the same rule.
#include <fmt/format.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include "io/case_file.h"
#include "io/errors.h"

namespace roundtrip::io {
namespace {

namespace fs = std::filesystem;

constexpr int kInputs = 20000;             // mutants tried (stated in the test name)
constexpr std::uint32_t kSeed = 20261201;  // fixed: failures are reproducible
// ROUNDTRIP_FUZZ_INPUTS / ROUNDTRIP_FUZZ_SEED override both for longer runs by hand.
int env_or(const char* name, long fallback) {
  const char* v = std::getenv(name);
  return v ? static_cast<int>(std::strtol(v, nullptr, 10)) : static_cast<int>(fallback);
}

// Tokens that stress units, numbers, TOML structure and our keys.
const std::vector<std::string> kTokens = {"nan",
                                          "inf",
                                          "-inf",
                                          "+nan",
                                          "1e400",
                                          "-1",
                                          "0",
                                          "-0",
                                          "1e-400",
                                          "\"\"",
                                          "\"",
                                          "'",
                                          "[",
                                          "]",
                                          "[[",
                                          "]]",
                                          "{",
                                          "}",
                                          "=",
                                          ",",
                                          ".",
                                          "\n",
                                          "#",
                                          "\\",
                                          "\\u0000",
                                          "\"nan nm\"",
                                          "\"inf K\"",
                                          "\"-5 um\"",
                                          "\"0 nm\"",
                                          "\"1e308 m\"",
                                          "\"1 parsec\"",
                                          "\"300\"",
                                          "\"300 K\"",
                                          "\"-1 K\"",
                                          "\"1 um\"",
                                          "\"10 eV\"",
                                          "[scan]",
                                          "[materials.x]",
                                          "model = \"drude\"",
                                          "material",
                                          "radius",
                                          "temperature",
                                          "values",
                                          "from",
                                          "to",
                                          "count",
                                          "spacing",
                                          "l_max",
                                          "rel_tol",
                                          "geometry",
                                          "\"sphere-plate\"",
                                          "\"plate-plate\"",
                                          "layers",
                                          "nonlocal",
                                          "thickness",
                                          "file",
                                          "\"table\"",
                                          "\xc2\xb5m",
                                          "\xff",
                                          "\xe2\x80\xb2",
                                          "9223372036854775808",
                                          "99999",
                                          "true",
                                          "1979-05-27",
                                          "[\"gold-drude\", \"gold-plasma\"]",
                                          "[\"1 um\", \"-1 um\"]"};

std::vector<std::string> seeds() {
  std::vector<std::string> out;
  for (const auto& e : fs::directory_iterator(fs::path(ROUNDTRIP_SOURCE_DIR) / "cases")) {
    if (e.path().extension() != ".toml") continue;
    std::ifstream in(e.path(), std::ios::binary);
    std::ostringstream s;
    s << in.rdbuf();
    out.push_back(s.str());
  }
  std::sort(out.begin(), out.end());  // directory order is not fixed
  return out;
}

std::string mutate(std::string t, std::mt19937& rng) {
  const auto pick = [&](std::size_t n) {
    return n == 0 ? 0 : std::uniform_int_distribution<std::size_t>(0, n - 1)(rng);
  };
  const int rounds = 1 + static_cast<int>(pick(4));
  for (int r = 0; r < rounds; ++r) {
    const std::size_t at = pick(t.size() + 1);
    switch (pick(7)) {
      case 0:  // flip a byte
        if (!t.empty()) t[pick(t.size())] = static_cast<char>(pick(256));
        break;
      case 1:  // delete a run
        if (!t.empty()) t.erase(at, 1 + pick(20));
        break;
      case 2:  // insert a token
        t.insert(std::min(at, t.size()), kTokens[pick(kTokens.size())]);
        break;
      case 3: {  // replace the token under `at` (up to the next blank or quote)
        if (t.empty()) break;
        const std::size_t a = std::min(at, t.size() - 1);
        std::size_t b = t.find_first_of(" \n\"=", a + 1);
        if (b == std::string::npos) b = t.size();
        t.replace(a, b - a, kTokens[pick(kTokens.size())]);
        break;
      }
      case 4: {  // duplicate a line elsewhere
        const std::size_t s = t.rfind('\n', at == 0 ? 0 : at - 1);
        const std::size_t a = s == std::string::npos ? 0 : s + 1;
        const std::size_t e = t.find('\n', a);
        const std::string line =
            t.substr(a, e == std::string::npos ? std::string::npos : e - a + 1);
        t.insert(pick(t.size() + 1), line);
        break;
      }
      case 5:  // truncate
        t.resize(at);
        break;
      default:  // swap two bytes
        if (t.size() > 1) std::swap(t[pick(t.size())], t[pick(t.size())]);
        break;
    }
  }
  return t;
}

// Structure-aware mutations: what a byte flip rarely produces. Deep nesting (dotted keys,
// headers, arrays, inline tables up to 50 000 levels), huge, tiny and subnormal numbers in unit
// strings, every unit and wrong ones, bytes that are not UTF-8 (overlong, surrogate, stray
// continuation, > U+10FFFF), control characters in strings, keys of up to 10^5 characters, a
// byte-order mark, CRLF line ends.
constexpr int kStructuredInputs = 6000;

std::string repeat(const std::string& s, std::size_t n) {
  std::string out;
  out.reserve(s.size() * n);
  for (std::size_t i = 0; i < n; ++i) out += s;
  return out;
}

std::string mutate_structure(std::string t, std::mt19937& rng) {
  const auto pick = [&](std::size_t n) {
    return n == 0 ? 0 : std::uniform_int_distribution<std::size_t>(0, n - 1)(rng);
  };
  static const std::vector<std::string> kNumbers = {"1e300",
                                                    "1e-300",
                                                    "9e307",
                                                    "4.9e-324",
                                                    "2.2e-308",
                                                    "-0",
                                                    "0.0",
                                                    "1e20",
                                                    "1e-10",
                                                    "1e-11",
                                                    "1",
                                                    "1.0000001",
                                                    "99999999999999999999",
                                                    "0x10",
                                                    "1_000",
                                                    ".5"};
  static const std::vector<std::string> kUnits = {
      "m",   "cm",    "mm",     "um",  "\u00b5m", "\u03bcm", "nm",  "pm",   "\u00c5",
      "K",   "mK",    "eV",     "meV", "Hz",      "kHz",     "MHz", "GHz",  "THz",
      "PHz", "rad/s", "parsec", "",    "NM",      "m/s",     "K K", " nm ", "nm\t"};
  static const std::vector<std::string> kBadBytes = {"\xc0\xaf",         "\xed\xa0\x80", "\x80",
                                                     "\xf5\x80\x80\x80", "\xe2\x82",     "\xff\xfe",
                                                     "\xf4\x90\x80\x80"};
  static const std::vector<std::string> kControls = {
      "\\u001b[31m", "\\u0000", "\\u007f", "\\u0085", "\\t", "\\r", "\\n", "\\u0007"};
  const std::size_t at = pick(t.size() + 1);
  const std::size_t depth = std::size_t{1} << pick(17);  // 1 ... 65536 levels
  switch (pick(9)) {
    case 0: {  // a deep key, header, array or inline table at the start of a line
      const std::size_t line = t.rfind('\n', at == 0 ? 0 : at - 1);
      const std::size_t p = line == std::string::npos ? 0 : line + 1;
      const std::string forms[] = {
          repeat("a.", depth) + "b = 1\n",
          "[" + repeat("a.", depth) + "b]\n",
          "x = " + repeat("[", depth) + repeat("]", depth) + "\n",
          "x = " + repeat("{a = ", depth) + "1" + repeat("}", depth) + "\n",
          "x = " + repeat("[{a.b = ", depth) + "1" + repeat("}]", depth),
          "[[" + repeat("a.", depth) + "b]]\n"};
      t.insert(p, forms[pick(6)]);
      break;
    }
    case 1:    // a number inside a quoted quantity replaced by a huge or tiny one
    case 2: {  // or its unit replaced
      const std::size_t q = t.find('"', at);
      if (q == std::string::npos) break;
      const std::size_t e = t.find('"', q + 1);
      if (e == std::string::npos) break;
      const std::string body = t.substr(q + 1, e - q - 1);
      const std::size_t space = body.find(' ');
      const std::string number = space == std::string::npos ? body : body.substr(0, space);
      const std::string unit = space == std::string::npos ? "" : body.substr(space + 1);
      const std::string nb = pick(2) == 0 ? kNumbers[pick(kNumbers.size())] + " " + unit
                                          : number + " " + kUnits[pick(kUnits.size())];
      t.replace(q + 1, e - q - 1, nb);
      break;
    }
    case 3:  // bytes that are not UTF-8
      t.insert(std::min(at, t.size()), kBadBytes[pick(kBadBytes.size())]);
      break;
    case 4: {  // a control character (as a TOML escape) inside a string
      const std::size_t q = t.find('"', at);
      if (q != std::string::npos) t.insert(q + 1, kControls[pick(kControls.size())]);
      break;
    }
    case 5: {  // a long key at the start of a line, bare or quoted
      const std::size_t line = t.rfind('\n', at == 0 ? 0 : at - 1);
      const std::size_t p = line == std::string::npos ? 0 : line + 1;
      const std::string key(1 + pick(100000), 'k');
      t.insert(p, (pick(2) ? key : "\"" + key + "\"") + " = \"1 nm\"\n");
      break;
    }
    case 6:  // a byte-order mark (at the start, or misplaced)
      t.insert(pick(4) == 0 ? std::min(at, t.size()) : 0, "\xEF\xBB\xBF");
      break;
    case 7: {  // CRLF line ends (all, or a stray CR)
      if (pick(2) == 0) {
        std::string c;
        for (char ch : t) c += ch == '\n' ? std::string("\r\n") : std::string(1, ch);
        t = c;
      } else {
        t.insert(std::min(at, t.size()), "\r");
      }
      break;
    }
    default:  // many values: a long array of gaps or scan values
      t.insert(std::min(at, t.size()),
               "\nvalues = [" + repeat("\"1 nm\", ", 1 + pick(20000)) + "\"2 nm\"]\n");
      break;
  }
  return t;
}

// Runs one input through everything a command does before computing; returns false (and adds a
// failure) on anything but success or a CaseError with a message that names the file.
bool survives(const std::string& text, const fs::path& where, int i, int& accepted, int& rejected) {
  try {
    const CaseSpec spec = parse_case(text, where);
    (void)case_key_fields(spec);
    for (const auto& p : scan_points(spec)) (void)build_geometry(p.spec);
    ++accepted;
  } catch (const CaseError& e) {
    ++rejected;
    const std::string m = e.what();
    if (m.rfind(where.string(), 0) != 0) {
      ADD_FAILURE() << "input " << i << ": the message does not start with the file: \""
                    << m.substr(0, 300) << "\"\n"
                    << text.substr(0, 2000);
      return false;
    }
  } catch (const std::exception& e) {
    ADD_FAILURE() << "input " << i << ": " << typeid(e).name() << ": " << e.what() << "\n"
                  << text.substr(0, 2000);
    return false;
  }
  return true;
}

TEST(CaseFuzz, SixThousandStructureAwareMutantsGiveOnlyCaseErrorsNamingTheFile) {
  const std::vector<std::string> base = seeds();
  ASSERT_GE(base.size(), 2u);
  const int inputs = env_or("ROUNDTRIP_FUZZ_STRUCTURED_INPUTS", kStructuredInputs);
  const auto seed = static_cast<std::uint32_t>(env_or("ROUNDTRIP_FUZZ_SEED", kSeed));
  std::mt19937 rng(seed);
  const fs::path where = fs::temp_directory_path() / "roundtrip_fuzz" / "case.toml";
  int accepted = 0, rejected = 0, bad = 0;
  for (int i = 0; i < inputs && bad <= 5; ++i) {
    std::string text = base[static_cast<std::size_t>(i) % base.size()];
    const int rounds = 1 + static_cast<int>(rng() % 3);
    for (int r = 0; r < rounds; ++r) text = mutate_structure(std::move(text), rng);
    if (!survives(text, where, i, accepted, rejected)) ++bad;
  }
  std::cout << fmt::format(
      "[ fuzz     ] {} structure-aware mutants (seed {}): {} accepted, {} rejected with a "
      "CaseError naming the file\n",
      accepted + rejected + bad, seed, accepted, rejected);
  EXPECT_EQ(accepted + rejected, inputs);
  EXPECT_GT(accepted, 0) << "mutations should leave some cases valid";
}

TEST(CaseFuzz, TwentyThousandMutantsOfTheShippedCasesGiveOnlyCaseErrorsWithMessages) {
  const std::vector<std::string> base = seeds();
  ASSERT_GE(base.size(), 2u);
  const int inputs = env_or("ROUNDTRIP_FUZZ_INPUTS", kInputs);
  const auto seed = static_cast<std::uint32_t>(env_or("ROUNDTRIP_FUZZ_SEED", kSeed));
  std::mt19937 rng(seed);
  const fs::path where = fs::temp_directory_path() / "roundtrip_fuzz" / "case.toml";
  int accepted = 0, rejected = 0, bad = 0;
  for (int i = 0; i < inputs; ++i) {
    const std::string text = mutate(base[static_cast<std::size_t>(i) % base.size()], rng);
    if (!survives(text, where, i, accepted, rejected)) ++bad;
    if (bad > 5) break;  // enough to act on
  }
  std::cout << fmt::format(
      "[ fuzz     ] {} mutants (seed {}): {} accepted, {} rejected with a "
      "CaseError\n",
      accepted + rejected + bad, seed, accepted, rejected);
  EXPECT_EQ(accepted + rejected, inputs);
  EXPECT_GT(accepted, 0) << "mutations should leave some cases valid";
}

}  // namespace
}  // namespace roundtrip::io
