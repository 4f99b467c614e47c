#pragma once
// Results of one run in one HDF5 file (layout documented in README.md, "HDF5 results layout").
//
// The whole file is first built in memory (HDF5 core driver), then written with plain write()
// calls to "<final>.tmp.<pid>" in the same directory, fsync'ed, renamed over the final path and
// the directory fsync'ed: a file at the final path is always complete, and a full disk or an I/O
// error is an errno (StorageError) with the older file left as it was, never an HDF5 failure in
// the middle of a half-written file. The temporary file is created when the writer is
// constructed, before anything is computed: an unwritable path fails at once. An interrupted run
// never replaces a file that holds more finished gaps (see commit()). All values are SI, each
// dataset carries a `units` attribute.
#include <H5Cpp.h>

#include <filesystem>
#include <functional>
#include <string>
#include <utility>
#include <vector>

#include "solver/run.h"

namespace roundtrip::io {

inline constexpr const char* kResultsFormatName = "roundtrip-results";
inline constexpr int kResultsFormatVersion = 1;

/// What the file records beside the numbers.
struct ResultsInfo {
  std::string title;           ///< case title (may be empty)
  std::string case_path;       ///< path of the case file as given
  std::string case_text;       ///< the case file verbatim
  double temperature_K = 0.0;  ///< K
  double rel_tol = 0.0;
  std::string frequency_rule;  ///< e.g. "matsubara"
  Quantities quantities;       ///< which of energy / force / gradient were computed
  bool complete = true;        ///< false: interrupted, only the finished gaps are in the file
  int gaps_planned = 0;        ///< gaps the case asks for (>= the gaps in the file)
  /// Body lengths as file attributes, named with their unit, e.g. {"sphere_radius_m", R}
  /// (the geometry kind says which; solver/ and io/kinds).
  std::vector<std::pair<std::string, double>> body_lengths;
  /// Further body attributes from the kind (io/kinds/kind.h): text and numbers (named with unit).
  std::vector<std::pair<std::string, std::string>> body_texts;
  std::vector<std::pair<std::string, double>> body_numbers;
  /// results/energy_gap<p> = L^p E for each p (the kind's energy_gap_powers).
  std::vector<int> energy_gap_powers;
  /// [medium] ionic_strength (mol/m^3) and the Debye length 1/kappa at this run's temperature
  /// (m; 0 at T = 0: complete screening), written as attributes `ionic_strength`,
  /// `debye_length` with `ionic_strength_units`, `debye_length_units` when ionic_strength > 0.
  double ionic_strength = 0.0;
  double debye_length = 0.0;
};

/// One point of a [scan] with its parameters (scan key, value as written).
struct ScanRunResult {
  RunResult result;
  ResultsInfo info;
  std::vector<std::pair<std::string, std::string>> parameters;
};

/// What an existing results file holds (read from its attributes and /results/gap lengths).
struct ExistingResults {
  bool readable = false;  ///< a roundtrip results file that could be read
  bool complete = false;  ///< its `complete` attribute
  int finished_gaps = 0;  ///< gaps in it (summed over scan points)
};
ExistingResults read_existing_results(const std::filesystem::path& path);

/// Where an interrupted run puts its results when the final path holds more finished work:
/// "<stem>.partial<ext>" beside it (ext ".h5" when the final path has none).
std::filesystem::path partial_results_path(const std::filesystem::path& final_path);

/// Where commit() put the file.
struct CommitOutcome {
  std::filesystem::path written;  ///< the final path, or the partial path beside it
  bool kept_existing = false;     ///< the final path held more finished work and was kept
  ExistingResults existing;       ///< what was at the final path before
  bool removed_partial = false;   ///< a complete run removed an older partial file beside it
};

class ResultsWriter {
 public:
  /// Creates the temporary file now. Throws CaseError naming `field`, the path and the reason
  /// (missing directory, no permission, read-only file system, path is a directory), or
  /// StorageError if the device is full.
  ResultsWriter(std::filesystem::path final_path, std::string field);
  ~ResultsWriter();  ///< removes the temporary file unless commit() succeeded
  ResultsWriter(const ResultsWriter&) = delete;
  ResultsWriter& operator=(const ResultsWriter&) = delete;

  /// Build the file, write it to the temporary path, fsync and rename it to the final path. An
  /// incomplete result (info.complete false) goes to partial_results_path() instead when the
  /// final path holds a complete file, more finished gaps, or an HDF5 file that cannot be read
  /// as roundtrip results. A complete result removes an older partial file beside it.
  /// Throws StorageError (errno) if writing, fsync or rename fails; the older files are kept.
  CommitOutcome commit(const RunResult& result, const ResultsInfo& info);
  /// Same for a scan: one group /scan/<k> per point (layout in README.md); `points_planned`
  /// is the number of scan points of the case (more than runs.size() if interrupted).
  CommitOutcome commit_scan(const std::vector<ScanRunResult>& runs, const ResultsInfo& common,
                            int points_planned);
  const std::filesystem::path& path() const { return final_; }

 private:
  CommitOutcome write(const std::function<void(H5::H5File&)>& fill, bool complete,
                      int finished_gaps);
  std::filesystem::path final_, temp_;
  std::string field_;
  bool committed_ = false;
};

/// Change an existing results file atomically: its bytes are read into memory (HDF5 core driver,
/// no backing store), `modify` edits that copy, and the new image goes through the same
/// temporary file, fsync and rename as a run's results (the file at `path` is the old or the new
/// one, never a mixture). Throws CaseError naming `field` if `path` is no readable roundtrip
/// results file, StorageError if writing fails (the old file is kept).
void amend_results_file(const std::filesystem::path& path,
                        const std::function<void(H5::H5File&)>& modify, const std::string& field);

/// Async-signal-safe: unlink the temporary file of the writer that is alive, if any. For SIGINT
/// and SIGTERM handlers, so that an interrupted run leaves nothing behind.
void remove_pending_results_file() noexcept;

/// Current time as ISO 8601 UTC, e.g. "2026-12-01T18:40:00Z".
std::string iso8601_utc_now();

}  // namespace roundtrip::io
