// Randomised mutation test of the case parser: the shipped cases, mutated byte- and token-wise
// with a fixed seed, never crash the parser, and every rejection is a CaseError with a message
// (no other exception type, no empty message). Accepted mutants also go through the scan
// expansion, the journal key and build_geometry, which must keep to the same rule.
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
    try {
      const CaseSpec spec = parse_case(text, where);
      (void)case_key_fields(spec);
      for (const auto& p : scan_points(spec)) (void)build_geometry(p.spec);
      ++accepted;
    } catch (const CaseError& e) {
      ++rejected;
      if (std::string(e.what()).size() < 10) {
        ++bad;
        ADD_FAILURE() << "input " << i << ": an empty-ish message \"" << e.what() << "\"\n" << text;
      }
    } catch (const std::exception& e) {
      ++bad;
      ADD_FAILURE() << "input " << i << ": " << typeid(e).name() << ": " << e.what() << "\n"
                    << text;
    }
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
