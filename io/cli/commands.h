#pragma once
// The commands of the `roundtrip` program, callable without the command-line parser (main.cc
// only parses options). Each returns the process exit status and writes the human-readable
// output to `out` and progress and warnings to `err`. User-input errors are thrown as
// io::CaseError; main prints them as "roundtrip: error: <message>".
#include <atomic>
#include <ostream>
#include <string>

namespace roundtrip::io::cli {

/// Exit statuses (documented in README.md, "Command-line reference").
inline constexpr int kExitOk = 0;
inline constexpr int kExitInputError = 1;     // bad case file, option or path: nothing written
inline constexpr int kExitNotConverged = 3;   // results written, but some gap missed rel_tol
inline constexpr int kExitInternalError = 4;  // a solver failure (a bug or an unhandled regime)
inline constexpr int kExitInterrupted = 130;  // Ctrl-C: finished gaps written, journal kept
// Writing failed while or after computing (no space left on device, quota, I/O error, file
// system turned read-only): the older results file and the journal are kept as they were.
inline constexpr int kExitWriteFailed = 6;

/// Set by main's SIGINT/SIGTERM handler: the run stops at the next frequency, writes what has
/// finished and keeps its checkpoint journal.
std::atomic<bool>& cancel_requested();

struct RunArgs {
  std::string case_path;
  std::string output;      ///< -o; empty: [output] file of the case, else <case stem>.h5
  int threads = 0;         ///< 0: OpenMP default
  bool quiet = false;      ///< no progress on stderr
  bool progress = false;   ///< progress even when stderr is not a terminal
  bool restart = false;    ///< discard a checkpoint journal instead of resuming from it
  std::string max_memory;  ///< --max-memory, e.g. "8 GiB"; empty: the machine's available memory
  bool force = false;      ///< run even if the plan's memory exceeds the limit
  std::string units;       ///< --units "pN, pN/nm, kBT": units of the printed table and CSV
  std::string csv;         ///< --csv FILE: the table(s) as CSV (scan values as first columns)
};
/// Refuses (io::CaseError, exit 1, nothing written) before anything runs when a truncation is
/// beyond what the code can index, or, unless `force`, when the plan's peak memory exceeds the
/// machine's available memory or --max-memory (solver/plan.h, memory_problem).
int run_command(const RunArgs& args, std::ostream& out, std::ostream& err);

struct CheckArgs {
  std::string case_path;
  int threads = 0;         ///< --threads: the thread count the plan assumes (0: all cores)
  std::string max_memory;  ///< --max-memory, as for run
  std::string csv;         ///< --csv FILE: the plan table(s) as CSV (scan values first)
};
/// Prints the plan; a memory problem is a warning line with the same sentence `run` refuses
/// with. Interrupted (SIGINT/SIGTERM during the calibration): exit kExitInterrupted.
int check_command(const CheckArgs& args, std::ostream& out, std::ostream& err);
int check_command(const std::string& case_path, std::ostream& out);

/// "8 GiB", "500 MiB", "2GB", "1.5 TiB", "123456 B" -> bytes (binary KiB..TiB, decimal kB..TB);
/// anything else, or not > 0, is an io::CaseError naming `option`.
double parse_memory_size(const std::string& text, const std::string& option);
/// Largest --threads accepted: 4 x the cores this process may use (omp_get_num_procs, else
/// std::thread::hardware_concurrency); more only make threads contend for the same cores.
int thread_cap();
/// Throws io::CaseError if threads > thread_cap(), naming the cap and the cores.
void check_thread_count(int threads);

int materials_list_command(std::ostream& out);

struct EpsArgs {
  std::string name;       ///< a built-in material, or with case_path one of the case's too
  std::string case_path;  ///< --case CASE.toml: also its [materials.NAME] (models, tables)
  std::string from = "1e13 rad/s";
  std::string to = "1e17 rad/s";
  int count = 20;
  std::string spacing = "log";  ///< "log" | "linear"
  std::string csv;              ///< --csv FILE: the table as CSV as well
};
int materials_eps_command(const EpsArgs& args, std::ostream& out);

struct PreviewArgs {
  std::string case_path;
  std::string output;  ///< -o, a .msh file
  std::string gap;     ///< --gap with unit; empty: the smallest gap of the case
};
/// Write the case's bodies at one gap as a Gmsh mesh (geometry/gmsh_export.h).
int preview_command(const PreviewArgs& args, std::ostream& out);

/// Draw the plots of a results file with io/plot/roundtrip_plot.py under /usr/bin/python3 into
/// `out_dir` (empty: beside the file); the script lists the files it wrote on stdout.
int plot_command(const std::string& result_path, const std::string& out_dir);
/// Where the plotting script is: $ROUNDTRIP_PLOT_SCRIPT, else the source tree this program was
/// built from, else <program dir>/../io/plot/. Empty if none exists.
std::string plot_script_path();

/// "roundtrip 0.1.0 (git 0123456789ab)".
std::string version_line();

}  // namespace roundtrip::io::cli
