// [offsets] reader (offsets_spec.h).
#include "io/offsets_spec.h"

#include <fmt/format.h>

#include <cmath>
#include <cstdint>

#include "io/errors.h"
#include "io/units.h"

namespace roundtrip::io {
namespace {

constexpr std::int64_t kMaxOffsets = 10000;  // a typo guard, as the scan-point cap
constexpr double kMaxOffset = 1.0;           // m, as the gap range

CaseError table_error(const toml::table& t, const std::string& field, const std::string& what) {
  const std::string where = location(t.source());
  return CaseError(fmt::format("{}{}{}: {}", where, where.empty() ? "" : ": ", field, what));
}

double offset_value(const toml::node& n, const std::string& field) {
  const double b = parse_quantity(n, Dimension::kLength, field);
  if (!std::isfinite(b) || std::abs(b) > kMaxOffset)
    throw error_at(n, field, "an offset must be finite with |b| <= 1 m");
  return b;
}

}  // namespace

OffsetsSpec parse_offsets(const toml::table& t) {
  for (const auto& [k, v] : t)
    if (k != "values" && k != "from" && k != "to" && k != "count" && k != "spacing")
      throw error_at(v, "offsets." + std::string(k.str()),
                     "unknown key (use values = [...] or from, to, count)");
  OffsetsSpec out;
  const bool has_range =
      t.contains("from") || t.contains("to") || t.contains("count") || t.contains("spacing");
  if (const toml::node* values = t.get("values")) {
    if (has_range)
      throw error_at(*values, "offsets.values",
                     "give either values = [...] or from/to/count, not both");
    const auto* arr = values->as_array();
    if (arr == nullptr)
      throw error_at(*values, "offsets.values",
                     "expected an array of lengths, e.g. [\"0 nm\", \"100 nm\"]");
    if (arr->empty()) throw error_at(*values, "offsets.values", "needs at least one offset");
    if (arr->size() > static_cast<std::size_t>(kMaxOffsets))
      throw error_at(*values, "offsets.values", fmt::format("more than {} offsets", kMaxOffsets));
    for (std::size_t i = 0; i < arr->size(); ++i) {
      const std::string fi = fmt::format("offsets.values[{}]", i);
      out.values.push_back(offset_value((*arr)[i], fi));
      out.texts.push_back((*arr)[i].is_string() ? (*arr)[i].as_string()->get() : "");
      for (std::size_t j = 0; j < i; ++j)
        if (out.values[j] == out.values[i]) throw error_at((*arr)[i], fi, "listed twice");
    }
    return out;
  }
  if (!has_range)
    throw table_error(t, "offsets",
                      "give values = [\"0 nm\", ...] or from = \"...\", to = \"...\", count = N");
  for (const char* k : {"from", "to", "count"})
    if (!t.contains(k))
      throw table_error(t, fmt::format("offsets.{}", k),
                        "missing required key (a range needs from, to and count)");
  if (const toml::node* s = t.get("spacing")) {
    if (!s->is_string() || s->as_string()->get() != "linear")
      throw error_at(*s, "offsets.spacing", "only \"linear\" is accepted for offsets");
  }
  const double from = offset_value(*t.get("from"), "offsets.from");
  const double to = offset_value(*t.get("to"), "offsets.to");
  const toml::node& cn = *t.get("count");
  if (!cn.is_integer()) throw error_at(cn, "offsets.count", "expected an integer");
  const std::int64_t count = cn.as_integer()->get();
  if (count < 1 || count > kMaxOffsets)
    throw error_at(cn, "offsets.count", fmt::format("must be between 1 and {}", kMaxOffsets));
  if (count == 1 && from != to)
    throw error_at(cn, "offsets.count", "count = 1 needs from == to (or use values = [...])");
  if (count > 1 && !(from < to))
    throw error_at(*t.get("to"), "offsets.to", "must be larger than offsets.from");
  for (std::int64_t i = 0; i < count; ++i) {
    const double s = count == 1 ? 0.0 : static_cast<double>(i) / static_cast<double>(count - 1);
    out.values.push_back(i + 1 == count ? to : from + (to - from) * s);
    out.texts.push_back(fmt::format("{:.6g} nm", out.values.back() * 1e9));
  }
  return out;
}

}  // namespace roundtrip::io
