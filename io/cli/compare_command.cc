#include <fmt/format.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <filesystem>
#include <iostream>

#include "io/cli/commands.h"
#include "io/cli/compare.h"
#include "io/compare.h"
#include "io/csv_export.h"
#include "io/errors.h"
#include "io/output_units.h"
#include "io/table.h"
#include "io/units.h"

namespace roundtrip::io::cli {
namespace {

namespace fs = std::filesystem;

std::string residuals_csv_path(const std::string& csv) {
  fs::path p(csv);
  const std::string ext = p.has_extension() ? p.extension().string() : ".csv";
  p.replace_filename(p.stem().string() + "_residuals" + ext);
  return p.string();
}

// A number in a unit, or "-" for NaN.
std::string in_unit(double si, double factor, int digits = 5) {
  if (!std::isfinite(si)) return "-";
  return fmt::format("{:.{}g}", si / factor, digits);
}

int run_plot_script(const std::string& script, const std::vector<std::string>& extra) {
  constexpr const char* kPython = "/usr/bin/python3";  // Debian's, with matplotlib and h5py
  std::vector<std::string> args{kPython, script};
  args.insert(args.end(), extra.begin(), extra.end());
  std::vector<char*> argv;
  for (auto& a : args) argv.push_back(a.data());
  argv.push_back(nullptr);
  std::cout.flush();
  const pid_t pid = fork();
  if (pid < 0) return -1;
  if (pid == 0) {
    execv(kPython, argv.data());
    std::perror("roundtrip: error: cannot run /usr/bin/python3");
    _exit(127);
  }
  int status = 0;
  while (waitpid(pid, &status, 0) < 0 && errno == EINTR) {
  }
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

}  // namespace

int compare_command(const CompareArgs& args, std::ostream& out, std::ostream& err) {
  // Everything the user gave is checked before the results file is touched.
  const MeasuredData data = read_measured_csv(args.data);
  std::string name = args.name.empty() ? fs::path(args.data).stem().string() : args.name;
  if (name.empty() || name == "." || name == ".." ||
      name.find_first_not_of("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789_.-") !=
          std::string::npos)
    throw CaseError(
        fmt::format("--name = \"{}\": use letters, digits, '_', '-' and '.' only "
                    "(the group /comparison/<name> of the results file)",
                    printable(name)));
  CompareOptions options;
  if (!args.offset_range.empty()) {
    const auto [a, b] = parse_offset_range(args.offset_range, "--offset-range");
    options.fit_offset = true;
    options.offset_min = a;
    options.offset_max = b;
  }
  if (!args.csv.empty()) {
    check_csv_path(args.csv, "--csv");
    check_csv_path(residuals_csv_path(args.csv), "--csv");
  }
  std::error_code ec;
  if (!args.no_plot && !args.plot_dir.empty() && !fs::is_directory(args.plot_dir, ec))
    throw CaseError(
        fmt::format("--plot-dir = \"{}\": not a directory (create it first)", args.plot_dir));
  const std::vector<ModelCurve> models = read_models(args.results, data);
  // Units of the printed tables: the data's own unless --units says otherwise.
  OutputUnit gap_unit = data.gap_unit, value_unit = data.value_unit;
  if (!args.units.empty()) {
    const auto list = parse_unit_list(args.units, "--units");
    for (const auto& u : list) {
      if (u.dim == gap_unit.dim)
        gap_unit = u;
      else if (u.dim == value_unit.dim)
        value_unit = u;
      else
        throw CaseError(fmt::format(
            "--units = \"{}\": \"{}\" is a unit of {}, but the tables show lengths and the "
            "data's {} ({})",
            args.units, u.name, dimension_text(u.dim), data.quantity,
            dimension_text(data.value_unit.dim)));
    }
  }
  std::vector<ModelComparison> results;
  for (const auto& m : models) results.push_back(compare_model(data, m, options));

  // Summary.
  const auto [lo, hi] = std::minmax_element(data.gap.begin(), data.gap.end());
  out << fmt::format("comparison \"{}\": {} ({} {} points, L = {}\u2013{} {}) against {}\n", name,
                     data.path, data.gap.size(), data.quantity, in_unit(*lo, gap_unit.factor),
                     in_unit(*hi, gap_unit.factor), gap_unit.name, args.results);
  out << (data.has_syst ? "uncertainty: \u03c3\u00b2 = stat\u00b2 + syst\u00b2 (treated as "
                          "uncorrelated)\n"
                        : "uncertainty: \u03c3 = stat_error\n");
  if (options.fit_offset)
    out << fmt::format(
        "offset: L_theory = L_measured + \u03b4, \u03b4 fitted in [{}, {}] {}; \u00b1\u03b4 from "
        "\u03c7\u00b2 \u2264 \u03c7\u00b2_min + 1, lin.: 1/\u221a\u03a3(m\u2032/\u03c3)\u00b2\n",
        in_unit(options.offset_min, gap_unit.factor), in_unit(options.offset_max, gap_unit.factor),
        gap_unit.name);
  else
    out << "offset: none fitted (--offset-range \"-5 nm, 5 nm\" fits L_theory = L_measured + "
           "\u03b4)\n";
  out << "\n";
  std::vector<std::string> head{"model", "\u03c7\u00b2", "dof", "\u03c7\u00b2/dof", "p-value"};
  if (options.fit_offset) {
    head.push_back(fmt::format("\u03b4 [{}]", gap_unit.name));
    head.push_back(fmt::format("\u00b1\u03b4 [{}]", gap_unit.name));
    head.push_back(fmt::format("\u00b1\u03b4 lin. [{}]", gap_unit.name));
  }
  head.push_back("model error/\u03c3");
  TextTable table(head);
  CsvTable csv(head);
  for (const auto& c : results) {
    std::vector<std::string> row{c.label, fmt::format("{:.4g}", c.chi2), std::to_string(c.dof),
                                 in_unit(c.reduced_chi2, 1.0, 4), in_unit(c.p_value, 1.0, 3)};
    std::vector<std::string> crow{c.label, csv_number(c.chi2), std::to_string(c.dof),
                                  csv_number(c.reduced_chi2), csv_number(c.p_value)};
    if (options.fit_offset) {
      row.push_back(in_unit(c.offset, gap_unit.factor, 4) + (c.offset_at_edge ? " (edge)" : ""));
      row.push_back(in_unit(c.offset_error, gap_unit.factor, 3));
      row.push_back(in_unit(c.offset_fisher_error, gap_unit.factor, 3));
      crow.push_back(csv_number(c.offset / gap_unit.factor));
      crow.push_back(csv_number(c.offset_error / gap_unit.factor));
      crow.push_back(csv_number(c.offset_fisher_error / gap_unit.factor));
    }
    row.push_back(in_unit(c.worst_error_ratio, 1.0, 2));
    crow.push_back(csv_number(c.worst_error_ratio));
    table.add_row(std::move(row));
    csv.add_row(std::move(crow));
  }
  out << table.render();

  // Residuals of the best model (all of them go to the CSV file and the results file).
  const auto best = std::min_element(results.begin(), results.end(),
                                     [](const auto& a, const auto& b) { return a.chi2 < b.chi2; });
  const std::vector<std::string> rhead{fmt::format("gap [{}]", gap_unit.name),
                                       fmt::format("{} [{}]", data.quantity, value_unit.name),
                                       fmt::format("\u03c3 [{}]", value_unit.name),
                                       fmt::format("model [{}]", value_unit.name),
                                       fmt::format("residual [{}]", value_unit.name),
                                       "residual/\u03c3",
                                       fmt::format("model error [{}]", value_unit.name)};
  out << fmt::format("\nresiduals of the model with the lowest \u03c7\u00b2 ({}){}:\n", best->label,
                     best->offset_fitted
                         ? fmt::format(", at L_measured + {} {}",
                                       in_unit(best->offset, gap_unit.factor, 4), gap_unit.name)
                         : "");
  TextTable rt(rhead);
  std::vector<std::string> all_head{"model"};
  all_head.insert(all_head.end(), rhead.begin(), rhead.end());
  CsvTable rcsv(all_head);
  for (const auto& c : results)
    for (std::size_t i = 0; i < data.gap.size(); ++i) {
      const double vf = value_unit.factor;
      if (&c == &*best)
        rt.add_row({in_unit(data.gap[i], gap_unit.factor, 6), in_unit(data.value[i], vf, 6),
                    in_unit(data.sigma(i), vf, 3), in_unit(c.model[i], vf, 6),
                    in_unit(c.residual[i], vf, 3), fmt::format("{:.3f}", c.normalized[i]),
                    in_unit(c.model_error[i], vf, 2)});
      rcsv.add_row({c.label, csv_number(data.gap[i] / gap_unit.factor),
                    csv_number(data.value[i] / vf), csv_number(data.sigma(i) / vf),
                    csv_number(c.model[i] / vf), csv_number(c.residual[i] / vf),
                    csv_number(c.normalized[i]), csv_number(c.model_error[i] / vf)});
    }
  out << rt.render();

  // Warnings: model error not small against the data's uncertainty; offsets at the range end.
  for (const auto& c : results) {
    if (c.worst_error_ratio >= kModelErrorShareOfSigma)
      err << fmt::format(
          "roundtrip: warning: \"{}\": the model's error (interpolation bound |cubic \u2212 "
          "quadratic| + rel_tol |Q|) reaches {:.2g} \u03c3 at L = {} {} (it should stay below "
          "{} \u03c3): compute more gaps over the data's range (e.g. twice separations.count) "
          "or a smaller rel_tol, and compare again\n",
          c.label, c.worst_error_ratio, in_unit(c.worst_error_gap, gap_unit.factor, 5),
          gap_unit.name, kModelErrorShareOfSigma);
    if (c.offset_fitted && c.offset_at_edge)
      err << fmt::format(
          "roundtrip: warning: \"{}\": the best offset lies at an end of --offset-range: the "
          "minimum of \u03c7\u00b2 may lie outside it\n",
          c.label);
    else if (c.offset_fitted && !std::isfinite(c.offset_error))
      err << fmt::format(
          "roundtrip: warning: \"{}\": \u03c7\u00b2 stays below \u03c7\u00b2_min + 1 up to an end "
          "of --offset-range: the offset's uncertainty reaches beyond it\n",
          c.label);
  }

  write_comparison(args.results, name, data, options, results);
  out << fmt::format("\nwritten: {} (group /comparison/{})\n", args.results, name);
  if (!args.csv.empty()) {
    write_text_file_atomically(args.csv, csv.render(), "--csv");
    write_text_file_atomically(residuals_csv_path(args.csv), rcsv.render(), "--csv");
    out << fmt::format("written: {}, {}\n", args.csv, residuals_csv_path(args.csv));
  }
  if (!args.no_plot) {
    const std::string main_script = plot_script_path();
    const fs::path script =
        main_script.empty() ? fs::path() : fs::path(main_script).parent_path() / "compare_plot.py";
    if (script.empty() || !fs::is_regular_file(script, ec)) {
      err << "roundtrip: warning: io/plot/compare_plot.py not found: no plot drawn (set "
             "ROUNDTRIP_PLOT_SCRIPT to io/plot/roundtrip_plot.py)\n";
      return kExitOk;
    }
    std::vector<std::string> extra{args.results, "--name", name};
    if (!args.plot_dir.empty()) {
      extra.push_back("-o");
      extra.push_back(args.plot_dir);
    }
    out << std::flush;
    if (run_plot_script(script.string(), extra) != 0)
      err << "roundtrip: warning: the comparison plot could not be drawn (see above); the "
             "results file holds the comparison\n";
  }
  return kExitOk;
}

}  // namespace roundtrip::io::cli
