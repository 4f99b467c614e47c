// plate.sheet tables (sheet_spec.h).
#include "io/sheet_spec.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <vector>

#include "io/errors.h"
#include "io/units.h"
#include "solver/input_error.h"
#include "solver/planar/feibelman.h"
#include "solver/planar/screened.h"
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

// `file = "..."` of a `model = "table"` table, relative to the case's folder, read by `read`;
// errors name the case file:line and key, and (from `read`) the table's file:line and column.
template <class Read>
auto read_table_file(const toml::table& t, const std::string& field,
                     const std::filesystem::path& case_dir, const std::string& example, Read read) {
  const toml::node& fn = need(t, "file", field, example);
  const auto* fs = fn.as_string();
  if (fs == nullptr) throw error_at(fn, field + ".file", "expected a file name in double quotes");
  const std::filesystem::path path = case_dir / fs->get();
  if (!std::filesystem::exists(path))
    throw error_at(fn, field + ".file", fmt::format("no such file: {}", path.string()));
  try {
    return read(path);
  } catch (const InputError& e) {  // the table's file:line, column and value
    throw error_at(fn, field + ".file", e.what());
  }
}

}  // namespace

PlanarPtr sheet_from_toml(const toml::node& node, const std::string& field, MaterialPtr substrate,
                          const std::filesystem::path& case_dir) {
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
    check_keys(*t, field, {"model", "file"});
    s.table = read_table_file(*t, field, case_dir, "\"sigma.csv\"", [](const auto& path) {
      return std::make_shared<SheetTable>(read_sheet_conductivity_csv(path));
    });
  } else {
    throw error_at(mn, field + ".model",
                   "unknown sheet model (use \"drude\", \"constant\" or \"table\")");
  }
  return make_sheet(s, std::move(substrate));
}

PlanarPtr screening_from_toml(const toml::node& node, const std::string& field,
                              MaterialPtr substrate) {
  const auto* t = node.as_table();
  if (t == nullptr)
    throw error_at(node, field,
                   "expected { carrier_density = \"1e18 cm^-3\" } or { debye_length = \"4 nm\" }");
  check_keys(*t, field, {"carrier_density", "debye_length", "statistics", "mass_ratio"});
  const toml::node* nn = t->get("carrier_density");
  const toml::node* ln = t->get("debye_length");
  if ((nn == nullptr) == (ln == nullptr))
    throw error_at(node, field, "give exactly one of carrier_density and debye_length");
  Screening s;
  if (nn != nullptr) {
    s.carrier_density = number_with_unit(*nn, field + ".carrier_density",
                                         {{"m^-3", 1.0}, {"cm^-3", 1e6}}, "\"1e18 cm^-3\"");
    // 1e30 m^-3 = 1e24 cm^-3: above the atom density of any solid (~1e29 m^-3).
    if (!(s.carrier_density > 0.0) || s.carrier_density > 1e30)
      throw error_at(*nn, field + ".carrier_density",
                     "must be > 0 and at most 1e30 m^-3 (above any solid's atom density)");
  } else {
    const double l = parse_quantity(*ln, Dimension::kLength, field + ".debye_length");
    if (!(l > 0.0) || !std::isfinite(l))
      throw error_at(*ln, field + ".debye_length", "must be > 0");
    s.debye_length = l;
  }
  // Carrier statistics (solver/planar/screened.h): Boltzmann (default), or with an effective
  // mass Thomas-Fermi (degenerate) and Fermi-Dirac (the crossover between the two).
  const toml::node* stn = t->get("statistics");
  const toml::node* mn = t->get("mass_ratio");
  if (stn != nullptr) {
    const auto* ss = stn->as_string();
    const std::string st = ss ? ss->get() : std::string();
    if (st == "thomas-fermi")
      s.statistics = CarrierStatistics::kThomasFermi;
    else if (st == "fermi-dirac")
      s.statistics = CarrierStatistics::kFermiDirac;
    else if (st != "boltzmann")
      throw error_at(*stn, field + ".statistics",
                     "expected \"boltzmann\", \"fermi-dirac\" or \"thomas-fermi\"");
    if (nn == nullptr)
      throw error_at(*stn, field + ".statistics", "needs carrier_density (not debye_length)");
  }
  const bool needs_mass = s.statistics != CarrierStatistics::kBoltzmann;
  if (needs_mass && mn == nullptr)
    throw error_at(*stn, field + ".statistics",
                   "needs mass_ratio = m*/m_e (e.g. 0.26 for electrons in silicon)");
  if (!needs_mass && mn != nullptr)
    throw error_at(*mn, field + ".mass_ratio",
                   "applies to statistics = \"fermi-dirac\" or \"thomas-fermi\" only");
  if (mn != nullptr) {
    s.mass_ratio = parse_quantity(*mn, Dimension::kDimensionless, field + ".mass_ratio");
    if (!(s.mass_ratio >= 1e-3 && s.mass_ratio <= 1e3))
      throw error_at(*mn, field + ".mass_ratio", "must be between 1e-3 and 1e3 (m*/m_e)");
  }
  try {
    return make_screened_half_space(std::move(substrate), s);
  } catch (const std::invalid_argument& e) {
    throw error_at(node, field, e.what());
  }
}

