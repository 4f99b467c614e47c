#include "io/units.h"

#include <fmt/format.h>

#include <array>
#include <cctype>
#include <charconv>
#include <cmath>
#include <regex>
#include <sstream>
#include <utility>
#include <vector>

#include "solver/constants.h"

namespace roundtrip::io {
namespace {

// SI value of one unit = scale / divisor. Decimal submultiples divide by an exact power of ten,
// so "100 nm" gives the double nearest to 1e-7, the same as the literal 100e-9.
struct UnitEntry {
  std::string_view name;
  double scale;
  double divisor = 1.0;
};

// Length factors are exact definitions (SI brochure, 9th ed., 2019).
constexpr std::array kLengthUnits{
    UnitEntry{"m", 1.0},       UnitEntry{"cm", 1.0, 1e2},      UnitEntry{"mm", 1.0, 1e3},
    UnitEntry{"um", 1.0, 1e6}, UnitEntry{"\u00b5m", 1.0, 1e6}, UnitEntry{"\u03bcm", 1.0, 1e6},
    UnitEntry{"nm", 1.0, 1e9}, UnitEntry{"pm", 1.0, 1e12},     UnitEntry{"\u00c5", 1.0, 1e10},
};
constexpr std::array kTemperatureUnits{UnitEntry{"K", 1.0}, UnitEntry{"mK", 1.0, 1e3}};
// Hz are cycles per second: xi = 2 pi f. eV is a photon energy: xi = E / hbar.
constexpr std::array kFrequencyUnits{
    UnitEntry{"rad/s", 1.0},
    UnitEntry{"eV", kRadPerSecondPerEv},
    UnitEntry{"meV", kRadPerSecondPerEv, 1e3},
    UnitEntry{"Hz", 2.0 * kPi},
    UnitEntry{"kHz", 2.0 * kPi * 1e3},
    UnitEntry{"MHz", 2.0 * kPi * 1e6},
    UnitEntry{"GHz", 2.0 * kPi * 1e9},
    UnitEntry{"THz", 2.0 * kPi * 1e12},
    UnitEntry{"PHz", 2.0 * kPi * 1e15},
};

constexpr double kMaxFrequency = 1e20;  // rad/s, see parse_text

std::string_view trim(std::string_view s) {
  const auto is_space = [](char c) { return c == ' ' || c == '\t' || c == '\n' || c == '\r'; };
  while (!s.empty() && is_space(s.front())) s.remove_prefix(1);
  while (!s.empty() && is_space(s.back())) s.remove_suffix(1);
  return s;
}

std::string unit_list(Dimension dim) {
  switch (dim) {
    case Dimension::kLength:
      return "m, cm, mm, um, \u00b5m, nm, pm, \u00c5";
    case Dimension::kTemperature:
      return "K, mK";
    case Dimension::kFrequency:
      return "rad/s, eV, meV, Hz, kHz, MHz, GHz, THz, PHz";
    case Dimension::kDimensionless:
      return "none";
  }
  return "";
}

template <std::size_t N>
const UnitEntry* find_unit(const std::array<UnitEntry, N>& units, std::string_view name) {
  for (const auto& u : units)
    if (u.name == name) return &u;
  return nullptr;
}

const UnitEntry* lookup(Dimension dim, std::string_view name) {
  switch (dim) {
    case Dimension::kLength:
      return find_unit(kLengthUnits, name);
    case Dimension::kTemperature:
      return find_unit(kTemperatureUnits, name);
    case Dimension::kFrequency:
      return find_unit(kFrequencyUnits, name);
    case Dimension::kDimensionless:
      return nullptr;
  }
  return nullptr;
}

// Parses "<number><spaces><unit>". On failure returns an explanation; on success an empty one.
std::string parse_text(std::string_view raw, Dimension dim, double& out) {
  const std::string_view text = trim(raw);
  if (text.empty()) return "empty value; expected a number with a unit";
  const char* begin = text.data();
  const char* end = text.data() + text.size();
  if (*begin == '+') ++begin;  // from_chars does not take a leading '+'
  double value = 0.0;
  const auto [ptr, ec] = std::from_chars(begin, end, value);
  if (ec == std::errc::result_out_of_range) return "number out of the range of a double";
  if (ec != std::errc() || ptr == begin) return "does not start with a number";
  const std::string_view number(begin, static_cast<std::size_t>(ptr - begin));
  // from_chars accepts "nan" and "inf" spelled out; reject them and any non-finite value.
  if (!std::isfinite(value)) return "not a finite number";
  if (number.find_first_of("0123456789") == std::string_view::npos)
    return "does not start with a number";
  const std::string_view unit = trim(std::string_view(ptr, static_cast<std::size_t>(end - ptr)));
  if (dim == Dimension::kDimensionless) {
    if (!unit.empty())
      return fmt::format("unexpected text '{}' after a dimensionless number", printable(unit));
    out = value;
    return {};
  }
  if (unit.empty())
    return fmt::format("missing unit; write it explicitly, e.g. \"{} {}\" (units: {})", number,
                       si_unit(dim), unit_list(dim));
  const UnitEntry* u = lookup(dim, unit);
  if (u == nullptr)
    return fmt::format("unknown {} unit '{}' (units: {})", to_string(dim), printable(unit),
                       unit_list(dim));
  out = value * u->scale / u->divisor;
  if (!std::isfinite(out)) return "value overflows after conversion to SI";
  // Frequencies of material models: above 1e20 rad/s (a 66 keV photon) matter is transparent,
  // eps = 1 to within 1e-6, and no model parameter lies there; larger values are typing mistakes
  // whose squares (plasma frequencies enter as omega_p^2) leave the range of a double.
  if (dim == Dimension::kFrequency && std::abs(out) > kMaxFrequency)
    return fmt::format(
        "a frequency must be at most {:g} rad/s (66 keV; matter is transparent beyond)",
        kMaxFrequency);
  return {};
}

}  // namespace

std::string to_string(Dimension d) {
  switch (d) {
    case Dimension::kLength:
      return "length";
    case Dimension::kTemperature:
      return "temperature";
    case Dimension::kFrequency:
      return "frequency";
    case Dimension::kDimensionless:
      return "dimensionless";
  }
  return "?";
}

std::string si_unit(Dimension d) {
  switch (d) {
    case Dimension::kLength:
      return "m";
    case Dimension::kTemperature:
      return "K";
    case Dimension::kFrequency:
      return "rad/s";
    case Dimension::kDimensionless:
      return "1";
  }
  return "?";
}

std::string location(const toml::source_region& where) {
  const bool has_line = where.begin.line > 0;
  if (where.path && !where.path->empty())
    return has_line ? fmt::format("{}:{}", *where.path, where.begin.line) : *where.path;
  return has_line ? fmt::format("line {}", where.begin.line) : std::string();
}

std::string printable(std::string_view s) {
  std::string out;
  out.reserve(s.size());
  std::size_t i = 0;
  while (i < s.size()) {
    const auto c = static_cast<unsigned char>(s[i]);
    if (c < 0x80) {
      if (c < 0x20 && c != '\t')
        out += fmt::format("\\u{:04X}", c);
      else if (c == 0x7F)
        out += "\\u007F";
      else
        out += static_cast<char>(c);
      ++i;
      continue;
    }
    // A multi-byte UTF-8 sequence: copy it if well formed, else show its first byte as \xNN.
    const std::size_t n = c >= 0xF0 ? 4 : c >= 0xE0 ? 3 : c >= 0xC0 ? 2 : 0;
    bool ok = n >= 2 && i + n <= s.size() && c <= 0xF4 && c >= 0xC2;
    for (std::size_t k = 1; ok && k < n; ++k)
      ok = (static_cast<unsigned char>(s[i + k]) & 0xC0) == 0x80;
    // C1 controls U+0080..U+009F are C2 80..C2 9F.
    if (ok && n == 2 && c == 0xC2 && static_cast<unsigned char>(s[i + 1]) < 0xA0) {
      out += fmt::format("\\u{:04X}", static_cast<unsigned char>(s[i + 1]));
      i += 2;
      continue;
    }
    if (!ok) {
      out += fmt::format("\\x{:02X}", c);
      ++i;
      continue;
    }
    out.append(s.substr(i, n));
    i += n;
  }
  return out;
}

std::string value_text(const toml::node& node) {
  if (const auto* str = node.as_string()) {
    std::string v = printable(str->get());
    constexpr std::size_t kMaxString = 200;  // a megabyte string must not flood the terminal
    if (v.size() > kMaxString) v = v.substr(0, kMaxString) + "...";
    return fmt::format("\"{}\"", v);
  }
  if (const auto* f = node.as_floating_point()) return fmt::format("{}", f->get());
  std::ostringstream os;
  node.visit([&](const auto& v) { os << v; });
  std::string s = printable(os.str());
  constexpr std::size_t kMaxShown = 60;  // keep messages on one line
  if (s.size() > kMaxShown) s = s.substr(0, kMaxShown) + "...";
  return s;
}

CaseError error_at(const toml::node& node, const std::string& field, const std::string& what) {
  const std::string where = location(node.source());
  return CaseError(fmt::format("{}{}{} = {}: {}", where, where.empty() ? "" : ": ",
                               printable(field), value_text(node), what));
}

double parse_quantity(const toml::node& node, Dimension dim, const std::string& field) {
  double out = 0.0;
  if (const auto* s = node.as_string()) {
    const std::string why = parse_text(s->get(), dim, out);
    if (!why.empty()) throw error_at(node, field, why);
    return out;
  }
  if (node.is_number()) {
    const double v = node.is_integer() ? static_cast<double>(node.as_integer()->get())
                                       : node.as_floating_point()->get();
    if (dim != Dimension::kDimensionless)
      throw error_at(node, field,
                     fmt::format("a bare number has no unit; write it as a string with a {} "
                                 "unit, e.g. \"{} {}\" (units: {})",
                                 to_string(dim), v, si_unit(dim), unit_list(dim)));
    if (!std::isfinite(v)) throw error_at(node, field, "not a finite number");
    return v;
  }
  throw error_at(node, field,
                 dim == Dimension::kDimensionless
                     ? std::string("expected a number")
                     : fmt::format("expected a string with a {} unit, e.g. \"1 {}\"",
                                   to_string(dim), si_unit(dim)));
}

double parse_quantity_string(std::string_view text, Dimension dim, const std::string& field) {
  double out = 0.0;
  const std::string why = parse_text(text, dim, out);
  if (!why.empty())
    throw CaseError(fmt::format("{} = \"{}\": {}", printable(field), printable(text), why));
  return out;
}

namespace {
// Every string of a TOML node tree that parses as a length: (metres, unit as written).
void written_lengths(const toml::node& n, std::vector<std::pair<double, std::string>>& out) {
  if (const auto* t = n.as_table()) {
    for (const auto& [k, v] : *t) written_lengths(v, out);
  } else if (const auto* a = n.as_array()) {
    for (const auto& v : *a) written_lengths(v, out);
  } else if (const auto s = n.value<std::string>()) {
    double metres = 0.0;
    if (!parse_text(*s, Dimension::kLength, metres).empty() || !(metres > 0.0)) return;
    // The unit is what follows the number ("10 um" -> "um", "1.5e3nm" -> "nm").
    std::size_t at = s->find_first_not_of(" \t");
    at = s->find_first_not_of("+-0123456789.eE", at);
    if (at == std::string::npos) return;
    std::string unit = s->substr(at);
    unit.erase(0, unit.find_first_not_of(' '));
    double factor = 0.0;
    if (unit.empty() || !parse_text("1 " + unit, Dimension::kLength, factor).empty()) return;
    out.emplace_back(metres, unit);
  }
}
}  // namespace

std::string lengths_in_case_units(const std::string& text, const std::string& case_text) {
  std::vector<std::pair<double, std::string>> written;
  try {
    written_lengths(toml::parse(case_text), written);
  } catch (const std::exception&) {
    // Not TOML (never for a parsed case): fall back to units by size.
  }
  // "<number> m" not followed by a letter, digit, '/', '^' (nor, checked below, a non-ASCII
  // suffix such as "m²").
  static const std::regex re(R"((-?[0-9]+(?:\.[0-9]*)?(?:[eE][-+]?[0-9]+)?) m(?![A-Za-z0-9/^]))");
  constexpr double kSame = 1e-5;  // descriptions print 6 significant digits
  std::string out;
  auto last = text.cbegin();
  for (std::sregex_iterator it(text.begin(), text.end(), re), end; it != end; ++it) {
    const auto& m = *it;
    // A digit or letter right before the number: part of a longer token (e.g. "x2 m").
    if (m.position(0) > 0) {
      const char before = text[m.position(0) - 1];
      if (std::isalnum(static_cast<unsigned char>(before)) || before == '.' || before == '_')
        continue;
    }
    if (m[0].second != text.cend() && static_cast<unsigned char>(*m[0].second) >= 0x80) continue;
    const double v = std::stod(m[1].str());
    std::string unit = "m";
    double factor = 1.0;
    bool found = false;
    for (const auto& [metres, u] : written)
      if (std::abs(v - metres) <= kSame * metres) {
        unit = u;
        parse_text("1 " + u, Dimension::kLength, factor);
        found = true;
        break;
      }
    if (!found && v != 0.0 && std::abs(v) < 1.0) {
      const double a = std::abs(v);
      unit = a < 1e-6 ? "nm" : a < 1e-3 ? "um" : "mm";
      factor = a < 1e-6 ? 1e-9 : a < 1e-3 ? 1e-6 : 1e-3;
    }
    out.append(last, m[0].first);
    out += fmt::format("{:.6g} {}", v / factor, unit);
    last = m[0].second;
  }
  out.append(last, text.cend());
  return out;
}

}  // namespace roundtrip::io
