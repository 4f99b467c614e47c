#include "io/case_file.h"

#include <fmt/format.h>
#include <fmt/ranges.h>
#include <toml++/toml.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <optional>
#include <set>
#include <sstream>

#include "io/atom_spec.h"
#include "io/errors.h"
#include "io/grating_spec.h"
#include "io/material_spec.h"
#include "io/offsets_spec.h"
#include "io/sheet_spec.h"
#include "io/units.h"
#include "solver/materials/library.h"
#include "solver/scatterers/cylinder_body.h"

namespace roundtrip::io {
namespace {

using geometry::Shape;

constexpr int kMaxGaps = 100000;               // a typo guard: more gaps than any sweep needs
constexpr double kMaxRelTol = 0.1;             // beyond 10 % the numbers are not worth printing
constexpr double kMinRelTol = 1e-14;           // below this, round-off of the sums dominates
constexpr int kMaxLMax = 100000;               // a typo guard for the multipole cut-off
constexpr std::size_t kMaxScanPoints = 10000;  // a typo guard: more runs than any scan needs
// A case file is a page of TOML (the largest shipped one is a few kB; a scan of 10^4 values is
// ~200 kB): 16 MiB is far above any real case and far below memory trouble.
constexpr std::size_t kMaxCaseBytes = std::size_t{16} << 20;
// Levels of nesting (dotted-key segments, tables, arrays, inline tables): a case needs about 4
// (materials.NAME.oscillators[i].strength); 64 leaves room and keeps every recursive walk short.
constexpr std::size_t kMaxNesting = 64;

std::string join(const std::vector<std::string>& v) {
  return fmt::format("{}", fmt::join(v, ", "));
}

std::string quoted_list(const std::vector<std::string>& v) {
  std::vector<std::string> q;
  for (const auto& s : v) q.push_back("\"" + s + "\"");
  return join(q);
}

std::string dotted(const std::string& prefix, std::string_view key) {
  return prefix.empty() ? std::string(key) : prefix + "." + std::string(key);
}

// A table-level error (missing key): "<file>:<line>: <field>: <what>".
CaseError table_error(const toml::table& t, const std::string& field, const std::string& what) {
  const std::string where = location(t.source());
  return CaseError(fmt::format("{}{}{}: {}", where, where.empty() ? "" : ": ", field, what));
}

// A whole-file error (missing top-level table): "<file>: <field>: <what>", no line to point at.
CaseError root_error(const toml::table& root, const std::string& field, const std::string& what) {
  const auto& path = root.source().path;
  const std::string file = path ? *path : std::string();
  return CaseError(fmt::format("{}{}{}: {}", file, file.empty() ? "" : ": ", field, what));
}

void check_keys(const toml::table& t, const std::string& prefix,
                const std::vector<std::string>& allowed) {
  for (const auto& [key, node] : t) {
    if (std::find(allowed.begin(), allowed.end(), key.str()) == allowed.end())
      throw error_at(node, dotted(prefix, key.str()),
                     fmt::format("unknown key{} (allowed here: {})",
                                 prefix.empty() ? "" : " in [" + prefix + "]", join(allowed)));
  }
}

const toml::table* optional_table(const toml::table& parent, std::string_view key,
                                  const std::string& field) {
  const toml::node* n = parent.get(key);
  if (n == nullptr) return nullptr;
  if (const auto* t = n->as_table()) return t;
  throw error_at(*n, field, "expected a table, e.g. [" + field + "]");
}

const toml::table& required_table(const toml::table& root, const toml::table& parent,
                                  std::string_view key, const std::string& field,
                                  const std::string& why) {
  if (const auto* t = optional_table(parent, key, field)) return *t;
  throw root_error(root, field, fmt::format("missing table [{}] ({})", field, why));
}

std::optional<std::string> optional_string(const toml::table& t, std::string_view key,
                                           const std::string& field) {
  const toml::node* n = t.get(key);
  if (n == nullptr) return std::nullopt;
  if (const auto* s = n->as_string()) return s->get();
  throw error_at(*n, field, "expected a string in double quotes");
}

std::string required_string(const toml::table& t, std::string_view key, const std::string& field,
                            const std::string& example) {
  if (auto s = optional_string(t, key, field)) return *s;
  throw table_error(t, field, "missing required key (e.g. " + example + ")");
}

std::optional<std::int64_t> optional_integer(const toml::table& t, std::string_view key,
                                             const std::string& field) {
  const toml::node* n = t.get(key);
  if (n == nullptr) return std::nullopt;
  if (const auto* i = n->as_integer()) return i->get();
  throw error_at(*n, field, "expected an integer");
}

double positive_length(const toml::node& n, const std::string& field,
                       std::string (*problem)(double)) {
  const double v = parse_quantity(n, Dimension::kLength, field);
  if (const std::string p = problem(v); !p.empty()) throw error_at(n, field, p);
  return v;
}

// Collect every `material = "NAME"` below a plate table (substrate, layers,
// ...).
void collect_material_names(const toml::node& n, std::vector<std::string>& out) {
  if (const auto* t = n.as_table()) {
    for (const auto& [k, v] : *t) {
      if (k.str() == "material" && v.is_string())
        out.push_back(v.as_string()->get());
      else
        collect_material_names(v, out);
    }
  } else if (const auto* a = n.as_array()) {
    for (const auto& v : *a) collect_material_names(v, out);
  }
}

class MaterialList {
 public:
  void add(const MaterialPtr& m) {
    if (m && std::find(list_.begin(), list_.end(), m) == list_.end()) list_.push_back(m);
  }
  std::vector<MaterialPtr> take() { return std::move(list_); }

