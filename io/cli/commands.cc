#include "io/cli/commands.h"

#include <fmt/format.h>
#include <fmt/ostream.h>
#include <omp.h>
#include <sys/wait.h>
#include <toml++/toml.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <ctime>
#include <filesystem>
#include <iostream>
#include <map>
#include <memory>
#include <optional>
#include <thread>

#include "geometry/gmsh_export.h"
#include "io/case_file.h"
#include "io/csv_export.h"
#include "io/errors.h"
#include "io/journal.h"
#include "io/material_spec.h"
#include "io/output_units.h"
#include "io/progress.h"
#include "io/results_hdf5.h"
#include "io/table.h"
#include "io/units.h"
#include "roundtrip/version.h"
#include "solver/constants.h"
#include "solver/guards.h"
#include "solver/materials/library.h"
#include "solver/parallel/mpi.h"
#include "solver/plan.h"
#include "solver/plan_timing.h"
#include "solver/planar/electrolyte.h"
#include "solver/run.h"

namespace roundtrip::io::cli {
namespace {

namespace fs = std::filesystem;

// The rules the gaps of a run used, e.g. "pade-spectrum" or "matsubara+pade-spectrum" (the
// HDF5 attribute frequency_rule); from the case alone when no gap finished.
std::string rules_used(const CaseSpec& spec, const RunResult* r) {
  std::vector<std::string> names;
  if (r)
    for (const auto& p : r->points) {
      const std::string n = to_string(p.frequencies.rule);
      if (std::find(names.begin(), names.end(), n) == names.end()) names.push_back(n);
    }
  if (names.empty()) {
    if (spec.frequency.temperature_K == 0.0)
      return to_string(FrequencyRuleKind::kZeroTemperatureQuadrature);
    switch (spec.frequency.thermal_rule) {
      case ThermalRule::kMatsubara:
        return to_string(FrequencyRuleKind::kMatsubara);
      case ThermalRule::kPade:
        return to_string(FrequencyRuleKind::kPadeSpectrum);
      case ThermalRule::kIntegralTail:
        return to_string(FrequencyRuleKind::kMatsubaraIntegralTail);
      case ThermalRule::kAuto:
        return "auto";
    }
  }
  std::sort(names.begin(), names.end());
  std::string out;
  for (const auto& n : names) out += (out.empty() ? "" : "+") + n;
  return out;
}

// "T = 300 K, Matsubara sum" and the like; with a run, says which rule each gap used.
std::string rule_sentence(const CaseSpec& spec, const RunResult* r = nullptr) {
  const double T = spec.frequency.temperature_K;
  if (T == 0.0) return "T = 0 K, integral over imaginary frequency";
  int matsubara = 0, pade = 0, lo = 0, hi = 0, tail = 0;
  if (r)
    for (const auto& p : r->points) {
      if (p.frequencies.rule == FrequencyRuleKind::kMatsubaraIntegralTail) {
        ++tail;
      } else if (p.frequencies.rule == FrequencyRuleKind::kPadeSpectrum) {
        const int n = p.frequencies.pade_poles;
        lo = pade == 0 ? n : std::min(lo, n);
        hi = pade == 0 ? n : std::max(hi, n);
        ++pade;
      } else {
        ++matsubara;
      }
    }
  const std::string poles = lo == hi ? Progress::count_text(lo, "pole", "poles")
                                     : fmt::format("{}\u2013{} poles", lo, hi);
  if (tail > 0)  // low temperature (frequency_rule.h)
    return fmt::format("T = {} K, Matsubara terms with an integral tail{}", T,
                       tail == static_cast<int>(r->points.size())
                           ? std::string()
                           : fmt::format(" at {} of {} gaps", tail, r->points.size()));
  if (pade > 0 && matsubara == 0)
    return fmt::format("T = {} K, Pade spectrum decomposition ({})", T, poles);
  if (pade > 0)
    return fmt::format(
        "T = {} K, Matsubara sum at {} gap{}, Pade spectrum decomposition ({}) at {}", T, matsubara,
        matsubara == 1 ? "" : "s", poles, pade);
  if (matsubara > 0) return fmt::format("T = {} K, Matsubara sum", T);
  switch (spec.frequency.thermal_rule) {
    case ThermalRule::kMatsubara:
      return fmt::format("T = {} K, Matsubara sum", T);
    case ThermalRule::kPade:
      return fmt::format("T = {} K, Pade spectrum decomposition", T);
    case ThermalRule::kIntegralTail:
      return fmt::format("T = {} K, Matsubara terms with an integral tail", T);
    case ThermalRule::kAuto:
      break;
  }
  return fmt::format(
      "T = {} K, Pade spectrum decomposition, Matsubara sum or (low T) Matsubara terms with an "
      "integral tail, whichever needs fewer frequencies",
      T);
}

std::string gap_text(double gap_m, const DisplayUnit& u) {
  return fmt::format("{:.6g}", gap_m / u.factor);
}

std::string quantities_text(const Quantities& q) {
  std::vector<std::string> v;
  if (q.energy) v.push_back("energy");
  if (q.force) v.push_back("force");
  if (q.gradient) v.push_back("gradient");
  std::string s;
  for (const auto& x : v) s += (s.empty() ? "" : ", ") + x;
  return s;
}

std::string static_text(const StaticLimit& s) {
  switch (s.kind) {
    case StaticClass::kDielectric:
      return fmt::format("dielectric, eps(0) = {:.6g}", s.static_eps);
    case StaticClass::kDrudeConductor:
      return "Drude-type conductor (no TE reflection at xi = 0)";
    case StaticClass::kPlasmaConductor:
      return fmt::format("plasma-type conductor (TE reflection at xi = 0, k_p = {:.6g} 1/m)",
                         std::sqrt(s.plasma_wavenumber_sq));
    case StaticClass::kPerfectConductor:
      return "perfect conductor";
  }
  return "?";
}

// Where the results go and the field to blame when that path is bad.
struct OutputChoice {
  fs::path path;
  std::string field;
};
OutputChoice choose_output(const RunArgs& args, const CaseSpec& spec) {
  if (!args.output.empty()) return {args.output, "-o"};
  if (!spec.output_file.empty())
    return {spec.output_file, spec.output_where.empty() ? std::string("output.file")
                                                        : spec.output_where + ": output.file"};
  return {fs::path(spec.path).stem().string() + ".h5", "output file (default: <case name>.h5)"};
}

// --units and --csv of `run`: units for this scan point (kBT at its temperature), the CSV table
// all points go into, and this point's scan values (the CSV's first columns).
struct TableExport {
  std::vector<OutputUnit> units;
  std::optional<CsvTable>* csv = nullptr;  ///< created by the first table, filled by all
  std::vector<std::string> prefix_headers, prefix;
  std::string case_text;  ///< the case file as written (its length units for the header)
};

// A column's unit: the --units entry of its dimension, else SI.
OutputUnit column_unit(const TableExport& ex, const std::string& si) {
  if (const OutputUnit* u = unit_for(ex.units, si, "--units")) return *u;
  return OutputUnit{si, 1.0, {}};
}

// "³" for 3: a small power as a superscript (table headers).
std::string superscript(int p) {
  static const char* const kDigits[] = {"\u2070", "\u00b9", "\u00b2", "\u00b3", "\u2074",
                                        "\u2075", "\u2076", "\u2077", "\u2078", "\u2079"};
  return p >= 0 && p <= 9 ? kDigits[p] : fmt::format("^{}", p);
}

void print_results(const CaseSpec& spec, const RunResult& r, std::ostream& out,
                   const TableExport& ex = {}) {
  std::vector<double> gaps;
  for (const auto& p : r.points) gaps.push_back(p.gap);
  DisplayUnit gu = length_display_unit(gaps);
  if (const OutputUnit* lu = unit_for(ex.units, "m", "--units")) gu = {lu->name, lu->factor};
  ScaleUnits u = scale_units(r.scale);
  const OutputUnit ue = column_unit(ex, u.energy), uf = column_unit(ex, u.force),
                   ug = column_unit(ex, u.gradient);
  u.energy = ue.name;
  u.force = uf.name;
  u.gradient = ug.name;
  const Quantities& q = spec.quantities;
  const bool force = q.force || q.gradient;
  bool any_pfa = false, any_unconverged = false;
  for (const auto& p : r.points) {
    any_pfa = any_pfa || p.pfa.has_value();
    any_unconverged = any_unconverged || !p.frequencies.converged;
  }
  std::vector<std::string> head{fmt::format("gap [{}]", gu.name)};
  if (q.energy) head.push_back(fmt::format("E [{}]", u.energy));
  const std::vector<int> powers = q.energy ? spec.kind->energy_gap_powers : std::vector<int>{};
  for (const int p : powers)
    head.push_back(fmt::format("L{0}E [{1} m{0}]", superscript(p), u.energy));
  if (force) head.push_back(fmt::format("F [{}]", u.force));
  if (q.gradient) head.push_back(fmt::format("F\u2032 [{}]", u.gradient));
  if (any_pfa) {
    if (q.energy) head.push_back("E/E_PFA");
    if (force) head.push_back("F/F_PFA");
    if (q.gradient) head.push_back("F\u2032/F\u2032_PFA");
  }
  const std::vector<ExtraQuantity> extra =
      r.points.empty() ? std::vector<ExtraQuantity>{} : r.points.front().extra;
  for (const auto& x : extra) head.push_back(fmt::format("{} [{}]", x.column, x.units));
  TextTable t(head);
  if (ex.csv) {
    std::vector<std::string> ch = ex.prefix_headers;
    ch.insert(ch.end(), head.begin(), head.end());
    ch.push_back("converged");
    if (!*ex.csv) ex.csv->emplace(ch);
    if ((*ex.csv)->headers() != ch)
      throw CaseError(
          "--csv: the scan points' tables have different columns (e.g. PFA ratios at some "
          "points only): one CSV file cannot hold them");
  }
  for (const auto& p : r.points) {
    std::vector<std::string> row{gap_text(p.gap, gu) + (p.frequencies.converged ? "" : " !")};
    std::vector<std::string> crow = ex.prefix;
    crow.push_back(csv_number(p.gap / gu.factor));
    if (q.energy) row.push_back(sci(p.energy / ue.factor));
    for (const int power : powers)
      row.push_back(sci(std::pow(p.gap, power) * p.energy / ue.factor));
    if (force) row.push_back(sci(p.force / uf.factor));
    if (q.gradient) row.push_back(sci(p.gradient / ug.factor));
    if (q.energy) crow.push_back(csv_number(p.energy / ue.factor));
    for (const int power : powers)
      crow.push_back(csv_number(std::pow(p.gap, power) * p.energy / ue.factor));
    if (force) crow.push_back(csv_number(p.force / uf.factor));
    if (q.gradient) crow.push_back(csv_number(p.gradient / ug.factor));
    if (any_pfa) {
      const auto ratio = [&](double a, double b) { return p.pfa ? fixed(a / b, 6) : "-"; };
      if (q.energy) row.push_back(ratio(p.energy, p.pfa ? p.pfa->energy : 1.0));
      if (force) row.push_back(ratio(p.force, p.pfa ? p.pfa->force : 1.0));
      if (q.gradient) row.push_back(ratio(p.gradient, p.pfa ? p.pfa->gradient : 1.0));
      const auto cratio = [&](double a, double b) { return p.pfa ? csv_number(a / b) : ""; };
      if (q.energy) crow.push_back(cratio(p.energy, p.pfa ? p.pfa->energy : 1.0));
      if (force) crow.push_back(cratio(p.force, p.pfa ? p.pfa->force : 1.0));
      if (q.gradient) crow.push_back(cratio(p.gradient, p.pfa ? p.pfa->gradient : 1.0));
    }
    for (std::size_t i = 0; i < extra.size(); ++i) {
      row.push_back(i < p.extra.size() ? sci(p.extra[i].value) : "-");
      crow.push_back(i < p.extra.size() ? csv_number(p.extra[i].value) : "");
    }
    crow.push_back(p.frequencies.converged ? "1" : "0");
    t.add_row(std::move(row));
    if (ex.csv) (*ex.csv)->add_row(std::move(crow));
  }
  if (!spec.title.empty()) out << spec.title << "\n";
  out << lengths_in_case_units(r.description, ex.case_text) << "\n";
  out << rule_sentence(spec, &r) << ", rel_tol = " << spec.frequency.rel_tol
      << (u.phrase.empty() ? "" : "; values " + u.phrase) << "\n";
  out << "sign: E < 0 and F < 0 mean attraction; F = -dE/dL, F\u2032 = dF/dL\n\n";
  out << t.render();
  if (any_unconverged) {
    // Why each marked gap missed rel_tol (the frequency rule, or a truncation that is not verified
    // against it, Geometry::unverified_truncation), each reason once.
    std::vector<std::string> reasons;
    for (const auto& p : r.points)
      if (!p.frequencies.converged &&
          std::find(reasons.begin(), reasons.end(), p.frequencies.message) == reasons.end())
        reasons.push_back(p.frequencies.message);
    out << "! rel_tol not reached or not verified at this gap";
    if (reasons.size() == 1 && !reasons.front().empty()) out << ": " << reasons.front();
    out << "\n";
  }
}

// A `[scan] material = [...]` replaces the material of every body; if the case gave its bodies
// different materials (the tutorial's silicon plate under a gold sphere), say which were
// replaced (empty otherwise).
std::string scan_material_warning(const CaseSpec& spec) {
  if (std::none_of(spec.scan.begin(), spec.scan.end(),
                   [](const ScanAxis& a) { return a.key == "material"; }))
    return {};
  std::vector<std::pair<std::string, std::string>> written;
  try {
    const toml::table t = toml::parse(spec.text);
    for (const auto& b : spec.bodies)
      if (b.defaulted_from.empty())
        if (const auto m = t[b.table]["material"].value<std::string>())
          written.emplace_back(b.table, *m);
  } catch (const std::exception&) {
    return {};
  }
  bool differ = false;
  for (const auto& w : written) differ = differ || w.second != written.front().second;
  if (!differ) return {};
  std::string list;
  for (const auto& [table, m] : written)
    list += fmt::format("{}{}.material = \"{}\"", list.empty() ? "" : ", ", table, m);
  return fmt::format(
      "scan.material replaces the material of every body ({}): every scan point has the same "
      "material everywhere; to scan one body use {}.material = [...]",
      list, written.back().first);
}

}  // namespace

std::string version_line() { return fmt::format("roundtrip {} (git {})", kVersion, kGitCommit); }

std::atomic<bool>& cancel_requested() {
  static std::atomic<bool> flag{false};
  return flag;
}

namespace {
fs::path journal_path(const fs::path& results) {
  fs::path j = results;
  j += ".journal";
  return j;
}

JournalKey journal_key(const CaseSpec& spec) {
  JournalKey key{{"roundtrip_version", kVersion}};
  for (auto& kv : case_key_fields(spec)) key.push_back(std::move(kv));
  return key;
}

// Scan points computed together with the first (solver/run.h, SharedFrequencyValues): those
// that differ only where the geometry can share a frequency's work (a material scan of a
// sphere-plate). Together, each thread holds one W block per point (bounded above by the whole
// per-thread figure of `first_plan` times the points); if that does not fit the limit, none.
std::vector<int> points_computed_together(const std::vector<ScanPoint>& points,
                                          const std::vector<std::shared_ptr<Geometry>>& geometries,
                                          const Plan& first_plan, const MemoryLimit& limit) {
  std::vector<int> together;
  for (std::size_t k = 1; k < points.size(); ++k) {
    const CaseSpec &p0 = points[0].spec, &pk = points[k].spec;
    if (pk.gaps == p0.gaps && pk.frequency.temperature_K == p0.frequency.temperature_K &&
        pk.frequency.rel_tol == p0.frequency.rel_tol &&
        pk.quantities.order() == p0.quantities.order() &&
        geometries[0]->shares_frequency_work_with(*geometries[k]))
      together.push_back(static_cast<int>(k));
  }
  if (together.empty()) return together;
  Plan plan = first_plan;
  plan.memory_bytes *= 1.0 + static_cast<double>(together.size());
  if (!memory_problem(plan, limit).empty()) together.clear();
  return together;
}
}  // namespace

namespace {
ResultsInfo results_info(const CaseSpec& spec) {
  ResultsInfo info;
  info.title = spec.title;
  info.case_path = spec.path.string();
  info.case_text = spec.text;
  info.temperature_K = spec.frequency.temperature_K;
  info.rel_tol = spec.frequency.rel_tol;
  info.frequency_rule = rules_used(spec, nullptr);
  info.quantities = spec.quantities;
  info.gaps_planned = static_cast<int>(spec.gaps.size());
  info.body_lengths = spec.body_lengths();
  if (spec.kind->body_texts) info.body_texts = spec.kind->body_texts(spec);
  if (spec.kind->body_numbers) info.body_numbers = spec.kind->body_numbers(spec);
  if (spec.quantities.energy) info.energy_gap_powers = spec.kind->energy_gap_powers;
  if (spec.ionic_strength > 0.0) {
    info.ionic_strength = spec.ionic_strength;
    const double kappa = std::sqrt(electrolyte_kappa_sq(
        spec.ionic_strength, spec.medium->static_limit().static_eps, spec.frequency.temperature_K));
    info.debye_length = std::isfinite(kappa) ? 1.0 / kappa : 0.0;
  }
  return info;
}

// One line per valid theta fit, below the table.
void print_theta(const RunResult& r, std::ostream& out) {
  const std::pair<const char*, const ThetaFit*> fits[] = {
      {"E", &r.theta_energy}, {"F", &r.theta_force}, {"F\u2032", &r.theta_gradient}};
  for (const auto& [q, fit] : fits) {
    if (!fit->valid) continue;
    out << fmt::format(
        "\u03b8 fit: {0}/{0}_PFA = {1}: \u03b8 = {2:.4f} \u00b1 {3:.4f} ({4} gaps, "
        "L/R from {5:.3g} to {6:.3g}){7}\n",
        q, fit->model, fit->theta, fit->uncertainty, fit->points, fit->x_min, fit->x_max,
        fit->note.empty() ? std::string() : "; " + fit->note);
  }
}

// The per-gap table of a plan: truncations, estimated frequencies, blocks, memory and time.
// With `csv`, its rows go there too (after the `prefix` cells: the scan values), numbers at full
// precision, memory in bytes and time in seconds; the first plan sets the columns.
void print_plan(const Plan& plan, std::ostream& out, std::optional<CsvTable>* csv = nullptr,
                const std::vector<std::string>& prefix_headers = {},
                const std::vector<std::string>& prefix = {}) {
  std::vector<double> gaps;
  std::vector<std::string> names;
  for (const auto& g : plan.gaps) {
    gaps.push_back(g.gap);
    for (const auto& [k, v] : g.truncation)
      if (std::find(names.begin(), names.end(), k) == names.end()) names.push_back(k);
  }
  const DisplayUnit gu = length_display_unit(gaps);
  const bool dense = plan.memory_bytes > 0.0;
  std::vector<std::string> head{fmt::format("gap [{}]", gu.name)};
  for (const auto& n : names) head.push_back(n);
  if (dense) head.push_back("m blocks");
  head.push_back("frequencies");
  if (dense) head.push_back("memory/thread");
  head.push_back("time");
  TextTable t(head);
  if (csv) {
    std::vector<std::string> ch = prefix_headers;
    for (const auto& h : head)
      ch.push_back(h == "memory/thread" ? "memory/thread [B]" : h == "time" ? "time [s]" : h);
    if (!*csv) csv->emplace(ch);
    if ((*csv)->headers() != ch)
      throw CaseError(
          "--csv: the scan points' plans have different columns (truncations or gap units): one "
          "CSV file cannot hold them");
  }
  for (const auto& g : plan.gaps) {
    std::vector<std::string> row{gap_text(g.gap, gu)};
    std::vector<std::string> crow = prefix;
    crow.push_back(csv_number(g.gap / gu.factor));
    for (const auto& n : names) {
      const auto it = g.truncation.find(n);
      row.push_back(it == g.truncation.end() ? "-" : fmt::format("{:g}", it->second));
      crow.push_back(it == g.truncation.end() ? "" : csv_number(it->second));
    }
    if (dense) {
      row.push_back(fmt::format("{:g}", g.blocks));
      crow.push_back(csv_number(g.blocks));
    }
    row.push_back(std::to_string(g.frequencies));
    crow.push_back(std::to_string(g.frequencies));
    if (dense) {
      row.push_back(bytes_text(g.memory_bytes));
      crow.push_back(csv_number(g.memory_bytes));
    }
    row.push_back(Progress::duration_text(g.seconds));
    crow.push_back(csv_number(g.seconds));
    t.add_row(std::move(row));
    if (csv) (*csv)->add_row(std::move(crow));
  }
  out << t.render();
}

std::string parameters_text(const std::vector<std::pair<std::string, std::string>>& params) {
  std::string t;
  for (const auto& [k, v] : params) t += (t.empty() ? "" : ", ") + k + " = " + v;
  return t;
}

// The memory limit of a run or check: the machine's, lowered by --max-memory.
MemoryLimit limit_from(const std::string& max_memory) {
  return memory_limit(max_memory.empty() ? 0.0 : parse_memory_size(max_memory, "--max-memory"));
}

// What `run` says when it refuses for memory and `check` says as a warning (same words).
std::string memory_refusal(const std::string& problem) {
  return problem +
         ": `roundtrip run` refuses it (--force runs it anyway; a looser rel_tol, "
         "larger gaps or fewer --threads need less)";
}
}  // namespace

double parse_memory_size(const std::string& text, const std::string& option) {
  static const std::pair<const char*, double> kUnits[] = {{"B", 1.0},
                                                          {"KiB", 1024.0},
                                                          {"MiB", 1048576.0},
                                                          {"GiB", 1073741824.0},
                                                          {"TiB", 1099511627776.0},
                                                          {"kB", 1e3},
                                                          {"KB", 1e3},
                                                          {"MB", 1e6},
                                                          {"GB", 1e9},
                                                          {"TB", 1e12}};
  const auto bad = [&] {
    return CaseError(fmt::format(
        "{} = \"{}\": expected a memory size > 0 with a unit, e.g. \"8 GiB\" or \"500 MiB\" "
        "(units: B, KiB, MiB, GiB, TiB, kB, MB, GB, TB)",
        option, text));
  };
  const char* begin = text.c_str();
  char* end = nullptr;
  const double v = std::strtod(begin, &end);
  if (end == begin || !std::isfinite(v) || !(v > 0.0)) throw bad();
  std::string unit(end);
  unit.erase(0, unit.find_first_not_of(' '));
  unit.erase(unit.find_last_not_of(' ') + 1);
  for (const auto& [name, factor] : kUnits)
    if (unit == name) return v * factor;
  throw bad();
}

int thread_cap() {
  int cores = omp_get_num_procs();
  if (cores < 1) cores = static_cast<int>(std::thread::hardware_concurrency());
  return 4 * std::max(cores, 1);
}

void check_thread_count(int threads) {
  const int cap = thread_cap();
  if (threads > cap)
    throw CaseError(fmt::format(
        "--threads = {}: at most {} (4 x the {} cores of this machine); more threads only "
        "contend for the same cores",
        threads, cap, cap / 4));
}

int run_command(const RunArgs& args, std::ostream& out, std::ostream& err) {
  if (args.threads < 0)
    throw CaseError(
        fmt::format("--threads = {}: must be >= 1 (or 0 for the default)", args.threads));
  check_thread_count(args.threads);
  const MemoryLimit limit = limit_from(args.max_memory);
  const CaseSpec spec = load_case(args.case_path);
  const std::vector<ScanPoint> points = scan_points(spec);
  const bool scan = !spec.scan.empty();
  std::vector<std::shared_ptr<Geometry>> geometries;
  for (const auto& p : points) geometries.push_back(build_geometry(p.spec));  // all before any run
  // Resource guards before anything is written: the plan (model only, no timing) of every scan
  // point must be computable and, unless --force, fit the memory limit.
  if (args.threads > 0) omp_set_num_threads(args.threads);
  std::vector<Plan> plans;
  for (std::size_t k = 0; k < points.size(); ++k) {
    RunOptions o;
    o.frequency = points[k].spec.frequency;
    o.quantities = points[k].spec.quantities;
    o.threads = args.threads;
    plans.push_back(make_plan(*geometries[k], points[k].spec.gaps, o, PlanCalibration{}));
    const std::string where =
        scan ? fmt::format("scan point {} ({}): ", k + 1, parameters_text(points[k].parameters))
             : std::string();
    if (const std::string t = truncation_problem(*geometries[k], plans.back()); !t.empty())
      throw CaseError(where + t);
    if (const std::string m = memory_problem(plans.back(), limit); !m.empty()) {
      if (!args.force) throw CaseError(where + memory_refusal(m));
      err << "roundtrip: warning: " << where << m << "; running anyway (--force)\n" << std::flush;
    }
  }
  // --units (each must name a column of every point's table; kBT at the point's temperature)
  // and --csv, checked before anything is written.
  std::vector<std::vector<OutputUnit>> point_units(points.size());
  if (!args.units.empty())
    for (std::size_t k = 0; k < points.size(); ++k) {
      const double T = points[k].spec.frequency.temperature_K;
      point_units[k] = parse_unit_list(args.units, "--units", T);
      const ScaleUnits su = scale_units(geometries[k]->scale());
      for (const auto& unit : point_units[k]) {
        bool used = false;
        for (const std::string& si : {std::string("m"), su.energy, su.force, su.gradient})
          used = used || unit_for({unit}, si, "--units") != nullptr;
        if (!used)
          throw CaseError(fmt::format(
              "--units = \"{}\": \"{}\" is a unit of {}; the table's columns are in m, {}, {} "
              "and {}",
              args.units, unit.name, dimension_text(unit.dim), su.energy, su.force, su.gradient));
      }
    }
  if (!args.csv.empty()) check_csv_path(args.csv, "--csv");
  std::optional<CsvTable> csv_table;
  std::vector<std::string> scan_headers;
  for (const auto& [key, value] : points.front().parameters) scan_headers.push_back(key);

  if (const std::string w = scan_material_warning(spec); !w.empty())
    err << "roundtrip: warning: " << w << "\n" << std::flush;
  const OutputChoice where = choose_output(args, spec);
  // Under MPI (solver/parallel/mpi.h) rank 0 alone writes the results and the journal.
  parallel::Session* const mpi = parallel::Session::current();
  const bool distributed = mpi && mpi->distributed();
  const bool lead = !distributed || mpi->lead();
  std::optional<ResultsWriter> writer_slot;
  std::optional<Journal> journal_slot;
  if (lead) {
    writer_slot.emplace(where.path, where.field);  // fails now if the path is unwritable
    journal_slot.emplace(journal_path(where.path), journal_key(spec), args.restart);
  }
  if (distributed) {
    try {
      mpi->agree_setup(journal_hash(journal_key(spec)));  // every rank read the same case
    } catch (const parallel::StopRun&) {
      if (journal_slot && journal_slot->loaded() == 0) journal_slot->remove();  // made just now
      throw;
    }
  }
  // Scan points that differ only where the geometry can share a frequency's work (a material
  // scan of a sphere-plate) are computed together while the first point runs (solver/run.h);
  // under MPI the first point's tasks compute them together (frequency_rounds.h).
  const std::vector<int> companion_points =
      points_computed_together(points, geometries, plans[0], limit);
  std::vector<const Geometry*> companions;
  for (int k : companion_points) companions.push_back(geometries[k].get());
  const auto share_work = [&](std::vector<parallel::SweepInput>& inputs) {
    if (companion_points.empty()) return;
    inputs[0].companions = companion_points;
    for (int k : companion_points) inputs[k].lead = 0;
  };
  if (!lead) {  // a worker rank: compute tasks for rank 0, print and write nothing
    std::vector<parallel::SweepInput> inputs;
    for (std::size_t k = 0; k < points.size(); ++k) {
      parallel::SweepInput in;
      in.geometry = geometries[k].get();
      in.gaps = points[k].spec.gaps;
      in.options.frequency = points[k].spec.frequency;
      in.options.quantities = points[k].spec.quantities;
      in.options.cancel = &cancel_requested();
      inputs.push_back(std::move(in));
    }
    share_work(inputs);
    (void)parallel::run_sweeps_distributed(inputs, args.threads);
    return kExitOk;
  }
  ResultsWriter& writer = *writer_slot;
  Journal& journal = *journal_slot;
  if (journal.loaded() > 0)
    err << fmt::format("roundtrip: resuming from {} ({} saved{})\n", journal.path().string(),
                       Progress::count_text(journal.loaded(), "contribution", "contributions"),
                       journal.had_crlf() ? "; CRLF line endings accepted" : "")
        << std::flush;
  if (const auto& bad = journal.damaged_lines(); !bad.empty()) {
    std::string lines;
    for (std::size_t i = 0; i < bad.size() && i < 20; ++i)
      lines += (i ? ", " : "") + std::to_string(bad[i]);
    err << fmt::format(
        "roundtrip: warning: {}: {} damaged record{} dropped (line{} {}{}: checksum mismatch, "
        "unreadable or not finite); {} computed again\n",
        journal.path().string(), bad.size(), bad.size() == 1 ? "" : "s", bad.size() == 1 ? "" : "s",
        lines, bad.size() > 20 ? ", ..." : "", bad.size() == 1 ? "it is" : "they are");
  }
  const bool terminal = isatty(STDERR_FILENO) == 1;
  const bool show = !args.quiet && (terminal || args.progress);

  std::vector<RunResult> distributed_results;
  std::string team_text;  // "2 ranks x 1 thread" under MPI
  if (distributed) {
    std::vector<parallel::SweepInput> inputs;
    for (std::size_t k = 0; k < points.size(); ++k) {
      parallel::SweepInput in;
      in.geometry = geometries[k].get();
      in.gaps = points[k].spec.gaps;
      in.options.frequency = points[k].spec.frequency;
      in.options.quantities = points[k].spec.quantities;
      in.options.store = journal.store(static_cast<int>(k));
      in.options.cancel = &cancel_requested();
      for (const auto& gp : plans[k].gaps) in.gap_costs.push_back(gp.flops_per_frequency);
      inputs.push_back(std::move(in));
    }
    share_work(inputs);
    // Progress as in a serial run, over the gaps of every scan point at once (they run
    // together): "gap i of N" counts the gaps of all points, point by point.
    std::vector<int> offset, freqs;
    std::vector<double> cost;
    for (std::size_t k = 0; k < points.size(); ++k) {
      offset.push_back(static_cast<int>(freqs.size()));
      for (const auto& gp : plans[k].gaps) {
        freqs.push_back(gp.frequencies);
        cost.push_back(gp.frequencies * gp.flops_per_frequency);
      }
    }
    const int all_gaps = static_cast<int>(freqs.size());
    Progress progress(err, terminal, all_gaps,
                      scan ? fmt::format("{} scan points together, ", points.size()) : "");
    progress.set_plan(std::move(freqs), std::move(cost));
    int gaps_done = 0;
    parallel::RoundProgress hooks;
    hooks.gap_started = [&](int p, int g) { progress.gap_started(offset[p] + g); };
    hooks.frequency = [&](int p, int g, int n) { progress.frequency(offset[p] + g, n); };
    hooks.gap_done = [&](int p, int g) {
      progress.gap_finished(offset[p] + g, ++gaps_done, all_gaps);
    };
    parallel::DistributedStats ds;
    distributed_results =
        parallel::run_sweeps_distributed(inputs, args.threads, &ds, show ? &hooks : nullptr);
    progress.finish();
    const int team = ds.slots_per_rank * ds.threads_per_slot;
    team_text = fmt::format("{} rank{} x {} thread{}", ds.ranks, ds.ranks == 1 ? "" : "s", team,
                            team == 1 ? "" : "s");
    for (auto& r : distributed_results) r.threads = team;
    if (!args.quiet) {
      const auto [lo, hi] = std::minmax_element(ds.busy_seconds.begin(), ds.busy_seconds.end());
      err << fmt::format(
                 "roundtrip: {}: {} tasks in {} round{} ({} computed and not used), task time "
                 "per rank {:.3g}-{:.3g} s, wall {:.3g} s\n",
                 team_text, ds.rounds.tasks, ds.rounds.rounds, ds.rounds.rounds == 1 ? "" : "s",
                 ds.rounds.speculative, *lo, *hi, ds.wall_seconds)
          << std::flush;
      if (ds.rounds.split_frequencies > 0)
        err << fmt::format(
                   "roundtrip: {}: {} frequenc{} split into {} block tasks (m blocks, k_z or "
                   "Bloch nodes: {} computed, {} not used by the sums)\n",
                   team_text, ds.rounds.split_frequencies,
                   ds.rounds.split_frequencies == 1 ? "y" : "ies", ds.rounds.block_tasks,
                   ds.rounds.block_units, ds.rounds.unused_blocks)
            << std::flush;
      if (ds.rounds.shared_values > 0)
        err << fmt::format(
                   "roundtrip: {}: {} values of scan points {} computed together with point 1\n",
                   team_text, ds.rounds.shared_values,
                   [&] {
                     std::string t;
                     for (int k : companion_points)
                       t += (t.empty() ? "" : ", ") + std::to_string(k + 1);
                     return t;
                   }())
            << std::flush;
    }
  }

  std::vector<ScanRunResult> runs;
  bool interrupted = false;
  // Planned cost of the scan points before point k (the progress ETA is that of the whole scan).
  const auto scan_start = std::chrono::steady_clock::now();
  const auto scan_cost_before = [&](std::size_t k) {
    double c = 0.0;
    for (std::size_t j = 0; j < k && j < plans.size(); ++j)
      for (const auto& gp : plans[j].gaps) c += gp.frequencies * gp.flops_per_frequency;
    return c;
  };
  SharedFrequencyValues shared;
  for (std::size_t k = 0; k < points.size(); ++k) {
    const CaseSpec& ps = points[k].spec;
    ScanRunResult run;
    if (distributed) {
      run.result = std::move(distributed_results[k]);
    } else {
      RunOptions opts;
      opts.frequency = ps.frequency;
      opts.quantities = ps.quantities;
      opts.threads = args.threads;
      opts.store = journal.store(static_cast<int>(k));
      opts.cancel = &cancel_requested();
      opts.shared = &shared;
      if (k == 0 && !distributed) opts.companions = companions;
      Progress progress(err, terminal, static_cast<int>(ps.gaps.size()),
                        scan ? fmt::format("scan point {} of {}, ", k + 1, points.size()) : "");
      if (show) {
        // Relative cost per gap from the plan's model (no timing needed): small gaps cost more.
        const Plan& plan = plans[k];
        std::vector<int> freqs;
        std::vector<double> cost;
        for (const auto& gp : plan.gaps) {
          freqs.push_back(gp.frequencies);
          cost.push_back(gp.frequencies * gp.flops_per_frequency);
        }
        progress.set_plan(std::move(freqs), std::move(cost));
        if (scan)
          progress.set_scan(scan_start, scan_cost_before(k), scan_cost_before(points.size()));
        opts.progress = [&](int done, int total) { progress.gap_done(done, total); };
        opts.gap_started = [&](int gap) { progress.gap_started(gap); };
        opts.frequency_progress = [&](int gap, int n) { progress.frequency(gap, n); };
      }
      run.result = run_sweep(*geometries[k], ps.gaps, opts);
      progress.finish();
      if (geometries[k]->parallel_inside()) run.result.threads = omp_get_max_threads();
    }
    run.info = results_info(ps);
    run.info.frequency_rule = rules_used(ps, &run.result);
    run.parameters = points[k].parameters;
    auto& pts = run.result.points;
    if (!std::all_of(pts.begin(), pts.end(), [](const PointResult& p) { return p.complete; })) {
      // Interrupted: the finished gaps go into a valid file; the journal keeps every finished
      // frequency of the unfinished ones for the next run.
      std::erase_if(pts, [](const PointResult& p) { return !p.complete; });
      run.info.complete = false;
      interrupted = true;
    }
    if (!pts.empty()) {
      if (scan)
        out << fmt::format("{}scan point {} of {}: {}\n", k == 0 ? "" : "\n", k + 1, points.size(),
                           parameters_text(run.parameters));
      TableExport ex;
      ex.units = point_units[k];
      ex.case_text = spec.text;
      if (!args.csv.empty()) {
        ex.csv = &csv_table;
        ex.prefix_headers = scan_headers;
        for (const auto& [key, value] : run.parameters) ex.prefix.push_back(value);
      }
      print_results(ps, run.result, out, ex);
      print_theta(run.result, out);
      out << std::flush;
    }
    runs.push_back(std::move(run));
    if (interrupted) break;
  }
  if (journal.reused() > 0)
    err << fmt::format("roundtrip: resumed: {} reused from {}\n",
                       Progress::count_text(journal.reused(), "contribution", "contributions"),
                       journal.path().string());

  const CommitOutcome written =
      scan ? writer.commit_scan(runs, results_info(spec), static_cast<int>(points.size()))
           : writer.commit(runs.front().result, runs.front().info);
  if (csv_table) write_text_file_atomically(args.csv, csv_table->render(), "--csv");
  std::size_t gaps_written = 0, gaps_planned = 0;
  double wall = 0.0;
  bool converged = true;
  for (const auto& run : runs) {
    gaps_written += run.result.points.size();
    wall += run.result.wall_seconds;
    for (const auto& p : run.result.points) converged = converged && p.frequencies.converged;
  }
  for (const auto& p : points) gaps_planned += p.spec.gaps.size();
  if (interrupted) {
    if (written.kept_existing)
      err << fmt::format(
          "roundtrip: interrupted: {} holds more finished work ({}) than this run and is kept; "
          "the partial results go beside it\n",
          where.path.string(),
          !written.existing.readable ? "an HDF5 file that is not readable as roundtrip results"
          : written.existing.complete
              ? "a complete run"
              : fmt::format("{} finished gaps", written.existing.finished_gaps));
    err << fmt::format(
        "roundtrip: interrupted: {} of {} gaps finished, written to {} (complete = 0); the "
        "checkpoint {} keeps every finished frequency: run the same command again to resume\n",
        gaps_written, gaps_planned, written.written.string(), journal.path().string());
    return kExitInterrupted;
  }
  if (written.removed_partial)
    err << fmt::format("roundtrip: removed {} (superseded by the complete {})\n",
                       partial_results_path(where.path).string(), where.path.string());
  journal.remove();
  const int threads = runs.front().result.threads;
  const std::string on =
      distributed ? team_text : fmt::format("{} thread{}", threads, threads == 1 ? "" : "s");
  if (distributed) wall = runs.front().result.wall_seconds;  // one sweep for every scan point
  if (scan)
    out << fmt::format("\nresults: {} ({}, {}, {:.2f} s on {})\n", where.path.string(),
                       Progress::count_text(points.size(), "scan point", "scan points"),
                       Progress::count_text(gaps_written, "gap", "gaps"), wall, on);
  else
    out << fmt::format("\nresults: {} ({} gap{}, {:.2f} s on {})\n", where.path.string(),
                       gaps_written, gaps_written == 1 ? "" : "s", wall, on);
  if (!converged) {
    err << "roundtrip: warning: some gaps missed rel_tol (marked '!'; results/converged = 0)\n";
    return kExitNotConverged;
  }
  return kExitOk;
}

int check_command(const std::string& case_path, std::ostream& out) {
  CheckArgs args;
  args.case_path = case_path;
  return check_command(args, out, std::cerr);
}

// Seconds `check` spends timing frequencies (split over the scan points; solver/plan_timing.h).
constexpr double kCheckBudgetSeconds = 2.0;

// CPU time (user + system) of this process so far, s.
double process_cpu_seconds() {
  timespec ts{};
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
  return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
}

// The output work of `run` measured on this machine (CPU time, s): a results file of the case's
// size (every planned gap of every scan point with its planned frequencies and truncations,
// values zero) written by ResultsWriter as `run` writes it (build, write, fsync, rename) to a
// file in the temporary directory, and the checkpoint journal with one record per planned
// frequency, both removed at once. Nothing is left behind; on any failure the figure is 0.
double output_cpu_seconds(const CaseSpec& spec, const std::vector<ScanPoint>& points,
                          const std::vector<std::shared_ptr<Geometry>>& geometries,
                          const std::vector<Plan>& plans) {
  const fs::path dir = fs::temp_directory_path() / fmt::format("roundtrip_check_{}", getpid());
  const double c0 = process_cpu_seconds();
  std::error_code ec;
  try {
    fs::create_directories(dir);
    std::vector<ScanRunResult> runs;
    for (std::size_t k = 0; k < points.size(); ++k) {
      ScanRunResult run;
      const Geometry& g = *geometries[k];
      run.result.kind = g.kind();
      run.result.description = g.describe();
      run.result.scale = g.scale();
      for (const GapPlan& gp : plans[k].gaps) {
        PointResult p;
        p.gap = gp.gap;
        p.truncation = gp.truncation;
        if (g.pfa_length()) p.pfa = PfaValues{};
        for (int i = 0; i < gp.frequencies; ++i)
          p.frequencies.terms.push_back(FrequencyTerm{static_cast<double>(i + 1), 1.0, {}, 0.0});
        run.result.points.push_back(std::move(p));
      }
      run.info = results_info(points[k].spec);
      run.parameters = points[k].parameters;
      runs.push_back(std::move(run));
    }
    {
      ResultsWriter w(dir / "results.h5", "check");
      if (spec.scan.empty())
        (void)w.commit(runs.front().result, runs.front().info);
      else
        (void)w.commit_scan(runs, results_info(spec), static_cast<int>(points.size()));
    }
    Journal journal(dir / "results.h5.journal", journal_key(spec), true);
    for (std::size_t k = 0; k < runs.size(); ++k) {
      ContributionStore* store = journal.store(static_cast<int>(k));
      for (std::size_t i = 0; i < runs[k].result.points.size(); ++i)
        for (const FrequencyTerm& t : runs[k].result.points[i].frequencies.terms)
          store->record(static_cast<int>(i), t.xi, Spectral{});
    }
    journal.remove();
  } catch (const std::exception&) {
    fs::remove_all(dir, ec);
    return 0.0;
  }
  fs::remove_all(dir, ec);
  return process_cpu_seconds() - c0;
}

int check_command(const CheckArgs& args, std::ostream& out, std::ostream& err) {
  if (args.threads < 0)
    throw CaseError(
        fmt::format("--threads = {}: must be >= 1 (or 0 for the default)", args.threads));
  check_thread_count(args.threads);
  if (args.threads > 0) omp_set_num_threads(args.threads);
  const MemoryLimit limit = limit_from(args.max_memory);
  // The calibration below computes real frequencies: Ctrl-C stops it within about a second.
  const CancelScope cancel_scope(&cancel_requested());
  if (!args.csv.empty()) check_csv_path(args.csv, "--csv");
  const CaseSpec spec = load_case(args.case_path);
  // `run` does this much too before its first frequency: program start and reading the case.
  const double start_cpu = process_cpu_seconds();
  const OutputChoice where = choose_output(RunArgs{}, spec);
  { ResultsWriter probe(where.path, where.field); }  // same early check as `run`; leaves nothing
  std::optional<CsvTable> csv_table;
  std::vector<std::string> scan_headers;
  std::string geometry_line;
  std::string not_built;
  try {
    geometry_line = lengths_in_case_units(build_geometry(spec)->describe(), spec.text);
  } catch (const CaseError& e) {
    not_built = e.what();
  }
  const auto row = [&](const std::string& k, const std::string& v) {
    out << fmt::format("{:<13}{}\n", k, v);
  };
  row("case", spec.path.string() + " (valid)");
  if (!spec.title.empty()) row("title", spec.title);
  row("geometry",
      spec.kind->name + (spec.kind->scalar_fields ? ", field: " + spec.field : std::string()));
  if (!geometry_line.empty()) row("bodies", geometry_line);
  for (const auto& b : spec.bodies) row(b.table, lengths_in_case_units(b.describe(), spec.text));
  const auto& nk = spec.kind->numerics_keys;
  if (std::find(nk.begin(), nk.end(), "l_max") != nk.end())
    row("l_max", spec.l_max == 0 ? std::string("automatic") : std::to_string(spec.l_max));
  row("medium", spec.medium->name());
  for (std::size_t i = 0; i < spec.materials.size(); ++i) {
    const auto& m = spec.materials[i];
    row(i == 0 ? "materials" : "", fmt::format("{}: {}", m->name(), m->description()));
    row("", fmt::format("  source: {}", m->source()));
  }
  const DisplayUnit gu = length_display_unit(spec.gaps);
  std::string gl;
  for (double g : spec.gaps) gl += (gl.empty() ? "" : ", ") + gap_text(g, gu);
  row("gaps", fmt::format("{} gap{} [{}]: {}", spec.gaps.size(), spec.gaps.size() == 1 ? "" : "s",
                          gu.name, gl));
  row("temperature", rule_sentence(spec));
  row("rel_tol", fmt::format("{}", spec.frequency.rel_tol));
  row("quantities", quantities_text(spec.quantities));
  row("output",
      where.path.string() + (spec.output_file.empty() ? " (default)" : "") + ", writable");
  if (!not_built.empty()) {
    row("note", "`roundtrip run` will fail: " + not_built);
  } else {
    const auto points = scan_points(spec);
    for (const auto& [key, value] : points.front().parameters) scan_headers.push_back(key);
    if (!spec.scan.empty()) {
      std::string axes;
      for (const auto& a : spec.scan)
        axes += fmt::format("{}{} ({})", axes.empty() ? "" : " x ", a.key,
                            Progress::count_text(a.values.size(), "value", "values"));
      if (const std::string w = scan_material_warning(spec); !w.empty()) row("warning", w);
      row("scan",
          fmt::format("{}: {}", Progress::count_text(points.size(), "point", "points"), axes));
    }
    double total = 0.0, memory = 0.0;
    std::string how, memory_warning;
    // Scan points whose model plans are equal (same gaps, truncations, frequencies and model
    // flops: a scan over materials or surface models of one shape) share one timing, and the
    // budget is split over the distinct plans only: with a quarter of the budget each, the four
    // wafers of cases/doped_silicon_under_gold_sphere.toml were extrapolated from too short a
    // ladder and estimated anywhere from 29 s to 4 h (the run: ~5 s).
    std::vector<std::shared_ptr<Geometry>> geometries;
    std::vector<RunOptions> options;
    std::vector<Plan> model_plans;
    std::vector<std::string> signatures;
    const double setup_cpu0 = process_cpu_seconds();
    for (const auto& point : points) {
      const CaseSpec& ps = point.spec;
      geometries.push_back(build_geometry(ps));
      RunOptions opts;
      opts.frequency = ps.frequency;
      opts.quantities = ps.quantities;
      opts.threads = args.threads;
      options.push_back(opts);
      model_plans.push_back(make_plan(*geometries.back(), ps.gaps, opts, PlanCalibration{}));
      std::string sig = fmt::format("{} {}|", geometries.back()->parallel_inside(),
                                    static_cast<int>(ps.quantities.order()));
      for (const auto& gp : model_plans.back().gaps) {
        sig += fmt::format("{:a} {} {:a} {:a}", gp.gap, gp.frequencies, gp.blocks,
                           gp.flops_per_frequency);
        for (const auto& [name, v] : gp.truncation) sig += fmt::format(" {}={:a}", name, v);
        sig += ";";
      }
      signatures.push_back(std::move(sig));
    }
    // Building the bodies and model plans of every point: `run` does the same before it starts.
    const double setup_cpu = process_cpu_seconds() - setup_cpu0;
    const double output_cpu = output_cpu_seconds(spec, points, geometries, model_plans);
    total += start_cpu + setup_cpu + output_cpu;
    std::vector<std::string> distinct = signatures;
    std::sort(distinct.begin(), distinct.end());
    distinct.erase(std::unique(distinct.begin(), distinct.end()), distinct.end());
    std::map<std::string, Plan> timed;  // signature -> timed plan
    // Points `run` computes together with the first (as run_command chooses them): they cost
    // only their measured marginal share of the shared frequencies.
    std::vector<const Geometry*> companions;
    std::vector<char> is_companion(points.size(), 0);
    for (int k : points_computed_together(points, geometries, model_plans[0], limit)) {
      companions.push_back(geometries[k].get());
      is_companion[k] = 1;
    }
    double marginal = 1.0;
    if (!companions.empty() && truncation_problem(*geometries[0], model_plans[0]).empty()) {
      try {
        marginal = shared_marginal_share(
            *geometries[0], companions,
            *std::max_element(points[0].spec.gaps.begin(), points[0].spec.gaps.end()), options[0]);
      } catch (const Cancelled&) {
        out << std::flush;
        err << "roundtrip: interrupted during `check` (its calibration times real frequencies); "
               "nothing was written\n"
            << std::flush;
        return kExitInterrupted;
      }
    }
    for (std::size_t k = 0; k < points.size(); ++k) {
      const CaseSpec& ps = points[k].spec;
      const auto& g = geometries[k];
      const RunOptions& opts = options[k];
      const std::string where =
          spec.scan.empty()
              ? std::string()
              : fmt::format("scan point {} ({}): ", k + 1, parameters_text(points[k].parameters));
      const auto heading = [&] {
        out << "\n";
        if (!spec.scan.empty())
          out << fmt::format("plan of scan point {} of {}: {}\n", k + 1, points.size(),
                             parameters_text(points[k].parameters));
        else
          out << "plan (estimates)\n";
      };
      // A plan beyond what can run is printed and refused (calibrate_plan times no frequency
      // whose truncation is beyond the limit: it falls back to the matrix-product rate).
      const std::string beyond = truncation_problem(*g, model_plans[k]);
      Plan plan;
      try {
        throw_if_cancelled();
        // Beyond what can run: nothing is timed (the plan is printed with model times).
        if (!beyond.empty()) {
          plan = make_plan(*g, ps.gaps, opts,
                           calibrate_plan(*g, ps.gaps, ps.frequency, ps.quantities.order()));
        } else if (const auto it = timed.find(signatures[k]); it != timed.end()) {
          plan = it->second;
        } else {
          plan = timed_plan(*g, ps.gaps, opts, kCheckBudgetSeconds / distinct.size());
          timed.emplace(signatures[k], plan);
        }
      } catch (const Cancelled&) {
        out << std::flush;
        err << "roundtrip: interrupted during `check` (its calibration times real frequencies); "
               "nothing was written\n"
            << std::flush;
        return kExitInterrupted;
      }
      if (!beyond.empty()) {
        heading();
        print_plan(plan, out);
        out << std::flush;
        throw CaseError(where + beyond);
      }
      if (is_companion[k]) {
        // Its frequencies (xi > 0) are computed in the first point's pass: the measured
        // marginal share of each gap's time (the xi = 0 term, PFA and rule are small beside it).
        for (auto& gp : plan.gaps) gp.seconds *= marginal;
        plan.seconds *= marginal;
      }
      total += plan.seconds;
      memory = std::max(memory, plan.memory_bytes);
      how = plan.calibration.how;
      if (const std::string m = memory_problem(plan, limit); !m.empty() && memory_warning.empty())
        memory_warning = where + memory_refusal(m);
      heading();
      std::vector<std::string> prefix;
      for (const auto& [key, value] : points[k].parameters) prefix.push_back(value);
      print_plan(plan, out, args.csv.empty() ? nullptr : &csv_table, scan_headers, prefix);
      // A frequency rule that cannot reach rel_tol (caps), judged on the model spectrum.
      for (double gap : ps.gaps)
        if (const std::string why = frequency_rule_problem(g->frequency_scale(gap), ps.frequency);
            !why.empty())
          out << fmt::format("warning: gap {} m: {}\n", gap, why);
    }
    out << "\n";
    row("estimate", fmt::format("about {} on {} thread{}, peak working memory {} (on a machine "
                                "the run has to itself)",
                                Progress::duration_text(total), omp_get_max_threads(),
                                omp_get_max_threads() == 1 ? "" : "s", bytes_text(memory)));
    if (!timed.empty() && timed.size() < points.size())
      how += fmt::format(
          "; {} of {} scan points timed, the others share the timing of the point with the same "
          "model plan (gaps, truncations, frequencies, model flops)",
          timed.size(), points.size());
    row("time from", lengths_in_case_units(how, spec.text));
    if (!companions.empty())
      row("", fmt::format(
                  "{} of the other scan points are computed together with point 1 "
                  "(they share work inside each frequency: a sphere-plate its "
                  "momentum nodes and Legendre recurrences, grating-grating offsets "
                  "the gratings' operators): each costs its measured marginal share, {:.0f} % of "
                  "its own time (CPU time at the largest gap and xi = c/2L, a shared "
                  "call against point 1 alone)",
                  companions.size(), 100.0 * marginal));
    row("", fmt::format("plus work outside the frequencies, measured here (CPU time): program "
                        "start and reading the case {}, bodies and model plans {}, writing a "
                        "results file and checkpoint of this case's size {}",
                        Progress::duration_text(start_cpu), Progress::duration_text(setup_cpu),
                        Progress::duration_text(output_cpu)));
    row("memory limit", limit.bytes > 0.0
                            ? fmt::format("{} ({}{}{})", bytes_text(limit.bytes), limit.source,
                                          limit.note.empty() ? "" : "; ", limit.note)
                            : std::string("unknown (no /proc/meminfo): not checked"));
    if (!memory_warning.empty()) row("warning", memory_warning);
  }
  if (csv_table) {
    write_text_file_atomically(args.csv, csv_table->render(), "--csv");
    row("csv",
        args.csv + " (the plan table" + (spec.scan.empty() ? "" : "s, scan values first") + ")");
  }
  out << "check only: no results were computed or written"
      << (csv_table ? " (but the plan's CSV file)" : "") << "\n";
  return kExitOk;
}

int preview_command(const PreviewArgs& args, std::ostream& out) {
  const CaseSpec spec = load_case(args.case_path);
  double gap = *std::min_element(spec.gaps.begin(), spec.gaps.end());
  if (!args.gap.empty()) {
    gap = parse_quantity_string(args.gap, Dimension::kLength, "--gap");
    if (const std::string p = geometry::gap_problem(gap); !p.empty())
      throw CaseError(fmt::format("--gap = \"{}\": {}", args.gap, p));
  }
  const fs::path target(args.output);
  std::error_code ec;
  const fs::path dir = target.has_parent_path() ? target.parent_path() : fs::path(".");
  if (target.extension() != ".msh")
    throw CaseError(
        fmt::format("-o = \"{}\": the preview is a Gmsh mesh, name it *.msh", args.output));
  if (!fs::is_directory(dir, ec))
    throw CaseError(
        fmt::format("-o = \"{}\": directory \"{}\" does not exist", args.output, dir.string()));
  if (access(dir.c_str(), W_OK) != 0)
    throw CaseError(
        fmt::format("-o = \"{}\": no permission to write in its directory", args.output));
  geometry::PreviewSummary s;
  try {
    s = geometry::export_gmsh(spec.configuration(), gap, target);
  } catch (const std::invalid_argument& e) {
    throw CaseError(fmt::format("-o = \"{}\": {}", args.output, e.what()));
  }
  out << fmt::format("{}: {}\n", target.string(), s.description);
  out << fmt::format(
      "{} mesh nodes, {} triangles; lengths in micrometres (um); open it with "
      "`gmsh {}`\n",
      s.nodes, s.triangles, target.string());
  if (!spec.scan.empty()) out << "(the first scan point's bodies)\n";
  return kExitOk;
}

std::string plot_script_path() {
  std::vector<fs::path> candidates;
  if (const char* env = std::getenv("ROUNDTRIP_PLOT_SCRIPT")) candidates.emplace_back(env);
  // __FILE__ is io/cli/commands.cc in the tree this program was built from.
  candidates.push_back(fs::path(__FILE__).parent_path().parent_path() / "plot" /
                       "roundtrip_plot.py");
  std::error_code ec;
  const fs::path exe = fs::read_symlink("/proc/self/exe", ec);
  if (!ec)
    candidates.push_back(exe.parent_path().parent_path() / "io" / "plot" / "roundtrip_plot.py");
  for (const auto& c : candidates)
    if (fs::is_regular_file(c, ec)) return c.string();
  return {};
}

int plot_command(const std::string& result_path, const std::string& out_dir) {
  std::error_code ec;
  if (!fs::is_regular_file(result_path, ec))
    throw CaseError(fmt::format("RESULT = \"{}\": no such file", result_path));
  if (!out_dir.empty() && !fs::is_directory(out_dir, ec))
    throw CaseError(fmt::format("-o = \"{}\": not a directory (create it first)", out_dir));
  const std::string script = plot_script_path();
  if (script.empty())
    throw CaseError(
        "the plotting script io/plot/roundtrip_plot.py was not found (set ROUNDTRIP_PLOT_SCRIPT)");
  constexpr const char* kPython = "/usr/bin/python3";  // Debian's, with matplotlib and h5py
  std::vector<std::string> args{kPython, script, result_path};
  if (!out_dir.empty()) {
    args.push_back("-o");
    args.push_back(out_dir);
  }
  std::vector<char*> argv;
  for (auto& a : args) argv.push_back(a.data());
  argv.push_back(nullptr);
  std::cout.flush();
  const pid_t pid = fork();
  if (pid < 0) throw std::runtime_error("fork failed");
  if (pid == 0) {
    execv(kPython, argv.data());
    std::perror("roundtrip: error: cannot run /usr/bin/python3");
    _exit(127);
  }
  int status = 0;
  while (waitpid(pid, &status, 0) < 0 && errno == EINTR) {
  }
  return WIFEXITED(status) && WEXITSTATUS(status) == 0 ? kExitOk : kExitInputError;
}

int materials_list_command(std::ostream& out) {
  const auto names = builtin_material_names();
  std::size_t w = 0;
  for (const auto& n : names) w = std::max(w, display_width(n));
  for (const auto& n : names) {
    const MaterialPtr m = builtin_material(n);
    out << fmt::format("{:<{}}  {}\n", n, w, m->description());
    out << fmt::format("{:<{}}  source: {}\n", "", w, m->source());
  }
  return kExitOk;
}

// NAME from the built-ins, or with --case also from the case's [materials.NAME] tables (model,
// Drude-Lorentz or tabulated optical data, read as `run` reads them).
MaterialPtr eps_material(const EpsArgs& a) {
  if (a.case_path.empty()) {
    if (MaterialPtr m = builtin_material(a.name)) return m;
    std::string known;
    for (const auto& n : builtin_material_names()) known += (known.empty() ? "" : ", ") + n;
    throw CaseError(fmt::format(
        "NAME = \"{}\": unknown material (built-in: {}; a case file's [materials.NAME] needs "
        "--case CASE.toml)",
        a.name, known));
  }
  const CaseSpec spec = load_case(a.case_path);
  const toml::table t = toml::parse(spec.text);
  const MaterialResolver resolver(t["materials"].as_table(), spec.path.parent_path());
  try {
    return resolver.get(a.name, "NAME");
  } catch (const CaseError& e) {
    throw CaseError(fmt::format("--case = \"{}\": {}", a.case_path, e.what()));
  }
}

int materials_eps_command(const EpsArgs& a, std::ostream& out) {
  const MaterialPtr m = eps_material(a);
  const double from = parse_quantity_string(a.from, Dimension::kFrequency, "--from");
  const double to = parse_quantity_string(a.to, Dimension::kFrequency, "--to");
  if (!(from > 0.0))
    throw CaseError(
        fmt::format("--from = \"{}\": must be > 0 (xi = 0 is the static limit, "
                    "shown separately)",
                    a.from));
  if (a.count < 1 || a.count > 100000)
    throw CaseError(fmt::format("--count = {}: must be between 1 and 100000", a.count));
  if (a.count > 1 && !(to > from))
    throw CaseError(fmt::format("--to = \"{}\": must be larger than --from", a.to));
  if (a.spacing != "log" && a.spacing != "linear")
    throw CaseError(fmt::format("--spacing = \"{}\": expected \"log\" or \"linear\"", a.spacing));
  if (!a.csv.empty()) check_csv_path(a.csv, "--csv");
  out << m->name() << ": " << m->description() << "\n";
  out << "source: " << m->source() << "\n";
  out << "at xi = 0: " << static_text(m->static_limit()) << "\n\n";
  TextTable t({"\u03be [rad/s]", "\u0127\u03be [eV]", "\u03b5(i\u03be)"});
  CsvTable csv({"\u03be [rad/s]", "\u0127\u03be [eV]", "\u03b5(i\u03be)"});
  for (int i = 0; i < a.count; ++i) {
    const double s = a.count == 1 ? 0.0 : static_cast<double>(i) / (a.count - 1);
    const double xi = a.spacing == "log" ? from * std::pow(to / from, s) : from + (to - from) * s;
    t.add_row({sci(xi, 6), sci(xi / kRadPerSecondPerEv, 6), sci(m->epsilon(xi), 8)});
    csv.add_row({csv_number(xi), csv_number(xi / kRadPerSecondPerEv), csv_number(m->epsilon(xi))});
  }
  out << t.render();
  if (!a.csv.empty()) write_text_file_atomically(a.csv, csv.render(), "--csv");
  return kExitOk;
}

}  // namespace roundtrip::io::cli
