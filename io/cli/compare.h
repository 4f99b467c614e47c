#pragma once
// `roundtrip compare RESULTS.h5 DATA.csv`: chi^2, p-values, residuals and an optional gap
// offset of every model in a results file against measured data (io/compare.h), written into
// the results file as /comparison/<name> and drawn by io/plot/compare_plot.py.
#include <ostream>
#include <string>

namespace roundtrip::io::cli {

struct CompareArgs {
  std::string results;       ///< RESULTS.h5 (changed: /comparison/<name> is added)
  std::string data;          ///< DATA.csv
  std::string offset_range;  ///< --offset-range "-5 nm, 5 nm"; empty: no offset fitted
  std::string name;          ///< --name; empty: the data file's stem
  std::string units;         ///< --units "pN, nm": units of the printed tables and CSV
  std::string csv;           ///< --csv FILE: summary table; FILE_residuals.csv: all residuals
  std::string plot_dir;      ///< --plot-dir; empty: beside the results file
  bool no_plot = false;      ///< --no-plot
};
/// Exit 0; 1 bad input (nothing written); 6 writing failed (file kept as it was).
int compare_command(const CompareArgs& args, std::ostream& out, std::ostream& err);

}  // namespace roundtrip::io::cli