 private:
  std::vector<MaterialPtr> list_;
};

std::vector<double> parse_separations(const toml::table& root, const toml::table& s) {
  check_keys(s, "separations", {"values", "from", "to", "count", "spacing"});
  const toml::node* values = s.get("values");
  const bool has_range =
      s.contains("from") || s.contains("to") || s.contains("count") || s.contains("spacing");
  std::vector<double> gaps;
  if (values != nullptr) {
    if (has_range)
      throw error_at(*values, "separations.values",
                     "give either values = [...] or from/to/count, not both");
    const auto* arr = values->as_array();
    if (arr == nullptr)
      throw error_at(*values, "separations.values",
                     "expected an array of lengths, e.g. [\"100 nm\", \"200 nm\"]");
    if (arr->empty()) throw error_at(*values, "separations.values", "needs at least one gap");
    if (arr->size() > static_cast<std::size_t>(kMaxGaps))
      throw error_at(*values, "separations.values", fmt::format("more than {} gaps", kMaxGaps));
    for (std::size_t i = 0; i < arr->size(); ++i)
      gaps.push_back(positive_length((*arr)[i], fmt::format("separations.values[{}]", i),
                                     geometry::gap_problem));
    return gaps;
  }
  if (!has_range)
    throw table_error(s, "separations",
                      "give values = [\"100 nm\", ...] or from = \"...\", to = "
                      "\"...\", count = N");
  for (const char* k : {"from", "to", "count"})
    if (!s.contains(k))
      throw table_error(s, dotted("separations", k),
                        "missing required key (a range needs from, to and count)");
  const double from = positive_length(*s.get("from"), "separations.from", geometry::gap_problem);
  const double to = positive_length(*s.get("to"), "separations.to", geometry::gap_problem);
  const std::int64_t count = *optional_integer(s, "count", "separations.count");
  if (count < 1 || count > kMaxGaps)
    throw error_at(*s.get("count"), "separations.count",
                   fmt::format("must be between 1 and {}", kMaxGaps));
  if (count == 1 && from != to)
    throw error_at(*s.get("count"), "separations.count",
                   "count = 1 needs from == to (or use values = [...])");
  if (count > 1 && !(from < to))
    throw error_at(*s.get("to"), "separations.to", "must be larger than separations.from");
  const std::string spacing =
      optional_string(s, "spacing", "separations.spacing").value_or("linear");
  if (spacing != "linear" && spacing != "log")
    throw error_at(*s.get("spacing"), "separations.spacing", "expected \"linear\" or \"log\"");
  for (std::int64_t i = 0; i < count; ++i) {
    const double t = count == 1 ? 0.0 : static_cast<double>(i) / static_cast<double>(count - 1);
    gaps.push_back(spacing == "log" ? from * std::pow(to / from, t) : from + (to - from) * t);
  }
  gaps.back() = to;  // exact end point despite rounding
  (void)root;
  return gaps;
}

Quantities parse_quantities(const toml::table& c) {
  check_keys(c, "compute", {"quantities"});
  Quantities q;
  const toml::node* n = c.get("quantities");
  if (n == nullptr) return q;  // energy and force
  const auto* arr = n->as_array();
  if (arr == nullptr || arr->empty())
    throw error_at(*n, "compute.quantities",
                   "expected a non-empty array such as [\"energy\", \"force\", "
                   "\"gradient\"]");
  q = Quantities{false, false, false};
  std::set<std::string> seen;
  for (std::size_t i = 0; i < arr->size(); ++i) {
    const toml::node& e = (*arr)[i];
    const std::string field = fmt::format("compute.quantities[{}]", i);
    const auto* s = e.as_string();
    if (s == nullptr) throw error_at(e, field, "expected \"energy\", \"force\" or \"gradient\"");
    const std::string v = s->get();
    if (!seen.insert(v).second) throw error_at(e, field, "listed twice");
    if (v == "energy")
      q.energy = true;
    else if (v == "force")
      q.force = true;
    else if (v == "gradient")
      q.gradient = true;
    else
      throw error_at(e, field, "unknown quantity (use \"energy\", \"force\" or \"gradient\")");
  }
  return q;
}

}  // namespace

std::vector<std::string> field_names() { return {"electromagnetic", "dirichlet", "neumann"}; }

geometry::Configuration CaseSpec::configuration() const {
  geometry::Configuration c;
  c.kind = kind ? kind->name : std::string();
  c.gaps = gaps;
  if (bodies.size() == 2) {
    c.lower = bodies[0].geometry();
    c.upper = bodies[1].geometry();
  }
  return c;
}

const BodySpec& CaseSpec::body(std::string_view table) const {
  for (const auto& b : bodies)
    if (b.table == table) return b;
  throw std::out_of_range(fmt::format("no body [{}] in this case", table));
}

std::vector<std::pair<std::string, double>> CaseSpec::body_lengths() const {
  std::vector<std::pair<std::string, double>> out;
  for (const auto& b : bodies)
    if (b.shape != Shape::kPlate && b.shape != Shape::kAtom)  // an atom has no size
      out.emplace_back(b.table + "_radius_m", b.radius);
  if (kind && kind->offsets && offsets.size() == 1) out.emplace_back("offset_m", offsets.front());
  return out;
}

geometry::Body BodySpec::geometry() const {
  geometry::Body b;
  b.name = table;
  b.shape = shape;
  b.radius = radius;
  for (const auto& s : shells) b.shell_thicknesses.push_back(s.thickness);
  b.period = grating.period;
  b.filling = grating.filling;
  b.depth = grating.depth;
  return b;
}

std::vector<SphereShell> BodySpec::solver_shells() const {
  std::vector<SphereShell> out;
  for (const auto& s : shells) out.push_back({s.material, s.thickness});
  return out;
}

MaterialPtr BodySpec::cylinder_material() const {
  if (!material || shells.empty()) return material;
  std::vector<CylinderShell> out;
  for (const auto& s : shells) out.push_back({s.material, s.thickness});
  return make_coated_cylinder(material, std::move(out));
}

std::string BodySpec::describe() const {
  std::string d;
  if (shape == Shape::kPlate) {
    d = plate ? plate->describe() : std::string("none (scalar field)");
  } else if (shape == Shape::kAtom) {
    d = atom ? atom->name() + ": " + atom->description() : std::string("none");
  } else if (shape == Shape::kGrating) {
    d = grating.describe();
  } else {
    d = fmt::format("radius {:.6g} um", radius * 1e6);
    if (material) d += ", " + material->name();
    for (std::size_t i = 0; i < shells.size(); ++i)
      d += fmt::format("{} {:.6g} nm {}", i == 0 ? "; shells (outermost first):" : ",",
                       shells[i].thickness * 1e9, shells[i].material->name());
  }
  if (!defaulted_from.empty()) d += " (same as [" + defaulted_from + "])";
  return d;
}

namespace {

// "file:line:column" of a byte offset, for checks made on the raw text.
std::string text_location(std::string_view text, std::size_t offset, const std::string& name) {
  std::size_t line = 1, column = 1;
  for (std::size_t i = 0; i < offset && i < text.size(); ++i) {
    if (text[i] == '\n') {
      ++line;
      column = 1;
    } else if ((static_cast<unsigned char>(text[i]) & 0xC0) != 0x80) {
      ++column;
    }
  }
  return fmt::format("{}:{}:{}", name, line, column);
}

// Offset of the first byte that is not well-formed UTF-8 (Unicode 15, table 3-7: no overlong
// forms, no surrogates, nothing above U+10FFFF), or npos.
std::size_t invalid_utf8_at(std::string_view s) {
  std::size_t i = 0;
  while (i < s.size()) {
    const auto c = static_cast<unsigned char>(s[i]);
    if (c < 0x80) {
      ++i;
      continue;
    }
    std::size_t n = 0;
    unsigned char lo = 0x80, hi = 0xBF;  // range of the second byte
    if (c >= 0xC2 && c <= 0xDF) {
      n = 2;
    } else if (c >= 0xE0 && c <= 0xEF) {
      n = 3;
      if (c == 0xE0) lo = 0xA0;
      if (c == 0xED) hi = 0x9F;
    } else if (c >= 0xF0 && c <= 0xF4) {
      n = 4;
      if (c == 0xF0) lo = 0x90;
      if (c == 0xF4) hi = 0x8F;
    } else {
      return i;
    }
    if (i + n > s.size()) return i;
    const auto b1 = static_cast<unsigned char>(s[i + 1]);
    if (b1 < lo || b1 > hi) return i;
    for (std::size_t k = 2; k < n; ++k)
      if ((static_cast<unsigned char>(s[i + k]) & 0xC0) != 0x80) return i;
    i += n;
  }
  return std::string_view::npos;
}

// Offset where the nesting of the TOML text first exceeds `max_depth`, or npos. Counted on the
// raw text, before toml++ sees it (its parser and the tables' destructors recurse once per
// level, so 50 000 dotted levels overflow the stack). A level is a segment of a [header] or of a
// dotted key, an array bracket or an inline-table brace, summed along the path from the root;
// strings and comments are skipped. Malformed text is left to the parser: this only bounds the
// depth it will see.
std::size_t too_deep_at(std::string_view t, std::size_t max_depth) {
  struct Open {
    char kind;            // '[' array or '{' inline table
    std::size_t outside;  // key segments outside it
  };
  std::vector<Open> open;
  std::size_t table = 0;    // segments of the current [header]
  std::size_t outside = 0;  // key segments of the keys that lead into the open containers
  std::size_t key = 0;      // segments of the key being read
  bool in_key = true;       // reading a key (else a value)
  bool line_start = true;   // nothing but blanks since the last newline (outside containers)
  bool header = false;      // inside [ ... ] or [[ ... ]] of a table header
  std::size_t header_segments = 0;
  const auto depth = [&] { return table + outside + key + open.size(); };
  const std::size_t start = t.starts_with("\xEF\xBB\xBF") ? 3 : 0;  // a byte-order mark
  for (std::size_t i = start; i < t.size(); ++i) {
    const char c = t[i];
    if (c == '\n') {
      if (open.empty()) {
        in_key = true, line_start = true, header = false, key = 0, outside = 0;
      }
      continue;
    }
    if (c == ' ' || c == '\t' || c == '\r') continue;
    if (c == '#') {  // comment to the end of the line
      while (i + 1 < t.size() && t[i + 1] != '\n') ++i;
      continue;
    }
    if (c == '"' || c == '\'') {  // a string (key or value): skip it
      const bool triple = t.substr(i, 3) == std::string_view(c == '"' ? "\"\"\"" : "'''");
      std::size_t j = i + (triple ? 3 : 1);
      for (; j < t.size(); ++j) {
        if (c == '"' && t[j] == '\\') {
          ++j;
          continue;
        }
        if (!triple && t[j] == '\n') break;
        if (t[j] == c && (!triple || t.substr(j, 3) == t.substr(i, 3))) break;
      }
      i = std::min(j + (triple ? 2 : 0), t.size());
      if (i < t.size() && t[i] == '\n') --i;  // let the newline be seen
      if (header) header_segments = std::max<std::size_t>(header_segments, 1);
      if (in_key && !header) key = std::max<std::size_t>(key, 1);
      line_start = false;
      continue;
    }
    if (header) {
      if (c == '.') {
        ++header_segments;
        if (header_segments + open.size() > max_depth) return i;
      } else if (c == ']') {
        table = header_segments + (i + 1 < t.size() && t[i + 1] == ']' ? 1 : 0);
        header = false;
        while (i + 1 < t.size() && t[i + 1] == ']') ++i;
      } else if (c != '[') {
        header_segments = std::max<std::size_t>(header_segments, 1);
      }
      continue;
    }
    if (line_start && open.empty() && c == '[') {
      header = true, header_segments = 0, line_start = false;
      continue;
    }
    line_start = false;
    if (in_key) {
      if (c == '.') {
        ++key;
        if (depth() > max_depth) return i;
      } else if (c == '=') {
        in_key = false;
      } else if (c == '}' && !open.empty() && open.back().kind == '{') {
        outside = open.back().outside, key = 0, in_key = false;
        open.pop_back();
      } else {
        key = std::max<std::size_t>(key, 1);
      }
      continue;
    }
    if (c == '[' || c == '{') {
      open.push_back({c, outside});
      outside += key;
      key = 0;
      if (depth() > max_depth) return i;
      in_key = c == '{';
    } else if ((c == ']' || c == '}') && !open.empty()) {
      outside = open.back().outside, key = 0;
      open.pop_back();
    } else if (c == ',' && !open.empty() && open.back().kind == '{') {
      in_key = true, key = 0;
    }
  }
  return std::string_view::npos;
}

// Every key and string of the case: no control characters but tab (they would reach the
// terminal raw when the title, a name or a source is printed, and no value needs them).
void check_control_characters(const toml::node& n, const std::string& field, std::size_t depth) {
  if (depth > kMaxNesting + 2)  // cannot happen after too_deep_at; a guard against deep recursion
    throw error_at(n, field, fmt::format("nested deeper than {} levels", kMaxNesting));
  const auto bad = [](std::string_view s) {
    for (std::size_t i = 0; i < s.size(); ++i) {
      const auto c = static_cast<unsigned char>(s[i]);
      if ((c < 0x20 && c != '\t') || c == 0x7F) return true;
      if (c == 0xC2 && i + 1 < s.size() && static_cast<unsigned char>(s[i + 1]) < 0xA0)
        return true;  // C1 controls U+0080..U+009F
    }
    return false;
  };
  const char* what = "contains a control character (only tab is allowed; shown as \\uXXXX above)";
  if (const auto* t = n.as_table()) {
    for (const auto& [k, v] : *t) {
      const std::string f = dotted(field, k.str());
      if (bad(k.str())) throw error_at(v, f, std::string("the key ") + what);
      check_control_characters(v, f, depth + 1);
    }
  } else if (const auto* a = n.as_array()) {
    for (std::size_t i = 0; i < a->size(); ++i)
      check_control_characters((*a)[i], fmt::format("{}[{}]", field, i), depth + 1);
  } else if (const auto* s = n.as_string()) {
    if (bad(s->get())) throw error_at(n, field, what);
  }
}

// The checks on the raw text (size, encoding, nesting), then toml++, then the strings.
toml::table parse_toml(const std::string& text, const std::string& name) {
  if (text.size() > kMaxCaseBytes)
    throw CaseError(
        fmt::format("{}: the case file has {} bytes, more than the {} MiB a case file "
                    "may have (is it the right file?)",
                    name, text.size(), kMaxCaseBytes >> 20));
  if (const std::size_t at = invalid_utf8_at(text); at != std::string_view::npos)
    throw CaseError(fmt::format("{}: byte 0x{:02X} is not UTF-8 (save the case file as UTF-8)",
                                text_location(text, at, name),
                                static_cast<unsigned char>(text[at])));
  if (const std::size_t at = too_deep_at(text, kMaxNesting); at != std::string_view::npos)
    throw CaseError(
        fmt::format("{}: nested deeper than {} levels (dotted keys, tables, arrays and "
                    "inline tables together; a case needs fewer than 10)",
                    text_location(text, at, name), kMaxNesting));
  toml::table root;
  try {
    root = toml::parse(std::string_view(text), std::string_view(name));
  } catch (const toml::parse_error& e) {
    throw CaseError(fmt::format("{}:{}:{}: malformed TOML: {}", name, e.source().begin.line,
                                e.source().begin.column, printable(e.description())));
  }
  check_control_characters(root, "", 0);
  return root;
}

// Where a [scan] key lands in the case: (table, key) pairs.
std::vector<std::pair<std::string, std::string>> scan_targets(const std::string& key,
                                                              const toml::table& root) {
  if (key == "temperature") return {{"conditions", "temperature"}};
  if (key == "radius" || key == "material") {
    // Every body of the case that has this key: the kind's tables present in the file, and its
    // required ones (a defaulted table follows the one it defaults to).
    std::vector<std::pair<std::string, std::string>> t;
    const toml::node* g = root.get("geometry");
    const GeometryKind* kind =
        g && g->is_string() ? find_geometry_kind(g->as_string()->get()) : nullptr;
    if (kind == nullptr) return {{"plate", "material"}};  // parse_root names the bad kind
    for (const BodySlot* s : {&kind->lower, &kind->upper}) {
      if (key == "radius" && s->shape != Shape::kSphere) continue;
      if (key == "material" && s->shape == Shape::kAtom) continue;
      if (!s->defaults_to.empty() && !root.contains(s->table)) continue;
      t.emplace_back(s->table, key);
    }
    return t;
  }
  const auto dot = key.find('.');
  return {{key.substr(0, dot), key.substr(dot + 1)}};
}

// The [scan] table: axes with their values checked one by one (field scan.KEY[i]).
std::vector<ScanAxis> parse_scan_axes(const toml::table& root, const toml::table& scan,
                                      const GeometryKind* kind) {
  std::vector<std::string> top{"radius", "temperature", "material"};
  for (const auto& t : body_table_names()) top.push_back(t);
  check_keys(scan, "scan", top);
  const auto kind_has = [&](const std::string& table) {
    return kind && (kind->lower.table == table || kind->upper.table == table);
  };
  const auto kind_text = [&] {
    return kind ? fmt::format("geometry = \"{}\" has [{}] and [{}]", kind->name, kind->lower.table,
                              kind->upper.table)
                : std::string("the case's geometry is not known");
  };
  for (const auto& body : body_table_names())
    if (const toml::node* n = scan.get(body)) {
      const auto* t = n->as_table();
      const std::string field = fmt::format("scan.{}", body);
      if (t == nullptr)
        throw error_at(*n, field, fmt::format("expected {}.material = [...] inside [scan]", body));
      if (!kind_has(body))
        throw error_at(*n, field, fmt::format("no [{}] to scan ({})", body, kind_text()));
      const Shape shape = (kind->lower.table == body ? kind->lower : kind->upper).shape;
      check_keys(*t, field,
                 shape == Shape::kSphere  ? std::vector<std::string>{"material", "radius"}
                 : shape == Shape::kAtom  ? std::vector<std::string>{}
                 : shape == Shape::kPlate ? std::vector<std::string>{"material", "surface"}
                                          : std::vector<std::string>{"material"});
    }
  bool any_sphere = false;
  if (kind)
    for (const BodySlot* s : {&kind->lower, &kind->upper})
      any_sphere = any_sphere || s->shape == Shape::kSphere;
  std::vector<ScanAxis> axes;
  std::size_t points = 1;
  for (const std::string& key : scan_keys(kind)) {
    const toml::node* n = scan.at_path(key).node();
    if (n == nullptr) continue;
    const std::string field = "scan." + key;
    if (key == "radius" && !any_sphere)
      throw error_at(*n, field, fmt::format("no sphere to scan ({})", kind_text()));
    const bool radius_key = key == "radius" || key.ends_with(".radius");
    const auto* arr = n->as_array();
    if (arr == nullptr || arr->empty())
      throw error_at(*n, field, "expected a non-empty array of strings, e.g. [\"a\", \"b\"]");
    if (points * arr->size() > kMaxScanPoints)
      throw error_at(*n, field, fmt::format("the scan has more than {} points", kMaxScanPoints));
    ScanAxis axis{key, {}};
    std::set<std::string_view> seen;  // values of this axis (views into the nodes)
    for (std::size_t i = 0; i < arr->size(); ++i) {
      const toml::node& e = (*arr)[i];
      const std::string fi = fmt::format("{}[{}]", field, i);
      const auto* str = e.as_string();
      if (str == nullptr) throw error_at(e, fi, "expected a string in double quotes");
      if (radius_key) {
        positive_length(e, fi,
                        key.starts_with("cylinder") ? geometry::cylinder_radius_problem
                                                    : geometry::radius_problem);
      } else if (key == "temperature") {
        if (parse_quantity(e, Dimension::kTemperature, fi) < 0.0)
          throw error_at(e, fi, "a temperature must be >= 0 K");
      }
      if (!seen.insert(str->get()).second) throw error_at(e, fi, "listed twice");
      axis.values.push_back(str->get());
    }
    points *= axis.values.size();
    if (points > kMaxScanPoints)
      throw error_at(*n, field, fmt::format("the scan has more than {} points", kMaxScanPoints));
    axes.push_back(std::move(axis));
  }
  if (axes.empty())
    throw table_error(scan, "scan",
                      "an empty [scan] (give e.g. temperature = [\"0 K\", \"300 K\"])");
  (void)root;
  return axes;
}

CaseSpec parse_root(toml::table& root, CaseSpec spec);

// A case parsed once: the root with its [scan] table taken out, and the scan axes. Scan points
// are made by moving one value node of each axis into the root (moved nodes keep their line
// for messages), parsing the root, and moving the nodes back, so a scan costs one TOML parse
// however many points it has.
struct ParsedCase {
  toml::table root;
  toml::table scan;  // [scan] as written (empty without one)
  std::vector<ScanAxis> axes;
};

ParsedCase parse_text(const std::string& text, const std::string& name) {
  ParsedCase pc;
  pc.root = parse_toml(text, name);
  if (const toml::node* sn = pc.root.get("scan")) {
    auto* scan = pc.root.get("scan")->as_table();
    if (scan == nullptr) throw error_at(*sn, "scan", "expected a table, e.g. [scan]");
    const toml::node* g = pc.root.get("geometry");
    const GeometryKind* kind =
        g && g->is_string() ? find_geometry_kind(g->as_string()->get()) : nullptr;
    pc.axes = parse_scan_axes(pc.root, *scan, kind);
    pc.scan = std::move(*scan);
    pc.root.erase("scan");
    // With a temperature axis an empty [scan] stays as a marker: parse_root then lets a forced
    // frequency rule pass at the 0 K points (README: ignored there).
    for (const auto& axis : pc.axes)
      if (axis.key == "temperature") pc.root.insert_or_assign("scan", toml::table{});
  }
  return pc;
}

// The case at value choice[a] of each axis a (choice null: the first value of each).
CaseSpec parse_point(ParsedCase& pc, CaseSpec spec, const std::vector<std::size_t>* choice) {
  std::vector<toml::value<std::string>*> moved_to(pc.axes.size(), nullptr);
  std::vector<toml::value<std::string>*> moved_from(pc.axes.size(), nullptr);
  const auto restore = [&] {
    for (std::size_t a = 0; a < pc.axes.size(); ++a)
      if (moved_to[a] != nullptr) *moved_from[a] = std::move(*moved_to[a]);
  };
  for (std::size_t a = 0; a < pc.axes.size(); ++a) {
    const std::size_t i = choice ? (*choice)[a] : 0;
    const auto targets = scan_targets(pc.axes[a].key, pc.root);
    toml::value<std::string>* v = pc.scan.at_path(pc.axes[a].key).as_array()->get(i)->as_string();
    const std::string value = v->get();
    for (std::size_t j = 0; j < targets.size(); ++j) {
      const auto& [table, key] = targets[j];
      toml::node* t = pc.root.get(table);
      if (t == nullptr) {
        pc.root.insert(table, toml::table{});
        t = pc.root.get(table);
      }
      auto* tt = t->as_table();
      if (tt == nullptr) continue;  // parse_root names the bad table
      if (moved_from[a] != nullptr) {
        tt->insert_or_assign(key, toml::value<std::string>(value));  // no line: a copy
      } else {
        // The first target (the one parse_root checks first) gets the node itself, which keeps
        // the scan line for messages.
        tt->insert_or_assign(key, std::move(*v));
        moved_from[a] = v;
        moved_to[a] = tt->get(key)->as_string();
      }
    }
  }
  try {
    spec = parse_root(pc.root, std::move(spec));
  } catch (...) {
    restore();
    throw;
  }
  restore();
  return spec;
}

// Every point of a parsed case, in scan order; `base` is the spec each point starts from.
std::vector<ScanPoint> expand(ParsedCase& pc, const CaseSpec& base) {
  std::vector<ScanPoint> out;
  std::size_t total = 1;
  for (const auto& axis : pc.axes) total *= axis.values.size();
  out.reserve(total);
  std::vector<std::size_t> choice(pc.axes.size(), 0);
  while (true) {
    ScanPoint p;
    for (std::size_t a = 0; a < pc.axes.size(); ++a)
      p.parameters.emplace_back(pc.axes[a].key, pc.axes[a].values[choice[a]]);
    try {
      p.spec = parse_point(pc, base, &choice);
    } catch (const CaseError& e) {
      std::string params;
      for (const auto& [k, v] : p.parameters)
        params += (params.empty() ? "" : ", ") + k + " = \"" + printable(v) + "\"";
      throw CaseError(fmt::format("{} (at the scan point {})", e.what(), params));
    }
    out.push_back(std::move(p));
    std::size_t a = pc.axes.size();
    while (a > 0 && ++choice[a - 1] == pc.axes[a - 1].values.size()) choice[--a] = 0;
    if (a == 0) break;
  }
  return out;
}

}  // namespace

std::vector<std::string> scan_keys(const GeometryKind* kind) {
  std::vector<std::string> keys{"radius", "temperature", "material"};
  // Body keys: spheres before plates, tables in name order ("sphere" < "sphere2").
  std::vector<BodySlot> slots;
  if (kind) {
    slots = {kind->lower, kind->upper};
  } else {
    for (const auto& k : geometry_kinds())
      for (const BodySlot* s : {&k.lower, &k.upper})
        if (std::none_of(slots.begin(), slots.end(),
                         [&](const BodySlot& x) { return x.table == s->table; }))
          slots.push_back(*s);
  }
  std::sort(slots.begin(), slots.end(), [](const BodySlot& a, const BodySlot& b) {
    const bool sa = a.shape == Shape::kSphere, sb = b.shape == Shape::kSphere;
    return sa != sb ? sa : a.table < b.table;
  });
  for (const auto& s : slots)
    if (s.shape == Shape::kSphere) keys.push_back(s.table + ".radius");
  for (const auto& s : slots)
    if (s.shape != Shape::kAtom) keys.push_back(s.table + ".material");
  // A plate's named surface models (io/material_spec.h: surface = "NAME", [plate.surfaces.NAME]).
  for (const auto& s : slots)
    if (s.shape == Shape::kPlate) keys.push_back(s.table + ".surface");
  return keys;
}

CaseSpec parse_case(std::string text, const std::filesystem::path& path) {
  CaseSpec spec;
  spec.path = path;
  spec.material_cache = std::make_shared<MaterialCache>();
  const MaterialCacheScope scope(spec.material_cache.get());
  ParsedCase pc = parse_text(text, path.string());
  CaseSpec point = spec;
  spec = parse_point(pc, std::move(spec), nullptr);
  spec.scan = pc.axes;
  if (spec.offsets.size() > 1) spec.scan.push_back(ScanAxis{"offset", spec.offset_texts});
  spec.text = std::move(text);
  // Every point must be a valid case (materials of the scan, combinations).
  if (!pc.axes.empty()) (void)expand(pc, point);
  return spec;
}

std::vector<ScanPoint> scan_points(const CaseSpec& spec) {
  if (spec.scan.empty()) return {ScanPoint{{}, spec}};
  const MaterialCacheScope scope(spec.material_cache.get());
  ParsedCase pc = parse_text(spec.text, spec.path.string());
  CaseSpec base;
  base.path = spec.path;
  base.material_cache = spec.material_cache;
  std::vector<ScanPoint> points = expand(pc, base);
  if (spec.offsets.size() < 2) return points;
  // Lateral offsets: the last, fastest scan axis "offset"; each point holds one offset.
  std::vector<ScanPoint> out;
  for (const auto& p : points)
    for (std::size_t i = 0; i < spec.offsets.size(); ++i) {
      ScanPoint q = p;
      q.parameters.emplace_back("offset", spec.offset_texts[i]);
      q.spec.offsets = {spec.offsets[i]};
      q.spec.offset_texts = {spec.offset_texts[i]};
      out.push_back(std::move(q));
    }
  return out;
}

namespace {

CaseSpec parse_root(toml::table& root, CaseSpec spec) {
  const std::filesystem::path path = spec.path;
  const std::string name = path.string();
  std::vector<std::string> top{"title",      "geometry", "field",     "medium", "separations",
                               "conditions", "compute",  "numerics",  "output", "materials",
                               "scan",       "offsets",  "pfa_sphere"};
  for (const auto& t : body_table_names()) top.push_back(t);
  check_keys(root, "", top);

  spec.title = optional_string(root, "title", "title").value_or("");
  const std::string kind_name =
      required_string(root, "geometry", "geometry", "geometry = \"plate-plate\"");
  spec.kind = find_geometry_kind(kind_name);
  if (spec.kind == nullptr)
    throw error_at(*root.get("geometry"), "geometry",
                   "unknown geometry (use " + quoted_list(geometry_kind_names()) + ")");
  const GeometryKind& kind = *spec.kind;

  if (const auto f = optional_string(root, "field", "field")) {
    if (!kind.scalar_fields)
      throw error_at(*root.get("field"), "field",
                     fmt::format("geometry = \"{}\" has no scalar test fields (it is "
                                 "electromagnetic only)",
                                 kind.name));
    const auto names = field_names();
    if (std::find(names.begin(), names.end(), *f) == names.end())
      throw error_at(*root.get("field"), "field", "unknown field (use " + quoted_list(names) + ")");
    spec.field = *f;
  }
  const bool electromagnetic = spec.field == "electromagnetic";

  // Materials: built-ins plus [materials.NAME]; every user definition is
  // checked, used or not.
  const toml::table* user = optional_table(root, "materials", "materials");
  const MaterialResolver resolver(
      user, path.has_parent_path() ? path.parent_path() : std::filesystem::path("."));
  const auto material_at = [&](const toml::table& t, std::string_view key,
                               const std::string& field) {
    const toml::node& n = *t.get(key);
    const auto* s = n.as_string();
    if (s == nullptr) throw error_at(n, field, "expected a material name in double quotes");
    try {
      return resolver.get(s->get(), field);
    } catch (const CaseError& e) {
      const std::string where = location(n.source());
      throw CaseError(where.empty() ? std::string(e.what()) : where + ": " + e.what());
    }
  };
  MaterialList used;

  // Bodies: the kind's two tables, each read by the reader of its shape.
  for (const auto& table : body_table_names())
    if (table != kind.lower.table && table != kind.upper.table && root.contains(table)) {
      const std::string where = location(root.get(table)->source());
      throw CaseError(fmt::format(
          "{}{}[{}] is not used by geometry = \"{}\" (its bodies are [{}] "
          "and [{}])",
          where, where.empty() ? "" : ": ", table, kind.name, kind.lower.table, kind.upper.table));
    }
  const auto read_plate = [&](const toml::table& t, BodySpec& b) {
    b.plate = planar_from_toml(t, b.table, resolver);
    std::vector<std::string> names;
    collect_material_names(t, names);
    for (const auto& n : names) used.add(resolver.get(n, b.table + ".material"));
  };
  // Shells of a sphere or a cylinder: [{ material, thickness }, ...], outermost first; together
  // thinner than the radius (read before them).
  const auto read_shells = [&](const toml::table& s, BodySpec& b) {
    const std::string& tb = b.table;
    if (const toml::node* sh = s.get("shells")) {
      const std::string field = tb + ".shells";
      const auto* arr = sh->as_array();
      if (arr == nullptr)
        throw error_at(*sh, field,
                       "expected an array of tables, e.g. [{ material = \"gold-drude\", "
                       "thickness = \"50 nm\" }] (outermost first)");
      if (!electromagnetic) throw error_at(*sh, field, "scalar test fields take no shells");
      double total = 0.0;
      for (std::size_t i = 0; i < arr->size(); ++i) {
        const toml::node& e = (*arr)[i];
        const std::string fi = fmt::format("{}[{}]", field, i);
        const auto* t = e.as_table();
        if (t == nullptr)
          throw error_at(e, fi, "expected { material = \"...\", thickness = \"...\" }");
        check_keys(*t, fi, {"material", "thickness"});
        if (!t->contains("material"))
          throw table_error(*t, fi + ".material", "missing required key");
        if (!t->contains("thickness"))
          throw table_error(*t, fi + ".thickness", "missing required key (e.g. \"50 nm\")");
        ShellSpec shell;
        shell.material = material_at(*t, "material", fi + ".material");
        used.add(shell.material);
        shell.thickness =
            positive_length(*t->get("thickness"), fi + ".thickness", geometry::thickness_problem);
        total += shell.thickness;
        if (!(total < b.radius))
          throw error_at(*t->get("thickness"), fi + ".thickness",
                         fmt::format("the shells are {:.6g} nm thick up to here, not less than "
                                     "the radius {:.6g} nm (the core needs a radius > 0)",
                                     total * 1e9, b.radius * 1e9));
        b.shells.push_back(std::move(shell));
      }
    }
  };
  const auto read_sphere = [&](const toml::table& s, BodySpec& b) {
    const std::string& tb = b.table;
    check_keys(s, tb, {"radius", "material", "shells"});
    if (!s.contains("radius"))
      throw table_error(s, tb + ".radius", "missing required key (e.g. radius = \"50 um\")");
    b.radius = positive_length(*s.get("radius"), tb + ".radius", geometry::radius_problem);
    if (s.contains("material")) {
      b.material = material_at(s, "material", tb + ".material");
      used.add(b.material);
    } else if (electromagnetic) {
      throw table_error(s, tb + ".material", "missing required key (e.g. \"gold-drude\")");
    }
    read_shells(s, b);
  };
  // A cylinder: radius, material (the core's if there are shells) and optional shells.
  const auto read_cylinder = [&](const toml::table& s, BodySpec& b) {
    const std::string& tb = b.table;
    check_keys(s, tb, {"radius", "material", "shells"});
    if (!s.contains("radius"))
      throw table_error(s, tb + ".radius", "missing required key (e.g. radius = \"50 um\")");
    b.radius = positive_length(*s.get("radius"), tb + ".radius", geometry::cylinder_radius_problem);
    if (s.contains("material")) {
      b.material = material_at(s, "material", tb + ".material");
      used.add(b.material);
    } else if (electromagnetic) {
      throw table_error(s, tb + ".material", "missing required key (e.g. \"perfect-conductor\")");
    }
    read_shells(s, b);
  };
  // [grating]: io/grating_spec.h.
  const auto read_grating = [&](const toml::table& t, BodySpec& b) {
    b.grating =
        grating_from_toml(t, b.table, material_at,
                          path.has_parent_path() ? path.parent_path() : std::filesystem::path("."));
    used.add(b.grating.ridge);
    used.add(b.grating.substrate);
    if (b.grating.coating) used.add(b.grating.coating);
    b.material = b.grating.ridge;
  };
  for (const BodySlot* slot : {&kind.lower, &kind.upper}) {
    BodySpec b;
    b.table = slot->table;
    b.shape = slot->shape;
    const toml::table* t = optional_table(root, slot->table, slot->table);
    if (t == nullptr && !slot->defaults_to.empty()) {
      for (const auto& other : spec.bodies)
        if (other.table == slot->defaults_to) b = other;
      b.table = slot->table;
      b.defaulted_from = slot->defaults_to;
      spec.bodies.push_back(std::move(b));
      continue;
    }
    if (slot->shape == Shape::kPlate) {
      if (t == nullptr) {
        if (electromagnetic)
          throw root_error(
              root, slot->table,
              fmt::format("missing table [{}] (e.g. material = \"gold-drude\")", slot->table));
      } else {
        read_plate(*t, b);
      }
    } else if (slot->shape == Shape::kAtom) {
      if (t == nullptr)
        throw root_error(
            root, slot->table,
            fmt::format("missing table [{}] (species or polarizability)", slot->table));
      b.atom =
          atom_from_toml(*t, slot->table,
                         path.has_parent_path() ? path.parent_path() : std::filesystem::path("."));
    } else if (slot->shape == Shape::kGrating) {
      if (t == nullptr)
        throw root_error(root, slot->table,
                         fmt::format("missing table [{}] (period, profile, filling, depth, "
                                     "material)",
                                     slot->table));
      read_grating(*t, b);
    } else {
      if (t == nullptr)
        throw root_error(root, slot->table,
                         fmt::format("missing table [{}] (radius and material)", slot->table));
      if (slot->shape == Shape::kCylinder)
        read_cylinder(*t, b);
      else
        read_sphere(*t, b);
    }
    spec.bodies.push_back(std::move(b));
  }
  if (const toml::table* m = optional_table(root, "medium", "medium")) {
    check_keys(*m, "medium", {"material", "ionic_strength"});
    if (!m->contains("material"))
      throw table_error(*m, "medium.material", "missing required key (e.g. \"water\")");
    spec.medium = material_at(*m, "material", "medium.material");
    if (const toml::node* in = m->get("ionic_strength")) {  // io/sheet_spec.h
      if (!kind.electrolyte) {
        std::vector<std::string> names;
        for (const GeometryKind& g : geometry_kinds())
          if (g.electrolyte) names.push_back(g.name);
        std::string kinds;
        for (std::size_t i = 0; i < names.size(); ++i)
          kinds += (i == 0 ? "" : i + 1 == names.size() ? " and " : ", ") + names[i];
        throw error_at(
            *in, "medium.ionic_strength",
            fmt::format("ions in the medium are built for {} only (the screened zero-frequency "
                        "term, (nabla^2 - kappa^2) phi = 0 outside the bodies, is solved for a "
                        "flat gap, an atom and a conducting sphere over a plate); for geometry = "
                        "\"{}\" it is not built",
                        kinds, kind.name));
      }
      spec.ionic_strength = ionic_strength_from_toml(*in, "medium.ionic_strength", *spec.medium);
      if (kind.electrolyte_problem && spec.ionic_strength > 0.0)
        if (const std::string why = kind.electrolyte_problem(spec); !why.empty())
          throw error_at(*in, "medium.ionic_strength", why);
    }
  } else {
    spec.medium = builtin_material("vacuum");
  }
  used.add(spec.medium);
  spec.materials = used.take();

  // Separations.
  spec.gaps =
      parse_separations(root, required_table(root, root, "separations", "separations",
                                             "values = [\"100 nm\", ...] or from/to/count"));

  // Lateral offsets (kinds that read them; io/offsets_spec.h).
  if (const toml::table* o = optional_table(root, "offsets", "offsets")) {
    if (!kind.offsets)
      throw table_error(*o, "offsets",
                        fmt::format("geometry = \"{}\" has no lateral offsets", kind.name));
    OffsetsSpec os = parse_offsets(*o);
    spec.offsets = std::move(os.values);
    spec.offset_texts = std::move(os.texts);
  } else if (kind.offsets) {
    spec.offsets = {0.0};
    spec.offset_texts = {"0 nm"};
  }

  // The sphere of the PFA force F = 2 pi R E(L) (kinds that read it; GeometryKind::pfa_sphere).
  if (const toml::table* ps = optional_table(root, "pfa_sphere", "pfa_sphere")) {
    if (!kind.pfa_sphere)
      throw table_error(*ps, "pfa_sphere",
                        fmt::format("geometry = \"{}\" has no [pfa_sphere] (the PFA sphere force "
                                    "of a per-area result is built for grating-plate)",
                                    kind.name));
    check_keys(*ps, "pfa_sphere", {"radius"});
    if (!ps->contains("radius"))
      throw table_error(*ps, "pfa_sphere.radius", "missing required key (e.g. \"50 um\")");
    spec.pfa_sphere_radius =
        positive_length(*ps->get("radius"), "pfa_sphere.radius", geometry::radius_problem);
  }

  // Conditions.
  const toml::table& cond =
      required_table(root, root, "conditions", "conditions", "temperature = \"300 K\"");
  check_keys(cond, "conditions", {"temperature"});
  if (!cond.contains("temperature"))
    throw table_error(cond, "conditions.temperature",
                      "missing required key (e.g. \"300 K\"; \"0 K\" for zero temperature)");
  const toml::node& tn = *cond.get("temperature");
  spec.frequency.temperature_K =
      parse_quantity(tn, Dimension::kTemperature, "conditions.temperature");
  if (spec.frequency.temperature_K < 0.0)
    throw error_at(tn, "conditions.temperature", "a temperature must be >= 0 K");

  // Compute, numerics, output.
  if (const toml::table* c = optional_table(root, "compute", "compute"))
    spec.quantities = parse_quantities(*c);
  if (const toml::table* n = optional_table(root, "numerics", "numerics")) {
    std::vector<std::string> numerics{"rel_tol", "frequency_rule"};
    numerics.insert(numerics.end(), kind.numerics_keys.begin(), kind.numerics_keys.end());
    check_keys(*n, "numerics", numerics);
    if (const toml::node* r = n->get("rel_tol")) {
      const double tol = parse_quantity(*r, Dimension::kDimensionless, "numerics.rel_tol");
      if (!(tol > 0.0 && tol < kMaxRelTol))
        throw error_at(*r, "numerics.rel_tol", "must satisfy 0 < rel_tol < 0.1");
      if (tol < kMinRelTol)
        throw error_at(*r, "numerics.rel_tol",
                       "below 1e-14 the round-off of the frequency sums dominates");
      spec.frequency.rel_tol = tol;
    }
    if (const auto f = optional_string(*n, "frequency_rule", "numerics.frequency_rule")) {
      const auto rule = thermal_rule_from_string(*f);
      if (!rule)
        throw error_at(
            *n->get("frequency_rule"), "numerics.frequency_rule",
            fmt::format(
                "unknown rule \"{}\" (use \"auto\", \"matsubara\", \"pade\" or \"integral-tail\")",
                *f));
      if (*rule != ThermalRule::kAuto && spec.frequency.temperature_K == 0.0 &&
          !root.contains("scan"))
        throw error_at(
            *n->get("frequency_rule"), "numerics.frequency_rule",
            fmt::format("\"{}\" needs T > 0 (at 0 K the frequency integral is used)", *f));
      // At the 0 K points of a temperature scan the rule does not apply (the integral is used).
      spec.frequency.thermal_rule = spec.frequency.temperature_K > 0.0 ? *rule : ThermalRule::kAuto;
    }
    if (const auto l = optional_integer(*n, "l_max", "numerics.l_max")) {
      if (*l < 0 || *l > kMaxLMax)
        throw error_at(*n->get("l_max"), "numerics.l_max",
                       fmt::format("must be 0 (automatic) or between 1 and {}", kMaxLMax));
      spec.l_max = static_cast<int>(*l);
    }
    if (const auto o = optional_integer(*n, "orders", "numerics.orders")) {
      if (*o < 0 || *o > 500)
        throw error_at(*n->get("orders"), "numerics.orders",
                       "must be 0 (automatic) or between 1 and 500");
      spec.orders = static_cast<int>(*o);
    }
  }
  if (const toml::table* o = optional_table(root, "output", "output")) {
    check_keys(*o, "output", {"file"});
    if (const auto f = optional_string(*o, "file", "output.file")) {
      if (f->empty()) throw error_at(*o->get("file"), "output.file", "an empty file name");
      spec.output_file = *f;
      spec.output_where = location(o->get("file")->source());
    }
  }
  if (const std::string p = spec.configuration().validate(); !p.empty())
    throw CaseError(name + ": " + p);
  return spec;
}

}  // namespace

CaseSpec load_case(const std::filesystem::path& path) {
  namespace fs = std::filesystem;
  const std::string name = path.string();
  std::error_code ec;
  const fs::file_status st = fs::status(path, ec);
  if (ec || !fs::exists(st))
    throw CaseError(fmt::format("{}: cannot open the case file (no such file)", name));
  if (fs::is_directory(st))
    throw CaseError(fmt::format("{}: is a directory, not a case file", name));
  if (!fs::is_regular_file(st))
    throw CaseError(
        fmt::format("{}: not a regular file (a device, pipe or socket); give a case "
                    "file (TOML)",
                    name));
  if (const auto size = fs::file_size(path, ec); !ec && size > kMaxCaseBytes)
    throw CaseError(
        fmt::format("{}: the case file has {} bytes, more than the {} MiB a case file "
                    "may have (is it the right file?)",
                    name, size, kMaxCaseBytes >> 20));
  std::ifstream in(path, std::ios::binary);
  if (!in) throw CaseError(fmt::format("{}: cannot open the case file", name));
  // Read with a bound: the size can change between the check and the read.
  std::string text(kMaxCaseBytes + 1, '\0');
  in.read(text.data(), static_cast<std::streamsize>(text.size()));
  if (in.bad()) throw CaseError(fmt::format("{}: cannot read the case file", name));
  text.resize(static_cast<std::size_t>(in.gcount()));
  if (text.size() > kMaxCaseBytes)
    throw CaseError(
        fmt::format("{}: the case file has more than the {} MiB a case file may have "
                    "(is it the right file?)",
                    name, kMaxCaseBytes >> 20));
  return parse_case(std::move(text), path);
}

namespace {
void flatten(const toml::node& n, const std::string& key,
             std::vector<std::pair<std::string, std::string>>& out) {
  if (const auto* t = n.as_table()) {
    for (const auto& [k, v] : *t) flatten(v, dotted(key, k.str()), out);
  } else if (const auto* a = n.as_array()) {
    for (std::size_t i = 0; i < a->size(); ++i)
      flatten((*a)[i], fmt::format("{}[{}]", key, i), out);
  } else {
    out.emplace_back(key, value_text(n));
  }
}

std::string file_digest(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  if (!in) return "unreadable";
  std::uint64_t h = 14695981039346656037ull;  // FNV-1a 64 (Fowler, Noll, Vo; common practice)
  for (char c; in.get(c);) {
    h ^= static_cast<unsigned char>(c);
    h *= 1099511628211ull;
  }
  return fmt::format("fnv1a64:{:016x}", h);
}
}  // namespace

std::vector<std::pair<std::string, std::string>> case_key_fields(const CaseSpec& spec) {
  std::vector<std::pair<std::string, std::string>> out;
  const toml::table root = toml::parse(std::string_view(spec.text));
  for (const auto& [k, v] : root) {
    if (k.str() == "title" || k.str() == "output") continue;
    flatten(v, std::string(k.str()), out);
  }
  const std::filesystem::path dir =
      spec.path.has_parent_path() ? spec.path.parent_path() : std::filesystem::path(".");
  if (const auto* m = root["materials"].as_table())
    for (const auto& [name, def] : *m)
      if (const auto* t = def.as_table())
        if (const auto* f = t->get_as<std::string>("file"))
          out.emplace_back(fmt::format("materials.{}.file (contents)", name.str()),
                           file_digest(dir / f->get()));
  // A body's own table files (polarizability, sheet, d-parameter tables, also inside a plate's
  // named surface models): their contents fix the numbers too.
  const auto body_tables = [&](const toml::table& t, const std::string& name) {
    for (const char* sub : {"polarizability", "sheet", "d_parameters"})
      if (const auto* p = t.get_as<toml::table>(sub))
        if (const auto* f = p->get_as<std::string>("file"))
          out.emplace_back(fmt::format("{}.{}.file (contents)", name, sub),
                           file_digest(dir / f->get()));
  };
  for (const auto& [name, def] : root)
    if (const auto* t = def.as_table()) {
      body_tables(*t, std::string(name.str()));
      if (const auto* variants = t->get_as<toml::table>("surfaces"))
        for (const auto& [vname, v] : *variants)
          if (const auto* vt = v.as_table())
            body_tables(*vt, fmt::format("{}.surfaces.{}", name.str(), vname.str()));
    }
  return out;
}

std::shared_ptr<Geometry> build_geometry(const CaseSpec& spec) {
  if (spec.kind == nullptr) throw CaseError(spec.path.string() + ": geometry: not parsed");
  // Plates whose response depends on the temperature (screened.h) are bound to this case's T.
  for (std::size_t i = 0; i < spec.bodies.size(); ++i)
    if (spec.bodies[i].plate)
      if (spec.bodies[i].plate->with_temperature(spec.frequency.temperature_K)) {
        CaseSpec bound = spec;
        for (auto& b : bound.bodies)
          if (b.plate)
            if (auto p = b.plate->with_temperature(spec.frequency.temperature_K)) b.plate = p;
        return spec.kind->build(bound);
      }
  return spec.kind->build(spec);
}

}  // namespace roundtrip::io
