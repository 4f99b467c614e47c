// [atom] tables (atom_spec.h).
#include "io/atom_spec.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <stdexcept>
#include <vector>

#include "io/errors.h"
#include "io/units.h"
#include "solver/input_error.h"

namespace roundtrip::io {
namespace {

void check_keys(const toml::table& t, const std::string& prefix,
                const std::vector<std::string>& allowed) {
  for (const auto& [key, node] : t)
    if (std::find(allowed.begin(), allowed.end(), key.str()) == allowed.end()) {
      std::string list;
      for (const auto& a : allowed) list += (list.empty() ? "" : ", ") + a;
      throw error_at(node, prefix + "." + std::string(key.str()),
                     fmt::format("unknown key in [{}] (allowed here: {})", prefix, list));
    }
}

CaseError missing(const toml::table& t, const std::string& field, const std::string& what) {
  const std::string where = location(t.source());
  return CaseError(fmt::format("{}{}{}: {}", where, where.empty() ? "" : ": ", field, what));
}

// "<number> <unit>" -> (number, unit); false if the text does not start with a number.
bool split_number(const std::string& text, double& value, std::string& unit) {
  const char* b = text.c_str();
  char* e = nullptr;
  value = std::strtod(b, &e);
  if (e == b) return false;
  unit = std::string(e);
  unit.erase(0, unit.find_first_not_of(' '));
  unit.erase(unit.find_last_not_of(' ') + 1);
  return true;
}

double frequency_or_au(const toml::node& n, const std::string& field) {
  if (const auto* s = n.as_string()) {
    double v = 0.0;
    std::string unit;
    if (split_number(s->get(), v, unit) && unit == "au") {
      if (!std::isfinite(v) || !(v > 0.0))
        throw error_at(n, field, "a frequency must be finite and > 0");
      return v * kHartreeFrequency;
    }
  }
  const double w = parse_quantity(n, Dimension::kFrequency, field);
  if (!(w > 0.0)) throw error_at(n, field, "a frequency must be > 0");
  if (w > 1e20) throw error_at(n, field, "above 1e20 rad/s (66 keV): not an atomic transition");
  return w;
}

}  // namespace

double parse_polarizability_volume(const toml::node& n, const std::string& field) {
  const auto* s = n.as_string();
  if (s == nullptr)
    throw error_at(n, field,
                   "expected a polarizability volume with its unit in double quotes, e.g. "
                   "\"4.73e-29 m^3\", \"47.3 Å^3\" or \"318.8 au\"");
  double v = 0.0;
  std::string unit;
  if (!split_number(s->get(), v, unit))
    throw error_at(n, field, "expected a number and a unit (m^3, cm^3, nm^3, Å^3 or au)");
  double scale = 0.0;
  if (unit == "m^3")
    scale = 1.0;
  else if (unit == "cm^3")
    scale = 1e-6;
  else if (unit == "nm^3")
    scale = 1e-27;
  else if (unit == "Å^3" || unit == "A^3")
    scale = 1e-30;
  else if (unit == "au")
    scale = kBohrVolume;
  else
    throw error_at(n, field,
                   fmt::format("unknown unit \"{}\" (use m^3, cm^3, nm^3, Å^3 or au; the value is "
                               "alpha/(4 pi eps_0), a volume)",
                               printable(unit)));
  if (!std::isfinite(v)) throw error_at(n, field, "not a finite number");
  return v * scale;
}

PolarizabilityPtr atom_from_toml(const toml::table& t, const std::string& table,
                                 const std::filesystem::path& case_dir) {
  check_keys(t, table, {"species", "polarizability"});
  const toml::node* sp = t.get("species");
  const toml::node* pol = t.get("polarizability");
  if (sp && pol)
    throw error_at(*pol, table + ".polarizability",
                   "give either species or polarizability, not both");
  if (sp) {
    const auto* s = sp->as_string();
    if (s == nullptr) throw error_at(*sp, table + ".species", "expected a name in double quotes");
    if (auto p = builtin_polarizability(s->get())) return p;
    std::string list;
    for (const auto& n : builtin_species()) list += (list.empty() ? "\"" : ", \"") + n + "\"";
    throw error_at(*sp, table + ".species",
                   fmt::format("unknown species (built-in: {}; or give polarizability = {{ model "
                               "= \"constant\" | \"oscillators\", ... }})",
                               list));
  }
  if (pol == nullptr)
    throw missing(t, table + ".species",
                  "missing: give species = \"rubidium\" (built-in) or polarizability = { model "
                  "= \"constant\", alpha = \"4.73e-29 m^3\" }");
  const std::string field = table + ".polarizability";
  const auto* p = pol->as_table();
  if (p == nullptr)
    throw error_at(*pol, field,
                   "expected { model = \"constant\", alpha = \"...\" } or { model = "
                   "\"oscillators\", oscillators = [...] }");
  const toml::node* m = p->get("model");
  if (m == nullptr || !m->is_string())
    throw missing(*p, field + ".model",
                  "missing: model = \"constant\", \"oscillators\" or \"table\"");
  const std::string model = m->as_string()->get();
  if (model == "constant") {
    check_keys(*p, field, {"model", "alpha"});
    const toml::node* a = p->get("alpha");
    if (a == nullptr)
      throw missing(*p, field + ".alpha", "missing (e.g. alpha = \"4.73e-29 m^3\")");
    const double v = parse_polarizability_volume(*a, field + ".alpha");
    if (!(v > 0.0)) throw error_at(*a, field + ".alpha", "a polarizability must be > 0");
    return make_constant_polarizability(v);
  }
  if (model == "oscillators") {
    check_keys(*p, field, {"model", "oscillators"});
    const toml::node* o = p->get("oscillators");
    if (o == nullptr)
      throw missing(*p, field + ".oscillators",
                    "missing (e.g. oscillators = [{ strength = \"309.7 au\", frequency = \"1.58 "
                    "eV\" }])");
    const auto* arr = o->as_array();
    if (arr == nullptr || arr->empty())
      throw error_at(*o, field + ".oscillators",
                     "expected a non-empty array of { strength, frequency } tables");
    std::vector<AtomOscillator> list;
    double total = 0.0;
    for (std::size_t i = 0; i < arr->size(); ++i) {
      const toml::node& e = (*arr)[i];
      const std::string fi = fmt::format("{}.oscillators[{}]", field, i);
      const auto* et = e.as_table();
      if (et == nullptr)
        throw error_at(e, fi, "expected { strength = \"...\", frequency = \"...\" }");
      check_keys(*et, fi, {"strength", "frequency"});
      if (!et->contains("strength"))
        throw missing(*et, fi + ".strength", "missing (a volume, e.g. \"309.7 au\")");
      if (!et->contains("frequency"))
        throw missing(*et, fi + ".frequency", "missing (e.g. \"1.58 eV\")");
      AtomOscillator a;
      a.strength = parse_polarizability_volume(*et->get("strength"), fi + ".strength");
      if (!(a.strength >= 0.0))
        throw error_at(*et->get("strength"), fi + ".strength", "a strength must be >= 0");
      a.frequency = frequency_or_au(*et->get("frequency"), fi + ".frequency");
      total += a.strength;
      list.push_back(a);
    }
    if (!(total > 0.0))
      throw error_at(*o, field + ".oscillators", "the strengths add up to 0 (no polarizability)");
    return make_oscillator_polarizability(std::move(list));
  }
  if (model == "table") {
    check_keys(*p, field, {"model", "file"});
    const toml::node* f = p->get("file");
    if (f == nullptr)
      throw missing(*p, field + ".file",
                    "missing (a CSV file with the header 'xi_eV, alpha_au' and rows from xi = 0)");
    const auto* fs = f->as_string();
    if (fs == nullptr) throw error_at(*f, field + ".file", "expected a file name in double quotes");
    const std::filesystem::path path = case_dir / fs->get();
    if (!std::filesystem::exists(path))
      throw error_at(*f, field + ".file", fmt::format("no such file: {}", path.string()));
    try {
      return make_table_polarizability(read_polarizability_csv(path));
    } catch (const InputError& e) {  // the table's file:line, column and value
      throw error_at(*f, field + ".file", e.what());
    }
  }
  throw error_at(*m, field + ".model",
                 "unknown model (use \"constant\", \"oscillators\" or \"table\")");
}

}  // namespace roundtrip::io
