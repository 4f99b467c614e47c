// The registry of geometry kinds (kind.h): one line per kind.
#include <toml++/toml.h>

#include <algorithm>
#include <exception>

#include "io/case_file.h"
#include "io/kinds/kind.h"

namespace roundtrip::io {

const std::vector<GeometryKind>& geometry_kinds() {
  static const std::vector<GeometryKind> kinds{
      plate_plate_kind(), sphere_plate_kind(),  sphere_sphere_kind(),   cylinder_plate_kind(),
      atom_plate_kind(),  grating_plate_kind(), grating_grating_kind(), cylinder_cylinder_kind(),
  };
  return kinds;
}

int case_line_of(const CaseSpec& spec, const std::string& table, const char* key) {
  try {
    const toml::table t = toml::parse(spec.text, spec.path.string());
    if (const toml::node* n = t[table][key].node()) return static_cast<int>(n->source().begin.line);
  } catch (const std::exception&) {
  }
  return 0;
}

const GeometryKind* find_geometry_kind(std::string_view name) {
  for (const auto& k : geometry_kinds())
    if (k.name == name) return &k;
  return nullptr;
}

std::vector<std::string> geometry_kind_names() {
  std::vector<std::string> names;
  for (const auto& k : geometry_kinds()) names.push_back(k.name);
  return names;
}

std::vector<std::string> body_table_names() {
  std::vector<std::string> names;
  for (const auto& k : geometry_kinds())
    for (const BodySlot* s : {&k.lower, &k.upper})
      if (std::find(names.begin(), names.end(), s->table) == names.end()) names.push_back(s->table);
  return names;
}

}  // namespace roundtrip::io
