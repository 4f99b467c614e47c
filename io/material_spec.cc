// Case-file materials and plates (io/material_spec.h). Every malformed input is a CaseError
// naming the dotted field, the value and the line.
#include "io/material_spec.h"

#include <fmt/format.h>

#include <cmath>
#include <fstream>
#include <initializer_list>
#include <sstream>
#include <stdexcept>
#include <string_view>

#include "geometry/configuration.h"
#include "io/errors.h"
#include "io/sheet_spec.h"
#include "io/units.h"
#include "solver/materials/library.h"
#include "solver/materials/models.h"
#include "solver/materials/tabulated.h"
#include "solver/planar/hydrodynamic.h"
#include "solver/planar/layered.h"

namespace roundtrip::io {
namespace {

std::string prefix(const toml::node& node) {
  const std::string where = location(node.source());
  return where.empty() ? std::string() : where + ": ";
}

std::string join(const std::vector<std::string>& v) {
  std::string s;
  for (const auto& x : v) s += (s.empty() ? "" : ", ") + x;
  return s;
}

void check_keys(const toml::table& t, const std::string& field,
                std::initializer_list<std::string_view> allowed) {
  for (const auto& [key, node] : t) {
    bool ok = false;
    for (auto a : allowed) ok = ok || key.str() == a;
    if (!ok) {
      std::vector<std::string> names(allowed.begin(), allowed.end());
      throw error_at(node, field + "." + std::string(key.str()),
                     fmt::format("unknown key here (allowed: {})", join(names)));
    }
  }
}

const toml::node& required(const toml::table& t, std::string_view key, const std::string& field,
                           const std::string& why = "") {
  const toml::node* n = t.get(key);
  if (n == nullptr)
    throw CaseError(fmt::format("{}{}: missing required key '{}'{}", prefix(t), field, key,
                                why.empty() ? "" : " (" + why + ")"));
  return *n;
}

std::string get_string(const toml::node& n, const std::string& field) {
  const auto* s = n.as_string();
  if (s == nullptr) throw error_at(n, field, "expected a string");
  return s->get();
}

// Frequency in rad/s; `positive` demands > 0, else >= 0.
double frequency(const toml::node& n, const std::string& field, bool positive) {
  const double v = parse_quantity(n, Dimension::kFrequency, field);
  if (positive ? !(v > 0.0) : !(v >= 0.0))
    throw error_at(n, field, positive ? "must be > 0" : "must be >= 0");
  return v;
}

double eps_value(const toml::node& n, const std::string& field) {
  const double v = parse_quantity(n, Dimension::kDimensionless, field);
  if (!(v >= 1.0))
    throw error_at(n, field, "a passive medium needs eps >= 1 on the imaginary axis");
  return v;
}

// Speeds are not a units.h dimension: "<length>/s", e.g. "1.40e6 m/s", "1.4e8 cm/s".
double speed(const toml::node& n, const std::string& field) {
  const auto* s = n.as_string();
  if (s == nullptr)
    throw error_at(n, field, "expected a string with a speed unit, e.g. \"1.4e6 m/s\"");
  std::string_view text = s->get();
  while (!text.empty() && text.back() == ' ') text.remove_suffix(1);
  if (text.size() < 3 || text.substr(text.size() - 2) != "/s")
    throw error_at(n, field, "expected a speed: a length per second, e.g. \"1.4e6 m/s\"");
  double v = 0.0;
  try {
    v = parse_quantity_string(text.substr(0, text.size() - 2), Dimension::kLength, field);
  } catch (const CaseError& e) {
    throw error_at(n, field, "expected a speed: a length per second, e.g. \"1.4e6 m/s\"");
  }
  if (!(v >= 0.0)) throw error_at(n, field, "must be >= 0");
  return v;
}

std::vector<Oscillator> oscillators(const toml::node& n, const std::string& field) {
  const auto* arr = n.as_array();
  if (arr == nullptr)
    throw error_at(n, field,
                   "expected an array of tables, e.g. [{strength = 1.5, frequency = \"2 eV\", "
                   "damping = \"0.1 eV\"}]");
  std::vector<Oscillator> out;
  for (std::size_t i = 0; i < arr->size(); ++i) {
    const std::string f = fmt::format("{}[{}]", field, i);
    const auto* t = (*arr)[i].as_table();
    if (t == nullptr)
      throw error_at((*arr)[i], f, "expected a table {strength, frequency, damping}");
    check_keys(*t, f, {"strength", "frequency", "damping"});
    Oscillator o;
    const auto& sn = required(*t, "strength", f);
    o.strength = parse_quantity(sn, Dimension::kDimensionless, f + ".strength");
    if (!(o.strength >= 0.0)) throw error_at(sn, f + ".strength", "must be >= 0");
    o.frequency = frequency(required(*t, "frequency", f), f + ".frequency", true);
    if (const auto* dn = t->get("damping")) o.damping = frequency(*dn, f + ".damping", false);
    out.push_back(o);
  }
  if (out.empty()) throw error_at(n, field, "needs at least one oscillator");
  return out;
}

MaterialPtr build_user(const std::string& name, const toml::table& t, const std::string& field,
                       const std::filesystem::path& dir) {
  const toml::node& mnode = required(t, "model", field);
  const std::string model = get_string(mnode, field + ".model");
  std::string source = "user defined (case file)";
  if (const auto* sn = t.get("source")) source = get_string(*sn, field + ".source");
  const auto fld = [&](std::string_view key) { return field + "." + std::string(key); };
  DrudeLorentzParams p;
  const auto eps_inf = [&] {
    if (const auto* n = t.get("eps_inf")) p.eps_inf = eps_value(*n, fld("eps_inf"));
  };
  const auto wp = [&] {
    p.plasma_frequency =
        frequency(required(t, "plasma_frequency", field), fld("plasma_frequency"), true);
  };
  const auto gamma = [&] {
    p.damping = frequency(required(t, "damping", field), fld("damping"), true);
  };
  const auto osc = [&] {
    p.oscillators = oscillators(required(t, "oscillators", field), fld("oscillators"));
  };
  const auto dl = [&] { return std::make_shared<DrudeLorentz>(name, p, source); };

  if (model == "perfect-conductor") {
    check_keys(t, field, {"model", "source"});
    return make_perfect_conductor();
  }
  if (model == "constant") {
    check_keys(t, field, {"model", "source", "eps"});
    p.eps_inf = eps_value(required(t, "eps", field), fld("eps"));
    return dl();
  }
  if (model == "plasma") {
    check_keys(t, field, {"model", "source", "plasma_frequency", "eps_inf"});
    wp(), eps_inf();
    return dl();
  }
  if (model == "drude") {
    check_keys(t, field, {"model", "source", "plasma_frequency", "damping", "eps_inf"});
    wp(), gamma(), eps_inf();
    return dl();
  }
  if (model == "oscillators") {
    check_keys(t, field, {"model", "source", "oscillators", "eps_inf"});
    osc(), eps_inf();
    return dl();
  }
  if (model == "drude-lorentz") {
    check_keys(t, field,
               {"model", "source", "plasma_frequency", "damping", "oscillators", "eps_inf"});
    wp(), gamma(), osc(), eps_inf();
    return dl();
  }
  if (model == "generalized-plasma") {
    check_keys(t, field, {"model", "source", "plasma_frequency", "oscillators", "eps_inf"});
    wp(), osc(), eps_inf();
    return dl();
  }
  if (model == "table") {
    check_keys(t, field,
               {"model", "source", "file", "low_frequency", "plasma_frequency", "damping"});
    const toml::node& fnode = required(t, "file", field);
    std::filesystem::path file = get_string(fnode, fld("file"));
    if (file.is_relative()) file = dir / file;
    KramersKronigOptions o;
    if (const auto* ln = t.get("low_frequency")) {
      const std::string low = get_string(*ln, fld("low_frequency"));
      if (low == "drude")
        o.low = LowFrequencyModel::kDrude;
      else if (low == "none")
        o.low = LowFrequencyModel::kNone;
      else
        throw error_at(*ln, fld("low_frequency"), "expected \"drude\" or \"none\"");
    }
    const auto* pn = t.get("plasma_frequency");
    const auto* dn = t.get("damping");
    if ((pn == nullptr) != (dn == nullptr))
      throw error_at(pn ? *pn : *dn, pn ? fld("plasma_frequency") : fld("damping"),
                     "give both plasma_frequency and damping for the Drude extension, or neither "
                     "(then they are fitted to the lowest table points)");
    if (pn != nullptr) {
      if (o.low == LowFrequencyModel::kNone)
        throw error_at(*pn, fld("plasma_frequency"),
                       "low_frequency = \"none\" takes no Drude parameters");
      o.plasma_frequency = frequency(*pn, fld("plasma_frequency"), true);
      o.damping = frequency(*dn, fld("damping"), true);
    }
    if (!std::filesystem::exists(file))
      throw error_at(fnode, fld("file"), fmt::format("no such file: {}", file.string()));
    OpticalData data;
    try {
      data = read_optical_csv(file);  // InputError with the table's file:line
    } catch (const InputError& e) {
      throw error_at(fnode, fld("file"), e.what());
    }
    try {
      return std::make_shared<TabulatedMaterial>(name, std::move(data), o, source);
    } catch (const std::invalid_argument& e) {
      throw error_at(fnode, fld("file"), e.what());
    }
  }
  throw error_at(mnode, field + ".model",
                 "unknown model (known: drude, plasma, constant, oscillators, drude-lorentz, "
                 "generalized-plasma, perfect-conductor, table)");
}

thread_local MaterialCache* current_cache = nullptr;

std::string file_digest(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  if (!in) return "unreadable";
  std::uint64_t h = 14695981039346656037ull;  // FNV-1a 64 (Fowler, Noll, Vo; common practice)
  char buf[1 << 16];
  while (in.read(buf, sizeof buf) || in.gcount() > 0) {
    for (std::streamsize i = 0; i < in.gcount(); ++i) {
      h ^= static_cast<unsigned char>(buf[i]);
      h *= 1099511628211ull;
    }
  }
  return fmt::format("fnv1a64:{:016x}", h);
}

// The cache key of a user material: name, directory, definition as written and, for tables, the
// contents hash of the file (so the same definition over a changed file is not shared).
std::string cache_key(const std::string& name, const toml::table& t,
                      const std::filesystem::path& dir, MaterialCache& cache) {
  std::ostringstream def;
  def << toml::toml_formatter(t);
  std::string key = name + '\0' + dir.string() + '\0' + def.str();
  if (const auto* f = t.get_as<std::string>("file")) {
    std::filesystem::path file = f->get();
    if (file.is_relative()) file = dir / file;
    key += '\0' + cache.digest(file);
  }
  return key;
}

}  // namespace

MaterialPtr MaterialCache::find(const std::string& key) const {
  const auto it = materials_.find(key);
  return it == materials_.end() ? nullptr : it->second;
}

void MaterialCache::put(const std::string& key, MaterialPtr m) { materials_[key] = std::move(m); }

const std::string& MaterialCache::digest(const std::filesystem::path& file) {
  auto it = digests_.find(file.string());
  if (it == digests_.end()) it = digests_.emplace(file.string(), file_digest(file)).first;
  return it->second;
}

MaterialCacheScope::MaterialCacheScope(MaterialCache* cache) : previous_(current_cache) {
  current_cache = cache;
}

MaterialCacheScope::~MaterialCacheScope() { current_cache = previous_; }

MaterialResolver::MaterialResolver(const toml::table* user, std::filesystem::path case_dir)
    : user_(user), dir_(std::move(case_dir)) {
  if (user_ == nullptr) return;
  // Build every user material now, so that errors in unused tables are reported too.
  for (const auto& [key, node] : *user_) {
    const std::string name(key.str());
    const std::string field = "materials." + name;
    if (builtin_material(name))
      throw error_at(node, field,
                     "this name is a built-in material; choose another name for a user material");
    const auto* t = node.as_table();
    if (t == nullptr) throw error_at(node, field, "expected a table [materials." + name + "]");
    try {
      if (current_cache == nullptr) {
        cache_[name] = build_user(name, *t, field, dir_);
        continue;
      }
      const std::string key = cache_key(name, *t, dir_, *current_cache);
      MaterialPtr m = current_cache->find(key);
      if (!m) {
        m = build_user(name, *t, field, dir_);
        current_cache->put(key, m);
      }
      cache_[name] = std::move(m);
    } catch (const std::invalid_argument& e) {  // model constructors: out-of-range parameters
      throw error_at(node, field, e.what());
    }
  }
}

MaterialPtr MaterialResolver::get(const std::string& name, const std::string& field) const {
  if (auto it = cache_.find(name); it != cache_.end()) return it->second;
  if (auto m = builtin_material(name)) return m;
  std::vector<std::string> user;
  for (const auto& [n, m] : cache_) user.push_back(n);
  throw CaseError(fmt::format("{} = \"{}\": unknown material (built-in: {}{}{})", field, name,
                              join(builtin_material_names()),
                              user.empty() ? "" : "; case file: ", join(user)));
}

namespace {

MaterialPtr material_at(const toml::table& t, const std::string& field,
                        const MaterialResolver& materials) {
  const toml::node& n = required(t, "material", field);
  const std::string name = get_string(n, field + ".material");
  try {
    return materials.get(name, field + ".material");
  } catch (const CaseError& e) {
    throw CaseError(prefix(n) + e.what());
  }
}

// `parent`: the plate table of a named surface model (its `material` is the default here).
PlanarPtr planar_impl(const toml::table& plate, const std::string& field,
                      const MaterialResolver& materials, const toml::table* parent,
                      const std::string& parent_field) {
  check_keys(plate, field,
             {"material", "layers", "nonlocal", "sheet", "screening", "d_parameters", "surface",
              "surfaces"});
  // Named surface models of one plate, chosen by `surface` (a [scan] axis `plate.surface`
  // compares them): each [<plate>.surfaces.NAME] is a plate table of its own whose `material`
  // defaults to the plate's. The nodes are read where they are written (a copy would lose their
  // lines). Every model is built, so a bad one is reported whichever is chosen.
  if (const toml::node* sv = plate.get("surface")) {
    const std::string name = get_string(*sv, field + ".surface");
    for (const char* other : {"layers", "nonlocal", "sheet", "screening", "d_parameters"})
      if (const toml::node* o = plate.get(other))
        throw error_at(*o, field + "." + other,
                       "with surface = \"...\" the plate's structure goes into its surface "
                       "models ([" +
                           field + ".surfaces.NAME])");
    const toml::node* an = plate.get("surfaces");
    const auto* all = an ? an->as_table() : nullptr;
    if (all == nullptr || all->empty())
      throw error_at(an ? *an : *sv, an ? field + ".surfaces" : field + ".surface",
                     fmt::format("expected tables [{}.surfaces.NAME] with the plate keys of each "
                                 "surface model (e.g. nonlocal, screening, d_parameters)",
                                 field));
    PlanarPtr chosen;
    std::string names;
    for (const auto& [key, node] : *all) {
      const std::string vf = fmt::format("{}.surfaces.{}", field, key.str());
      const auto* vt = node.as_table();
      if (vt == nullptr)
        throw error_at(node, vf, "expected a table of plate keys, e.g. { nonlocal = { ... } }");
      if (const toml::node* inner = vt->get("surface") ? vt->get("surface") : vt->get("surfaces"))
        throw error_at(*inner, vf, "a surface model cannot hold surface or surfaces");
      PlanarPtr p = planar_impl(*vt, vf, materials, &plate, field);
      if (key.str() == name) chosen = p;
      names += (names.empty() ? "\"" : ", \"") + std::string(key.str()) + "\"";
    }
    if (!chosen)
      throw error_at(*sv, field + ".surface",
                     fmt::format("unknown surface model (defined: {})", names));
    return chosen;
  }
  if (const toml::node* an = plate.get("surfaces"))
    throw error_at(*an, field + ".surfaces",
                   "give surface = \"NAME\" to choose one of these surface models");
  MaterialPtr substrate = parent != nullptr && !plate.contains("material")
                              ? material_at(*parent, parent_field, materials)
                              : material_at(plate, field, materials);
  if (const toml::node* dn = plate.get("d_parameters")) {  // io/sheet_spec.h
    for (const char* other : {"layers", "nonlocal", "sheet", "screening"})
      if (plate.contains(other))
        throw error_at(*dn, field + ".d_parameters",
                       fmt::format("d_parameters with {} is not built yet (they correct the plain "
                                   "half-space of `material`)",
                                   other));
    return d_parameters_from_toml(*dn, field + ".d_parameters", substrate, materials.directory());
  }
  if (const toml::node* sn = plate.get("screening")) {  // io/sheet_spec.h
    if (plate.contains("layers") || plate.contains("nonlocal") || plate.contains("sheet"))
      throw error_at(*sn, field + ".screening",
                     "screening with layers, nonlocal or sheet is not built yet (it screens the "
                     "plain half-space of `material`)");
    return screening_from_toml(*sn, field + ".screening", substrate);
  }
  if (const toml::node* sn = plate.get("sheet")) {  // io/sheet_spec.h
    if (plate.contains("layers") || plate.contains("nonlocal"))
      throw error_at(*sn, field + ".sheet",
                     "a sheet on layers or on a nonlocal metal is not built yet (a sheet sits "
                     "on the plain half-space of `material`)");
    return sheet_from_toml(*sn, field + ".sheet", substrate, materials.directory());
  }
  const auto* ln = plate.get("layers");
  const auto* nn = plate.get("nonlocal");
  std::vector<Layer> layers;
  if (ln != nullptr) {
    const auto* arr = ln->as_array();
    if (arr == nullptr)
      throw error_at(*ln, field + ".layers",
                     "expected an array of tables, e.g. [{material = \"gold-drude\", thickness = "
                     "\"100 nm\"}]");
    for (std::size_t i = 0; i < arr->size(); ++i) {
      const std::string f = fmt::format("{}.layers[{}]", field, i);
      const auto* t = (*arr)[i].as_table();
      if (t == nullptr) throw error_at((*arr)[i], f, "expected a table {material, thickness}");
      check_keys(*t, f, {"material", "thickness"});
      Layer l;
      l.material = material_at(*t, f, materials);
      const toml::node& tn = required(*t, "thickness", f);
      l.thickness = parse_quantity(tn, Dimension::kLength, f + ".thickness");
      if (const std::string p = geometry::thickness_problem(l.thickness); !p.empty())
        throw error_at(tn, f + ".thickness", p);
      layers.push_back(std::move(l));
    }
    if (nn == nullptr) return make_layered(std::move(layers), substrate);
  }
  if (nn != nullptr) {
    const std::string f = field + ".nonlocal";
    const auto* t = nn->as_table();
    if (t == nullptr)
      throw error_at(*nn, f,
                     "expected a table, e.g. {model = \"hydrodynamic\", fermi_velocity = \"1.40e6 "
                     "m/s\"}");
    check_keys(*t, f, {"model", "fermi_velocity", "beta", "regime"});
    const toml::node& mn = required(*t, "model", f);
    if (get_string(mn, f + ".model") != "hydrodynamic")
      throw error_at(mn, f + ".model", "unknown nonlocal model (known: hydrodynamic)");
    const auto* vn = t->get("fermi_velocity");
    const auto* bn = t->get("beta");
    if ((vn == nullptr) == (bn == nullptr))
      throw CaseError(
          fmt::format("{}{}: give exactly one of fermi_velocity and beta", prefix(*t), f));
    double beta = 0.0;
    if (bn != nullptr) {
      if (const auto* rn = t->get("regime"))
        throw error_at(*rn, f + ".regime", "regime applies to fermi_velocity only");
      beta = speed(*bn, f + ".beta");
    } else {
      HydrodynamicRegime regime = HydrodynamicRegime::kHighFrequency;
      if (const auto* rn = t->get("regime")) {
        const std::string r = get_string(*rn, f + ".regime");
        if (r == "low-frequency")
          regime = HydrodynamicRegime::kLowFrequency;
        else if (r != "high-frequency")
          throw error_at(*rn, f + ".regime", "expected \"high-frequency\" or \"low-frequency\"");
      }
      beta = hydrodynamic_beta(speed(*vn, f + ".fermi_velocity"), regime);
    }
    try {
      return make_layered_on_hydrodynamic(std::move(layers), substrate, beta);
    } catch (const std::invalid_argument& e) {
      throw error_at(required(plate, "material", field), field + ".material", e.what());
    }
  }
  return make_half_space(substrate);
}

}  // namespace

PlanarPtr planar_from_toml(const toml::table& plate, const std::string& field,
                           const MaterialResolver& materials) {
  return planar_impl(plate, field, materials, nullptr, {});
}

}  // namespace roundtrip::io