namespace {
// A signed length for a d-parameter, |d| <= 10 nm (beyond, k d ~ 1 at the wave numbers of any
// gap where a surface correction matters: the first order is meaningless).
double d_length(const toml::node& n, const std::string& field) {
  const double d = parse_quantity(n, Dimension::kLength, field);
  if (!std::isfinite(d) || std::abs(d) > kMaxDParameter)
    throw error_at(n, field,
                   "|d| must be at most 10 nm (d-parameters are of the order of 0.1 nm; the first "
                   "order in k d is meaningless beyond)");
  return d;
}

SurfaceParameter surface_parameter(const toml::node& n, const std::string& field) {
  SurfaceParameter p;
  if (const auto* t = n.as_table()) {
    check_keys(*t, field, {"static", "high_frequency", "frequency"});
    p.static_value = d_length(need(*t, "static", field, "\"-0.1 nm\""), field + ".static");
    p.high_frequency =
        d_length(need(*t, "high_frequency", field, "\"0.1 nm\""), field + ".high_frequency");
    const toml::node& fn = need(*t, "frequency", field, "\"5 eV\"");
    p.pole = parse_quantity(fn, Dimension::kFrequency, field + ".frequency");
    if (!(p.pole > 0.0) || !std::isfinite(p.pole))
      throw error_at(fn, field + ".frequency", "must be > 0");
    return p;
  }
  p.static_value = p.high_frequency = d_length(n, field);
  return p;
}
}  // namespace

PlanarPtr d_parameters_from_toml(const toml::node& node, const std::string& field,
                                 MaterialPtr substrate, const std::filesystem::path& case_dir) {
  const auto* t = node.as_table();
  if (t == nullptr)
    throw error_at(node, field,
                   "expected { perpendicular = \"0.1 nm\", parallel = \"0 nm\" } (lengths, "
                   "positive towards the gap) or { model = \"table\", file = \"d.csv\" }");
  FeibelmanParameters d;
  if (const toml::node* mn = t->get("model")) {  // { model = "table", file = "d.csv" }
    const auto* ms = mn->as_string();
    if (ms == nullptr || ms->get() != "table")
      throw error_at(*mn, field + ".model",
                     "the only model is \"table\" (constant and one-pole d-parameters are "
                     "given by perpendicular = ..., parallel = ... without a model key)");
    check_keys(*t, field, {"model", "file"});
    d.table = read_table_file(*t, field, case_dir, "\"d_parameters.csv\"", [](const auto& path) {
      return std::make_shared<DParameterTable>(read_d_parameters_csv(path));
    });
  } else {
    check_keys(*t, field, {"perpendicular", "parallel", "model"});
    d.perpendicular =
        surface_parameter(need(*t, "perpendicular", field, "\"0.1 nm\""), field + ".perpendicular");
    d.parallel = t->contains("parallel")
                     ? surface_parameter(*t->get("parallel"), field + ".parallel")
                     : SurfaceParameter{};
  }
  try {
    return make_feibelman_half_space(std::move(substrate), d);
  } catch (const std::invalid_argument& e) {
    throw error_at(node, field, e.what());
  }
}

double ionic_strength_from_toml(const toml::node& node, const std::string& field,
                                const Material& medium) {
  const double v = number_with_unit(
      node, field, {{"mol/L", 1e3}, {"M", 1e3}, {"mmol/L", 1.0}, {"mM", 1.0}, {"mol/m^3", 1.0}},
      "\"0.1 mol/L\"");
  // 10 mol/L: beyond any salt's solubility in water; the Debye-Hueckel picture fails long before.
  if (v > 1e4) throw error_at(node, field, "must be at most 10 mol/L");
  const StaticLimit m = medium.static_limit();
  if (m.is_conductor() || !(m.static_eps > 1.0))
    throw error_at(node, field,
                   fmt::format("ions need a dielectric solvent with eps(0) > 1 as [medium] "
                               "material (e.g. \"water\"); '{}' is not one",
                               medium.name()));
  return v;
}

}  // namespace roundtrip::io
