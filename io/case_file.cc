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

#include "io/errors.h"
#include "io/material_spec.h"
#include "io/units.h"
#include "solver/materials/library.h"

namespace roundtrip::io {
namespace {

using geometry::Shape;

constexpr int kMaxGaps = 100000;               // a typo guard: more gaps than any sweep needs
constexpr double kMaxRelTol = 0.1;             // beyond 10 % the numbers are not worth printing
constexpr double kMinRelTol = 1e-14;           // below this, round-off of the sums dominates
constexpr int kMaxLMax = 100000;               // a typo guard for the multipole cut-off
constexpr std::size_t kMaxScanPoints = 10000;  // a typo guard: more runs than any scan needs

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
    if (b.shape == Shape::kSphere) out.emplace_back(b.table + "_radius_m", b.radius);
  return out;
}

geometry::Body BodySpec::geometry() const {
  geometry::Body b;
  b.name = table;
  b.shape = shape;
  b.radius = radius;
  for (const auto& s : shells) b.shell_thicknesses.push_back(s.thickness);
  return b;
}

std::vector<SphereShell> BodySpec::solver_shells() const {
  std::vector<SphereShell> out;
  for (const auto& s : shells) out.push_back({s.material, s.thickness});
  return out;
}

std::string BodySpec::describe() const {
  std::string d;
  if (shape == Shape::kPlate) {
    d = plate ? plate->describe() : std::string("none (scalar field)");
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

toml::table parse_toml(const std::string& text, const std::string& name) {
  try {
    return toml::parse(std::string_view(text), std::string_view(name));
  } catch (const toml::parse_error& e) {
    throw CaseError(fmt::format("{}:{}:{}: malformed TOML: {}", name, e.source().begin.line,
                                e.source().begin.column, e.description()));
  }
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
      const bool sphere =
          (kind->lower.table == body ? kind->lower : kind->upper).shape == Shape::kSphere;
      check_keys(*t, field,
                 sphere ? std::vector<std::string>{"material", "radius"}
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
    ScanAxis axis{key, {}};
    for (std::size_t i = 0; i < arr->size(); ++i) {
      const toml::node& e = (*arr)[i];
      const std::string fi = fmt::format("{}[{}]", field, i);
      const auto* str = e.as_string();
      if (str == nullptr) throw error_at(e, fi, "expected a string in double quotes");
      if (radius_key) {
        positive_length(e, fi, geometry::radius_problem);
      } else if (key == "temperature") {
        if (parse_quantity(e, Dimension::kTemperature, fi) < 0.0)
          throw error_at(e, fi, "a temperature must be >= 0 K");
      }
      if (std::find(axis.values.begin(), axis.values.end(), str->get()) != axis.values.end())
        throw error_at(e, fi, "listed twice");
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

// Parse `text`; if it has a [scan], put value choice[a] of each axis a in place first.
CaseSpec parse_with_choice(const std::string& text, const std::filesystem::path& path,
                           const std::vector<std::size_t>* choice) {
  const std::string name = path.string();
  toml::table root = parse_toml(text, name);
  CaseSpec spec;
  spec.path = path;
  spec.text = text;
  if (const toml::node* sn = root.get("scan")) {
    const auto* scan = sn->as_table();
    if (scan == nullptr) throw error_at(*sn, "scan", "expected a table, e.g. [scan]");
    const toml::node* g = root.get("geometry");
    const GeometryKind* kind =
        g && g->is_string() ? find_geometry_kind(g->as_string()->get()) : nullptr;
    spec.scan = parse_scan_axes(root, *scan, kind);
    // Move the chosen values into the case (moved nodes keep their line for messages).
    toml::table scan_copy = std::move(*root.get("scan")->as_table());
    root.erase("scan");
    for (std::size_t a = 0; a < spec.scan.size(); ++a) {
      const std::size_t i = choice ? (*choice)[a] : 0;
      const auto targets = scan_targets(spec.scan[a].key, root);
      toml::value<std::string>* v =
          scan_copy.at_path(spec.scan[a].key).as_array()->get(i)->as_string();
      for (std::size_t j = 0; j < targets.size(); ++j) {
        const auto& [table, key] = targets[j];
        toml::node* t = root.get(table);
        if (t == nullptr) {
          root.insert(table, toml::table{});
          t = root.get(table);
        }
        auto* tt = t->as_table();
        if (tt == nullptr) continue;  // parse_root names the bad table
        if (j + 1 < targets.size())
          tt->insert_or_assign(key, toml::value<std::string>(*v));
        else
          tt->insert_or_assign(key, std::move(*v));  // keeps the scan line for messages
      }
    }
  }
  return parse_root(root, std::move(spec));
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
  for (const auto& s : slots) keys.push_back(s.table + ".material");
  return keys;
}

CaseSpec parse_case(std::string text, const std::filesystem::path& path) {
  CaseSpec spec = parse_with_choice(text, path, nullptr);
  // Every point must be a valid case (materials of the scan, combinations).
  if (!spec.scan.empty()) (void)scan_points(spec);
  return spec;
}

std::vector<ScanPoint> scan_points(const CaseSpec& spec) {
  if (spec.scan.empty()) return {ScanPoint{{}, spec}};
  std::vector<ScanPoint> out;
  std::vector<std::size_t> choice(spec.scan.size(), 0);
  while (true) {
    ScanPoint p;
    for (std::size_t a = 0; a < spec.scan.size(); ++a)
      p.parameters.emplace_back(spec.scan[a].key, spec.scan[a].values[choice[a]]);
    try {
      p.spec = parse_with_choice(spec.text, spec.path, &choice);
    } catch (const CaseError& e) {
      std::string params;
      for (const auto& [k, v] : p.parameters)
        params += (params.empty() ? "" : ", ") + k + " = \"" + v + "\"";
      throw CaseError(fmt::format("{} (at the scan point {})", e.what(), params));
    }
    out.push_back(std::move(p));
    std::size_t a = spec.scan.size();
    while (a > 0 && ++choice[a - 1] == spec.scan[a - 1].values.size()) choice[--a] = 0;
    if (a == 0) break;
  }
  return out;
}

namespace {

CaseSpec parse_root(toml::table& root, CaseSpec spec) {
  const std::filesystem::path path = spec.path;
  const std::string name = path.string();
  std::vector<std::string> top{"title",       "geometry",   "field",   "medium",
                               "separations", "conditions", "compute", "numerics",
                               "output",      "materials",  "scan"};
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
    if (table != kind.lower.table && table != kind.upper.table && root.contains(table))
      throw error_at(*root.get(table), table,
                     fmt::format("[{}] is not used by geometry = \"{}\" (its bodies are [{}] "
                                 "and [{}])",
                                 table, kind.name, kind.lower.table, kind.upper.table));
  const auto read_plate = [&](const toml::table& t, BodySpec& b) {
    b.plate = planar_from_toml(t, b.table, resolver);
    std::vector<std::string> names;
    collect_material_names(t, names);
    for (const auto& n : names) used.add(resolver.get(n, b.table + ".material"));
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
    } else {
      if (t == nullptr)
        throw root_error(root, slot->table,
                         fmt::format("missing table [{}] (radius and material)", slot->table));
      read_sphere(*t, b);
    }
    spec.bodies.push_back(std::move(b));
  }
  if (const toml::table* m = optional_table(root, "medium", "medium")) {
    check_keys(*m, "medium", {"material"});
    if (!m->contains("material"))
      throw table_error(*m, "medium.material", "missing required key (e.g. \"water\")");
    spec.medium = material_at(*m, "material", "medium.material");
  } else {
    spec.medium = builtin_material("vacuum");
  }
  used.add(spec.medium);
  spec.materials = used.take();

  // Separations.
  spec.gaps =
      parse_separations(root, required_table(root, root, "separations", "separations",
                                             "values = [\"100 nm\", ...] or from/to/count"));

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
            fmt::format("unknown rule \"{}\" (use \"auto\", \"matsubara\", \"pade\" or \"integral-tail\")", *f));
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
  std::ifstream in(path, std::ios::binary);
  if (!in) throw CaseError(fmt::format("{}: cannot open the case file", path.string()));
  std::ostringstream ss;
  ss << in.rdbuf();
  return parse_case(ss.str(), path);
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
  return out;
}

std::shared_ptr<Geometry> build_geometry(const CaseSpec& spec) {
  if (spec.kind == nullptr) throw CaseError(spec.path.string() + ": geometry: not parsed");
  return spec.kind->build(spec);
}

}  // namespace roundtrip::io
