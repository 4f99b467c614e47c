#include "io/units.h"

#include <fmt/format.h>

#include <array>
#include <charconv>
#include <cmath>
#include <sstream>
#include <utility>

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
      return fmt::format("unexpected text '{}' after a dimensionless number", unit);
    out = value;
    return {};
  }
  if (unit.empty())
    return fmt::format("missing unit; write it explicitly, e.g. \"{} {}\" (units: {})", number,
                       si_unit(dim), unit_list(dim));
  const UnitEntry* u = lookup(dim, unit);
  if (u == nullptr)
    return fmt::format("unknown {} unit '{}' (units: {})", to_string(dim), unit, unit_list(dim));
  out = value * u->scale / u->divisor;
  if (!std::isfinite(out)) return "value overflows after conversion to SI";
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

std::string value_text(const toml::node& node) {
  if (const auto* str = node.as_string()) return fmt::format("\"{}\"", str->get());
  if (const auto* f = node.as_floating_point()) return fmt::format("{}", f->get());
  std::ostringstream os;
  node.visit([&](const auto& v) { os << v; });
  std::string s = os.str();
  constexpr std::size_t kMaxShown = 60;  // keep messages on one line
  if (s.size() > kMaxShown) s = s.substr(0, kMaxShown) + "...";
  return s;
}

CaseError error_at(const toml::node& node, const std::string& field, const std::string& what) {
  const std::string where = location(node.source());
  return CaseError(fmt::format("{}{}{} = {}: {}", where, where.empty() ? "" : ": ", field,
                               value_text(node), what));
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
  if (!why.empty()) throw CaseError(fmt::format("{} = \"{}\": {}", field, text, why));
  return out;
}

}  // namespace roundtrip::io
