#include "io/output_units.h"

#include <fmt/format.h>

#include <cmath>
#include <utility>

#include "io/errors.h"
#include "io/units.h"
#include "solver/constants.h"

namespace roundtrip::io {
namespace {

struct Base {
  const char* name;
  double factor;
  Dimension3 dim;
};
// SI base and derived units (SI brochure 2019); eV is the exact 2019 value of e times 1 V.
constexpr Base kBases[] = {{"Pa", 1.0, {1, -1, -2}},
                           {"eV", kElementaryCharge, {1, 2, -2}},
                           {"N", 1.0, {1, 1, -2}},
                           {"J", 1.0, {1, 2, -2}},
                           {"m", 1.0, {0, 1, 0}}};

// SI prefixes (SI brochure 2019); "u" stands for micro, as in case files.
bool prefix_factor(std::string_view p, bool length_only_cm, double& f) {
  static const std::pair<const char*, double> kPrefixes[] = {
      {"", 1.0},   {"k", 1e3},   {"m", 1e-3},  {"u", 1e-6},  {"\u00b5", 1e-6}, {"\u03bc", 1e-6},
      {"n", 1e-9}, {"p", 1e-12}, {"f", 1e-15}, {"a", 1e-18}, {"z", 1e-21}};
  for (const auto& [name, factor] : kPrefixes)
    if (p == name) {
      f = factor;
      return true;
    }
  if (length_only_cm && p == "c") {
    f = 1e-2;
    return true;
  }
  return false;
}

// "pN" -> 1e-12 N; "kBT" handled by the caller.
bool simple_unit(std::string_view s, double& factor, Dimension3& dim) {
  for (const auto& b : kBases) {
    const std::string_view name(b.name);
    if (s.size() < name.size() || s.substr(s.size() - name.size()) != name) continue;
    double p = 1.0;
    if (!prefix_factor(s.substr(0, s.size() - name.size()), name == "m", p)) continue;
    factor = p * b.factor;
    dim = b.dim;
    return true;
  }
  return false;
}

std::string_view trim(std::string_view s) {
  while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
  while (!s.empty() && (s.back() == ' ' || s.back() == '\t')) s.remove_suffix(1);
  return s;
}

// Parse "num[/den]"; false if not a unit.
bool parse(std::string_view text, double temperature_K, double& factor, Dimension3& dim,
           std::string& why) {
  text = trim(text);
  const auto slash = text.find('/');
  const std::string_view num = trim(text.substr(0, slash));
  if (num == "kBT" || num == "k_BT") {
    if (!(temperature_K > 0.0)) {
      why = "k_B T needs a temperature > 0 (this run is at T = 0)";
      return false;
    }
    factor = kBoltzmann * temperature_K;  // J
    dim = {1, 2, -2};
  } else if (num == "1") {
    factor = 1.0;
    dim = {};
  } else if (!simple_unit(num, factor, dim)) {
    return false;
  }
  if (slash == std::string_view::npos) return true;
  std::string_view den = trim(text.substr(slash + 1));
  int power = 1;
  for (const auto& [suffix, p] : {std::pair<std::string_view, int>{"^2", 2},
                                  {"^3", 3},
                                  {"\u00b2", 2},
                                  {"\u00b3", 3},
                                  {"^4", 4}}) {
    if (den.size() > suffix.size() && den.substr(den.size() - suffix.size()) == suffix) {
      den.remove_suffix(suffix.size());
      power = p;
      break;
    }
  }
  double f = 1.0;
  Dimension3 d;
  if (!simple_unit(den, f, d) || !(d == Dimension3{0, 1, 0})) return false;
  factor /= std::pow(f, power);
  dim.length -= power;
  return true;
}

}  // namespace

OutputUnit parse_output_unit(std::string_view text, const std::string& field,
                             double temperature_K) {
  OutputUnit u;
  std::string why;
  if (!parse(text, temperature_K, u.factor, u.dim, why))
    throw CaseError(fmt::format(
        "{} = \"{}\": {}", field, printable(text),
        why.empty() ? "not a unit this program knows (e.g. pN, nN, uN/m, pN/nm, mPa, Pa/m, zJ, "
                      "eV, nJ/m^2, kBT, nm, um; prefixes k m u µ n p f a z)"
                    : why));
  u.name = std::string(trim(text));
  return u;
}

bool dimension_of_si(std::string_view si_units, Dimension3& dim) {
  double factor = 1.0;
  std::string why;
  return parse(si_units, 0.0, factor, dim, why) && factor == 1.0;
}

std::string dimension_text(const Dimension3& d) {
  const std::pair<Dimension3, const char*> kNamed[] = {
      {{1, 1, -2}, "force"},
      {{1, 2, -2}, "energy"},
      {{1, -1, -2}, "pressure"},
      {{1, 0, -2}, "force gradient, force per length or energy per area"},
      {{0, 1, 0}, "length"},
      {{1, -2, -2}, "pressure gradient"},
      {{0, 0, 0}, "ratio"}};
  std::string name = "unnamed";
  for (const auto& [dim, n] : kNamed)
    if (dim == d) {
      name = n;
      break;
    }
  return fmt::format("{} (kg^{} m^{} s^{})", name, d.mass, d.length, d.time);
}

std::vector<OutputUnit> parse_unit_list(std::string_view text, const std::string& field,
                                        double temperature_K) {
  std::vector<OutputUnit> out;
  std::size_t start = 0;
  while (true) {
    const auto comma = text.find(',', start);
    const std::string_view item = trim(text.substr(start, comma - start));
    if (item.empty())
      throw CaseError(
          fmt::format("{} = \"{}\": an empty unit in the list (write e.g. \"pN, "
                      "pN/nm\")",
                      field, printable(text)));
    OutputUnit u = parse_output_unit(item, field, temperature_K);
    for (const auto& v : out)
      if (v.dim == u.dim)
        throw CaseError(
            fmt::format("{} = \"{}\": \"{}\" and \"{}\" are both units of {}; give one "
                        "unit per kind of column",
                        field, printable(text), v.name, u.name, dimension_text(u.dim)));
    out.push_back(std::move(u));
    if (comma == std::string_view::npos) break;
    start = comma + 1;
  }
  return out;
}

const OutputUnit* unit_for(const std::vector<OutputUnit>& list, std::string_view si_units,
                           const std::string& field) {
  Dimension3 d;
  if (!dimension_of_si(si_units, d))
    throw CaseError(
        fmt::format("{}: internal: \"{}\" is not an SI unit string", field, printable(si_units)));
  for (const auto& u : list)
    if (u.dim == d) return &u;
  return nullptr;
}

}  // namespace roundtrip::io
