// plate.sheet tables (sheet_spec.h).
#include "io/sheet_spec.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <vector>

#include "io/errors.h"
#include "io/units.h"
#include "solver/planar/sheet.h"

namespace roundtrip::io {
namespace {

// "<number> <unit>" with one of the units (name, factor to SI); throws naming the field.
double number_with_unit(const toml::node& n, const std::string& field,
                        const std::vector<std::pair<std::string, double>>& units,
                        const std::string& example) {
  const auto* s = n.as_string();
  if (s == nullptr)
    throw error_at(n, field, "expected a value with its unit in double quotes, e.g. " + example);
  const std::string text = s->get();
  char* e = nullptr;
  const double v = std::strtod(text.c_str(), &e);
  if (e == text.c_str()) throw error_at(n, field, "expected a number and a unit, e.g. " + example);
  std::string unit(e);
  unit.erase(0, unit.find_first_not_of(' '));
  unit.erase(unit.find_last_not_of(' ') + 1);
  for (const auto& [name, f] : units)
    if (unit == name) {
      if (!std::isfinite(v)) throw error_at(n, field, "not a finite number");
      if (v < 0.0) throw error_at(n, field, "must be >= 0");
      return v * f;
    }
  std::string list;
  for (const auto& u : units) list += (list.empty() ? "" : ", ") + u.first;
  throw error_at(n, field, fmt::format("unknown unit \"{}\" (use {})", printable(unit), list));
}

void check_keys(const toml::table& t, const std::string& field,
                const std::vector<std::string>& allowed) {
  for (const auto& [key, node] : t)
    if (std::find(allowed.begin(), allowed.end(), key.str()) == allowed.end()) {
      std::string list;
      for (const auto& a : allowed) list += (list.empty() ? "" : ", ") + a;
      throw error_at(node, field + "." + std::string(key.str()),
                     fmt::format("unknown key (allowed here: {})", list));
    }
}

const toml::node& need(const toml::table& t, const std::string& key, const std::string& field,
                       const std::string& example) {
  if (const toml::node* n = t.get(key)) return *n;
  const std::string where = location(t.source());
  throw CaseError(fmt::format("{}{}{}.{}: missing required key (e.g. {})", where,
                              where.empty() ? "" : ": ", field, key, example));
}

}  // namespace

PlanarPtr sheet_from_toml(const toml::node& node, const std::string& field, MaterialPtr substrate) {
  const auto* t = node.as_table();
  if (t == nullptr)
    throw error_at(node, field,
                   "expected { model = \"drude\", density = \"1e17 m^-2\", mass_ratio = 0.03, "
                   "damping = \"5 meV\" } or { model = \"constant\", conductance = \"6e-5 S\" }");
  const toml::node& mn = need(*t, "model", field, "\"drude\" or \"constant\"");
  const auto* ms = mn.as_string();
  const std::string model = ms ? ms->get() : std::string();
  SheetConductivity s;
  if (model == "drude") {
    check_keys(*t, field, {"model", "density", "mass_ratio", "damping"});
    const double n =
        number_with_unit(need(*t, "density", field, "\"1e17 m^-2\""), field + ".density",
                         {{"m^-2", 1.0}, {"cm^-2", 1e4}}, "\"1e17 m^-2\"");
    if (!(n > 0.0) || n > 1e22)
      throw error_at(*t->get("density"), field + ".density",
                     "must be > 0 and at most 1e22 m^-2 (a few carriers per atom of a monolayer)");
    const toml::node& mr = need(*t, "mass_ratio", field, "0.03 (m*/m_e)");
    const double m = parse_quantity(mr, Dimension::kDimensionless, field + ".mass_ratio");
    if (!(m >= 1e-4 && m <= 1e4))
      throw error_at(mr, field + ".mass_ratio", "must be between 1e-4 and 1e4 (m*/m_e)");
    const toml::node& dn = need(*t, "damping", field, "\"5 meV\" (\"0 meV\": no damping)");
    s.damping = parse_quantity(dn, Dimension::kFrequency, field + ".damping");
    if (!(s.damping >= 0.0) || s.damping > 1e20)
      throw error_at(dn, field + ".damping", "must be between 0 and 1e20 rad/s");
    s.drude_weight = SheetConductivity::weight(n, m);
  } else if (model == "constant") {
    check_keys(*t, field, {"model", "conductance"});
    const toml::node& cn = need(*t, "conductance", field, "\"6.08e-5 S\"");
    s.sigma0 =
        number_with_unit(cn, field + ".conductance", {{"S", 1.0}, {"mS", 1e-3}}, "\"6.08e-5 S\"");
    if (s.sigma0 > 1e10)
      throw error_at(cn, field + ".conductance",
                     "above 1e10 S: use material = \"perfect-conductor\" for an ideal mirror");
  } else if (model == "table") {
    throw error_at(mn, field + ".model",
                   "\"table\" is not built yet (use \"drude\" or \"constant\")");
  } else {
    throw error_at(mn, field + ".model", "unknown sheet model (use \"drude\" or \"constant\")");
  }
  return make_sheet(s, std::move(substrate));
}

}  // namespace roundtrip::io
