// [grating] tables (grating_spec.h).
#include "io/grating_spec.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <sstream>
#include <vector>

#include "geometry/configuration.h"
#include "io/errors.h"
#include "io/units.h"
#include "solver/constants.h"
#include "solver/scatterers/grating_coating.h"

namespace roundtrip::io {
namespace {

CaseError table_error(const toml::table& t, const std::string& field, const std::string& what) {
  const std::string where = location(t.source());
  return CaseError(fmt::format("{}{}{}: {}", where, where.empty() ? "" : ": ", field, what));
}

double length_at(const toml::table& t, const char* key, const std::string& tb,
                 std::string (*problem)(double)) {
  const toml::node& n = *t.get(key);
  const double v = parse_quantity(n, Dimension::kLength, tb + "." + key);
  if (const std::string p = problem(v); !p.empty()) throw error_at(n, tb + "." + key, p);
  return v;
}

std::string string_at(const toml::table& t, const char* key, const std::string& tb) {
  const toml::node& n = *t.get(key);
  if (const auto* s = n.as_string()) return s->get();
  throw error_at(n, tb + "." + key, "expected a string in double quotes");
}

// Reads "x, height" lines (in `unit`) of a CSV profile; errors name "file:line".
std::vector<std::pair<double, double>> read_profile_csv(const std::filesystem::path& file,
                                                        double unit, const toml::node& where,
                                                        const std::string& field) {
  std::ifstream in(file);
  if (!in) throw error_at(where, field, fmt::format("cannot read {}", file.string()));
  std::vector<std::pair<double, double>> pts;
  std::string line;
  int no = 0;
  bool header_seen = false;
  while (std::getline(in, line)) {
    ++no;
    const auto first = line.find_first_not_of(" \t\r");
    if (first == std::string::npos || line[first] == '#') continue;
    std::string s = line;
    std::replace(s.begin(), s.end(), ',', ' ');
    std::istringstream is(s);
    double x = 0.0, h = 0.0;
    std::string rest;
    if (!(is >> x >> h) || (is >> rest)) {
      if (pts.empty() && !header_seen) {
        header_seen = true;  // a header line of column names
        continue;
      }
      throw CaseError(fmt::format("{}:{}: {} = \"{}\": expected two numbers \"x, height\"",
                                  file.string(), no, field, line));
    }
    if (!std::isfinite(x) || !std::isfinite(h))
      throw CaseError(
          fmt::format("{}:{}: {}: x and height must be finite", file.string(), no, field));
    if (!pts.empty() && !(x * unit > pts.back().first))
      throw CaseError(fmt::format(
          "{}:{}: {}: x = {:g} does not increase (the profile must be single-valued: one height "
          "per x)",
          file.string(), no, field, x));
    pts.emplace_back(x * unit, h * unit);
  }
  if (pts.size() < 3)
    throw error_at(
        where, field,
        fmt::format("{} has {} points; a profile needs at least 3", file.string(), pts.size()));
  return pts;
}

// Profile height by linear interpolation, periodic with period P from pts.front().first.
double interp(const std::vector<std::pair<double, double>>& pts, double P, double x) {
  const double x0 = pts.front().first;
  double u = std::fmod(x - x0, P);
  if (u < 0) u += P;
  const double xa = x0 + u;
  for (std::size_t i = 1; i < pts.size(); ++i)
    if (xa <= pts[i].first) {
      const auto& [a, ha] = pts[i - 1];
      const auto& [b, hb] = pts[i];
      return ha + (hb - ha) * (xa - a) / (b - a);
    }
  return pts.back().second;
}

// coating = { material = "...", thickness = "20 nm" } (grating_spec.h; the geometry's limits in
// solver/scatterers/grating_coating.h).
void read_coating(const toml::node& n, const std::string& field, const MaterialLookup& material_at,
                  LamellarGrating& g) {
  const toml::table* c = n.as_table();
  if (c == nullptr)
    throw error_at(n, field,
                   "expected a table, e.g. coating = { material = \"gold-drude\", thickness = "
                   "\"20 nm\" }");
  for (const auto& [key, node] : *c)
    if (key.str() != "material" && key.str() != "thickness")
      throw error_at(node, field + "." + std::string(key.str()),
                     "unknown key of a coating (allowed here: material, thickness)");
  for (const char* key : {"material", "thickness"})
    if (!c->contains(key))
      throw table_error(*c, field + "." + key,
                        "missing required key (a coating needs material and thickness)");
  const toml::node& tn = *c->get("thickness");
  g.coating_thickness = parse_quantity(tn, Dimension::kLength, field + ".thickness");
  if (!(g.coating_thickness > 0.0))
    throw error_at(tn, field + ".thickness",
                   "a coating thickness must be > 0 (leave the coating out instead)");
  if (const std::string p = geometry::thickness_problem(g.coating_thickness); !p.empty())
    throw error_at(tn, field + ".thickness", p);
  g.coating = material_at(*c, "material", field + ".material");
  if (const std::string p = coating_problem(g); !p.empty())
    throw error_at(tn, field + ".thickness", p);
}

}  // namespace

LamellarGrating grating_from_toml(const toml::table& t, const std::string& tb,
                                  const MaterialLookup& material_at,
                                  const std::filesystem::path& base) {
  static const std::vector<std::string> kAllowed = {
      "period", "profile",    "filling",  "depth",     "amplitude",
      "table",  "table_unit", "material", "substrate", "coating"};
  for (const auto& [key, node] : t)
    if (std::find(kAllowed.begin(), kAllowed.end(), key.str()) == kAllowed.end()) {
      std::string list;
      for (const auto& a : kAllowed) list += (list.empty() ? "" : ", ") + a;
      throw error_at(node, tb + "." + std::string(key.str()),
                     fmt::format("unknown key in [{}] (allowed here: {})", tb, list));
    }
  for (const char* key : {"period", "profile", "material"})
    if (!t.contains(key))
      throw table_error(t, tb + "." + key,
                        "missing required key (a grating needs period, profile and material)");
  LamellarGrating g;
  const std::string profile = string_at(t, "profile", tb);
  // Keys each profile needs and the ones it must not have.
  struct Need {
    const char* name;
    GratingProfile kind;
    std::vector<std::string> keys;
  };
  static const std::vector<Need> kProfiles = {
      {"lamellar", GratingProfile::kLamellar, {"filling", "depth"}},
      {"sinusoidal", GratingProfile::kSinusoidal, {"amplitude"}},
      {"triangular", GratingProfile::kTriangular, {"depth"}},
      {"table", GratingProfile::kTable, {"table", "table_unit"}}};
  const auto it = std::find_if(kProfiles.begin(), kProfiles.end(),
                               [&](const Need& n) { return profile == n.name; });
  if (it == kProfiles.end())
    throw error_at(*t.get("profile"), tb + ".profile",
                   "unknown profile (use \"lamellar\", \"sinusoidal\", \"triangular\" or "
                   "\"table\")");
  g.profile = it->kind;
  for (const auto& k : it->keys)
    if (!t.contains(k))
      throw table_error(t, tb + "." + k,
                        fmt::format("missing required key for profile = \"{}\"", profile));
  for (const char* k : {"filling", "depth", "amplitude", "table", "table_unit"})
    if (t.contains(k) && std::find(it->keys.begin(), it->keys.end(), k) == it->keys.end())
      throw error_at(*t.get(k), tb + "." + k,
                     fmt::format("not a key of profile = \"{}\" (it takes: {})", profile,
                                 fmt::join(it->keys, ", ")));
  g.period = length_at(t, "period", tb, geometry::period_problem);
  switch (g.profile) {
    case GratingProfile::kLamellar: {
      const toml::node& fn = *t.get("filling");
      g.filling = parse_quantity(fn, Dimension::kDimensionless, tb + ".filling");
      if (const std::string p = geometry::filling_problem(g.filling); !p.empty())
        throw error_at(fn, tb + ".filling", p);
      g.depth = length_at(t, "depth", tb, geometry::thickness_problem);
      break;
    }
    case GratingProfile::kSinusoidal:
      g.amplitude = length_at(t, "amplitude", tb, geometry::thickness_problem);
      g.depth = 2.0 * g.amplitude;
      g.filling = 0.5;
      break;
    case GratingProfile::kTriangular:
      g.depth = length_at(t, "depth", tb, geometry::thickness_problem);
      g.filling = 0.5;
      break;
    case GratingProfile::kTable: {
      const toml::node& un = *t.get("table_unit");
      const std::string unit_text = string_at(t, "table_unit", tb);
      double unit = 0.0;
      try {
        unit = parse_quantity_string("1 " + unit_text, Dimension::kLength, tb + ".table_unit");
      } catch (const std::exception&) {
        throw error_at(un, tb + ".table_unit", "expected a length unit (e.g. \"nm\", \"um\")");
      }
      const toml::node& tn = *t.get("table");
      const std::string rel = string_at(t, "table", tb);
      const std::filesystem::path file =
          std::filesystem::path(rel).is_absolute() ? std::filesystem::path(rel) : base / rel;
      auto pts = read_profile_csv(file, unit, tn, tb + ".table");
      const double P = pts.back().first - pts.front().first;
      const auto bad = [&](const std::string& what) {
        return error_at(tn, tb + ".table", fmt::format("{}: {}", file.string(), what));
      };
      if (std::abs(P - g.period) > 1e-9 * g.period)
        throw bad(fmt::format(
            "the points span {:g} m, not one period ({:g} m): give one period, last x = first "
            "x + period",
            P, g.period));
      double hmin = pts.front().second, hmax = hmin;
      for (const auto& p : pts) {
        hmin = std::min(hmin, p.second);
        hmax = std::max(hmax, p.second);
      }
      if (!(hmax - hmin > 0.0)) throw bad("the profile is flat (depth 0): use a plate");
      if (std::abs(pts.front().second - pts.back().second) > 1e-9 * (hmax - hmin))
        throw bad(fmt::format("not periodic: the first height {:g} m differs from the last {:g} m",
                              pts.front().second, pts.back().second));
      // Even about the first point or the middle of the period (checked at 1001 points).
      double centre = 0.0;
      bool even = false;
      for (double c : {pts.front().first, pts.front().first + 0.5 * P}) {
        double dev = 0.0;
        for (int i = 0; i <= 1000; ++i) {
          const double u = 0.5 * P * i / 1000.0;
          dev = std::max(dev, std::abs(interp(pts, P, c + u) - interp(pts, P, c - u)));
        }
        if (dev <= 1e-6 * (hmax - hmin)) {
          centre = c;
          even = true;
          break;
        }
      }
      // A profile even about c is even about c + P/2 too: put the crest at x = 0.
      if (even && interp(pts, P, centre + 0.5 * P) > interp(pts, P, centre)) centre += 0.5 * P;
      if (!even)
        throw bad(
            "the profile is not symmetric about its first point or the middle of the "
            "period; asymmetric profiles are not built (complex Fourier coefficients)");
      // Resample as x in [-P/2, P/2] about the centre: the original points and their mirrors.
      std::vector<double> xs;
      for (const auto& p : pts) {
        double u = std::remainder(p.first - centre, P);
        xs.push_back(u);
        xs.push_back(-u);
      }
      xs.push_back(-0.5 * P);
      xs.push_back(0.5 * P);
      std::sort(xs.begin(), xs.end());
      xs.erase(std::unique(xs.begin(), xs.end(),
                           [&](double a, double b) { return std::abs(a - b) <= 1e-12 * P; }),
               xs.end());
      for (double x : xs) g.table.emplace_back(x, interp(pts, P, centre + x) - hmin);
      g.depth = hmax - hmin;
      g.filling = 0.5;
      break;
    }
  }
  g.ridge = material_at(t, "material", tb + ".material");
  g.substrate = t.contains("substrate") ? material_at(t, "substrate", tb + ".substrate") : g.ridge;
  if (t.contains("coating")) read_coating(*t.get("coating"), tb + ".coating", material_at, g);
  return g;
}

std::string grating_material_of(const LamellarGrating& g, const std::string& key) {
  if (key == "material") return g.ridge ? g.ridge->name() : "";
  if (key == "substrate") return g.substrate ? g.substrate->name() : "";
  return g.coating ? g.coating->name() : "";
}

std::pair<std::string, std::string> grating_material_problem(const LamellarGrating& g,
                                                             double temperature_K) {
  const bool pec_r = g.ridge->is_perfect_conductor(), pec_s = g.substrate->is_perfect_conductor();
  if (g.coated()) {
    if (pec_r || pec_s)
      return {"coating.material",
              "a coating on a perfectly conducting grating is not built (the grooves' modal "
              "method of a perfect conductor has empty grooves)"};
    if (g.coating->is_perfect_conductor())
      return {"coating.material",
              "a perfectly conducting coating is not built (the FMM needs a finite eps; a metal "
              "coating such as gold-drude works at T = 0)"};
    // A metal coating as metal ridges: the FMM at xi > 0 (balanced basis, grating_fmm.h).
    if (temperature_K > 0.0 && g.coating->static_limit().is_conductor())
      return {"coating.material",
              fmt::format("the xi = 0 term of a grating with a conducting coating ('{}') is not "
                          "built; at T > 0 the coating must be a dielectric (temperature = "
                          "\"0 K\" works: it needs no xi = 0 term)",
                          g.coating->name())};
  }
  if (pec_r || pec_s) {
    // The grooves' modal method (solver/scatterers/grating_pec.h).
    if (!(pec_r && pec_s))
      return {pec_r ? "substrate" : "material",
              fmt::format("a perfectly conducting grating is built only with ridges and substrate "
                          "both perfect conductors (here {} on {})",
                          g.ridge->name(), g.substrate->name())};
    if (g.profile != GratingProfile::kLamellar)
      return {"material",
              "a perfectly conducting grating is built for profile = \"lamellar\" only (its modal "
              "method needs rectangular grooves)"};
    return {};  // T > 0 too: the xi = 0 term is the static Dirichlet + Neumann pair
  }
  // Conducting (Drude, plasma) ridges and substrates: the FMM at xi > 0 (balanced basis,
  // grating_fmm.h). The xi = 0 term is built for lamellar Drude ridges on a Drude substrate
  // (one equipotential conductor: conductor_lamellar_static, grating_pec.h); every other static
  // conductor is not built.
  if (temperature_K > 0.0) {
    const StaticClass kr = g.ridge->static_limit().kind, ks = g.substrate->static_limit().kind;
    const bool cr = kr != StaticClass::kDielectric, cs = ks != StaticClass::kDielectric;
    if (cr || cs) {
      const bool plasma_r = kr == StaticClass::kPlasmaConductor;
      if (plasma_r || ks == StaticClass::kPlasmaConductor)
        return {plasma_r ? "material" : "substrate",
                fmt::format("the xi = 0 term of a plasma-model grating ('{}') is not built (a "
                            "plasma-model metal has a static TE reflection); at T > 0 use a Drude "
                            "metal (e.g. gold-drude) or a dielectric (temperature = \"0 K\" "
                            "works: it needs no xi = 0 term)",
                            plasma_r ? g.ridge->name() : g.substrate->name())};
      if (!(cr && cs))
        return {
            cr ? "material" : "substrate",
            fmt::format("the xi = 0 term of a grating with conducting {} ('{}') on a "
                        "dielectric {} ('{}') is not built; at T > 0 ridges and substrate "
                        "must both be Drude metals or both dielectrics (temperature = \"0 "
                        "K\" works: it needs no xi = 0 term)",
                        cr ? "ridges" : "substrate", cr ? g.ridge->name() : g.substrate->name(),
                        cr ? "substrate" : "ridges", cr ? g.substrate->name() : g.ridge->name())};
      if (g.coated())
        return {"coating.material",
                "the xi = 0 term of a coated conducting grating is not built; at T > 0 a Drude "
                "grating must be uncoated (temperature = \"0 K\" works)"};
      if (g.profile != GratingProfile::kLamellar)
        return {"material",
                "the xi = 0 term of a conducting grating is built for profile = \"lamellar\" "
                "only (the equipotential's modal method needs rectangular grooves; temperature "
                "= \"0 K\" works)"};
    }
  }
  return {};
}

}  // namespace roundtrip::io
