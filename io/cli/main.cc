// roundtrip command-line program: option parsing only; the commands live in io/cli/commands.cc.
#include <fmt/format.h>
#include <unistd.h>

#include <CLI/CLI.hpp>
#include <csignal>
#include <cstdlib>
#include <exception>
#include <iostream>
#include <optional>
#include <string>

#include "io/cli/commands.h"
#include "io/cli/compare.h"
#include "io/errors.h"
#include "io/results_hdf5.h"
#include "solver/parallel/mpi.h"

namespace cli = roundtrip::io::cli;

namespace {
// The first Ctrl-C (or SIGTERM, or for `run` SIGUSR1) asks the run to stop: it writes the finished
// gaps and keeps its checkpoint journal. A second one removes the temporary results file and dies
// of the signal.
extern "C" void on_terminate(int sig) {
  if (!cli::cancel_requested().exchange(true)) return;  // lock-free atomic: signal-safe
  roundtrip::io::remove_pending_results_file();
  std::signal(sig, SIG_DFL);
  std::raise(sig);
}
}  // namespace

int main(int argc, char** argv) {
  // OpenMP threads that wait spin briefly (GOMP_SPINCOUNT = 10000, ~0.1 ms), then sleep, unless
  // the user chose (OMP_WAIT_POLICY or GOMP_SPINCOUNT set). libgomp's default 3 ms of spinning
  // made 2 threads burn 2.5x the CPU of 1 thread on a loaded machine; sleeping at once cost
  // ~10 % of wall time on a quiet one (README "Performance"). libgomp reads the variables once,
  // before main(), so the program starts itself again with it set; if that fails it goes on.
  if (std::getenv("OMP_WAIT_POLICY") == nullptr && std::getenv("GOMP_SPINCOUNT") == nullptr) {
    ::setenv("GOMP_SPINCOUNT", "10000", 1);
    ::execv("/proc/self/exe", argv);
  }
  std::signal(SIGINT, on_terminate);
  std::signal(SIGTERM, on_terminate);
  CLI::App app{
      "roundtrip computes Casimir (fluctuation-induced) energies, forces and force gradients\n"
      "between bodies made of real materials at any temperature, and compares them with the\n"
      "proximity force approximation (PFA).",
      "roundtrip"};
  app.set_version_flag("--version", cli::version_line(), "Print the version and exit");
  app.require_subcommand(1);
  app.footer(
      "Case-file reference: README.md. Exit status: 0 ok, 1 bad input or a plan refused for\n"
      "memory or truncation (nothing written),\n"
      "2 bad command line, 3 results written but not converged, 4 solver failure,\n"
      "6 writing failed (no space left on device, I/O error; older files kept),\n"
      "130 interrupted (finished gaps written; the same command resumes).");

  cli::RunArgs run_args;
  CLI::App* run = app.add_subcommand("run", "Compute a case, print a table, write an HDF5 file");
  run->add_option("CASE", run_args.case_path, "Case file (TOML)")->required();
  run->add_option("-o,--output", run_args.output,
                  "Results file (HDF5); overrides [output] file of the case");
  // The cap (4 x the cores) is checked by the command: exit 1 with the cap and the cores.
  const std::string threads_help = fmt::format(
      "Worker threads (default: all cores; at most {}, 4 x the cores)", cli::thread_cap());
  run->add_option("--threads", run_args.threads, threads_help)->check(CLI::PositiveNumber);
  run->add_option("--max-memory", run_args.max_memory,
                  "Refuse a case whose planned peak memory exceeds this, e.g. \"8 GiB\" "
                  "(default: the memory available to this process)");
  run->add_flag("--force", run_args.force,
                "Run even if the planned peak memory exceeds the available memory or "
                "--max-memory");
  run->add_flag("--quiet", run_args.quiet, "No progress messages on stderr");
  run->add_flag("--progress", run_args.progress,
                "Progress and ETA on stderr even when it is not a terminal");
  run->add_option("--units", run_args.units,
                  "Units of the table and CSV, one per kind of column, e.g. \"nm, pN, pN/nm\", "
                  "\"mPa\", \"kBT\" (default: SI)");
  run->add_option("--csv", run_args.csv,
                  "Also write the table(s) to this CSV file (scan points stacked, scan values "
                  "first)");
  run->add_flag("--restart", run_args.restart,
                "Discard the checkpoint journal of an earlier run instead of resuming it");

  cli::CheckArgs check_args;
  CLI::App* check = app.add_subcommand(
      "check", "Validate a case; print the plan, truncations and a memory and time estimate");
  check->add_option("CASE", check_args.case_path, "Case file (TOML)")->required();
  check->add_option("--threads", check_args.threads, "Threads the plan assumes (as for run)")
      ->check(CLI::PositiveNumber);
  check->add_option("--max-memory", check_args.max_memory,
                    "Warn if the planned peak memory exceeds this (as for run)");
  check->add_option("--csv", check_args.csv,
                    "Also write the plan table(s) to this CSV file (scan points stacked, scan "
                    "values first; memory in bytes, time in seconds)");

  std::string plot_path, plot_dir;
  CLI::App* plot = app.add_subcommand(
      "plot", "Plots of a results file (PNG and SVG), by io/plot/roundtrip_plot.py");
  plot->add_option("RESULT", plot_path, "Results file (HDF5) written by `roundtrip run`")
      ->required();
  plot->add_option("-o,--output-dir", plot_dir,
                   "Directory for the plots (default: beside the results file)");

  cli::CompareArgs compare_args;
  CLI::App* compare = app.add_subcommand(
      "compare", "Compare every model of a results file with measured data (chi^2, offset)");
  compare
      ->add_option("RESULTS", compare_args.results,
                   "Results file (HDF5); the comparison is added as /comparison/<name>")
      ->required();
  compare
      ->add_option("DATA", compare_args.data,
                   "Measured data (CSV: gap, force|gradient|pressure|energy, stat_error, "
                   "optional syst_error; units in the header)")
      ->required();
  compare->add_option("--offset-range", compare_args.offset_range,
                      "Fit L_theory = L_measured + delta within this range, e.g. \"-5 nm, 5 nm\"");
  compare->add_option("--name", compare_args.name,
                      "Name of the comparison group (default: the data file's stem)");
  compare->add_option("--units", compare_args.units,
                      "Units of the printed tables and CSV, e.g. \"nm, pN\" (default: the data's)");
  compare->add_option("--csv", compare_args.csv,
                      "Also write the summary table to this CSV file and every model's "
                      "residuals to <stem>_residuals.csv");
  compare->add_option("--plot-dir", compare_args.plot_dir,
                      "Directory for the plot (default: beside the results file)");
  compare->add_flag("--no-plot", compare_args.no_plot, "Draw no plot");

  cli::PreviewArgs preview_args;
  CLI::App* preview = app.add_subcommand(
      "preview", "Write the bodies of a case at one gap as a Gmsh mesh (.msh) to look at");
  preview->add_option("CASE", preview_args.case_path, "Case file (TOML)")->required();
  preview->add_option("-o,--output", preview_args.output, "Mesh file to write (*.msh)")->required();
  preview->add_option("--gap", preview_args.gap,
                      "Gap with unit, e.g. \"200 nm\" (default: the smallest gap of the case)");

  CLI::App* materials = app.add_subcommand("materials", "Built-in materials");
  materials->require_subcommand(1);
  CLI::App* list =
      materials->add_subcommand("list", "Built-in materials with description and source");
  cli::EpsArgs eps_args;
  CLI::App* eps = materials->add_subcommand(
      "eps", "Table of eps(i xi) of a built-in material or of a case file's [materials.NAME]");
  eps->add_option("NAME", eps_args.name,
                  "Material name (see `roundtrip materials list`, or a [materials.NAME] of the "
                  "--case file)")
      ->required();
  eps->add_option("--case", eps_args.case_path,
                  "Case file (TOML) whose [materials.NAME] tables (models, tabulated optical "
                  "data) are known too");
  eps->add_option("--from", eps_args.from, "Lowest imaginary frequency, with unit")
      ->capture_default_str();
  eps->add_option("--to", eps_args.to, "Highest imaginary frequency, with unit")
      ->capture_default_str();
  eps->add_option("--count", eps_args.count, "Number of frequencies")->capture_default_str();
  eps->add_option("--spacing", eps_args.spacing, "log or linear")->capture_default_str();
  eps->add_option("--csv", eps_args.csv, "Also write the table to this CSV file");

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    if (e.get_exit_code() == 0) return app.exit(e);  // --help, --version
    std::cerr << "roundtrip: error: " << e.what() << "\n"
              << "run 'roundtrip --help' or 'roundtrip <command> --help' for usage\n";
    return 2;
  }

  // `run` under mpirun or srun: one MPI session per process (solver/parallel/mpi.h).
  namespace parallel = roundtrip::parallel;
  std::optional<parallel::Session> mpi;
  if (*run) {
    if (!parallel::mpi_built() && parallel::launched_world_size() > 1) {
      std::cerr << "roundtrip: error: started as one of " << parallel::launched_world_size()
                << " MPI processes, but " << parallel::not_built_text() << "\n";
      return cli::kExitInputError;
    }
    mpi.emplace(&argc, &argv);
    mpi->set_before_abort([] { roundtrip::io::remove_pending_results_file(); });
    // SIGUSR1 stops a run as SIGTERM does. OpenMPI's mpirun passes SIGUSR1 on to every rank
    // and then reports the ranks' status (130), whereas a SIGTERM to mpirun itself makes it exit
    // with 1 and kill the ranks a second later (README "Clusters (MPI)").
    std::signal(SIGUSR1, on_terminate);
  }
  int status = 2;
  std::string error;  // printed as "roundtrip: error: <error>"
  try {
    if (*run) status = cli::run_command(run_args, std::cout, std::cerr);
    if (*check) status = cli::check_command(check_args, std::cout, std::cerr);
    if (*plot) status = cli::plot_command(plot_path, plot_dir);
    if (*compare) status = cli::compare_command(compare_args, std::cout, std::cerr);
    if (*preview) status = cli::preview_command(preview_args, std::cout);
    if (*list) status = cli::materials_list_command(std::cout);
    if (*eps) status = cli::materials_eps_command(eps_args, std::cout);
  } catch (const parallel::StopRun& stop) {  // another rank failed; its message is printed
    status = stop.status;
  } catch (const roundtrip::io::StorageError& e) {
    error = e.what();
    status = cli::kExitWriteFailed;
  } catch (const roundtrip::io::CaseError& e) {
    error = e.what();
    status = cli::kExitInputError;
  } catch (const std::exception& e) {
    error = std::string("the solver failed: ") + e.what();
    status = cli::kExitInternalError;
  }
  std::cout << std::flush;
  if (mpi) return mpi->finish(status, error);
  if (!error.empty()) std::cerr << "roundtrip: error: " << error << "\n";
  return status;
}
