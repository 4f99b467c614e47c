#pragma once
// Results of one run in one HDF5 file (layout documented in README.md, "HDF5 results layout").
//
// The file is written to "<final>.tmp.<pid>" in the same directory and renamed at the end, so a
// file at the final path is always complete. The temporary file is created when the writer is
// constructed, before anything is computed: an unwritable path fails at once. All values are SI,
// each dataset carries a `units` attribute.
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
};

/// One point of a [scan] with its parameters (scan key, value as written).
struct ScanRunResult {
  RunResult result;
  ResultsInfo info;
  std::vector<std::pair<std::string, std::string>> parameters;
};

class ResultsWriter {
 public:
  /// Creates the temporary file now. Throws CaseError naming `field` and the path if the file
  /// cannot be created (missing directory, no permission, path is a directory).
  ResultsWriter(std::filesystem::path final_path, std::string field);
  ~ResultsWriter();  ///< removes the temporary file unless commit() succeeded
  ResultsWriter(const ResultsWriter&) = delete;
  ResultsWriter& operator=(const ResultsWriter&) = delete;

  /// Write everything into the temporary file, close it and rename it to the final path.
  void commit(const RunResult& result, const ResultsInfo& info);
  /// Same for a scan: one group /scan/<k> per point (layout in README.md); `points_planned`
  /// is the number of scan points of the case (more than runs.size() if interrupted).
  void commit_scan(const std::vector<ScanRunResult>& runs, const ResultsInfo& common,
                   int points_planned);
  const std::filesystem::path& path() const { return final_; }

 private:
  void write(const std::function<void(H5::H5File&)>& fill);
  std::filesystem::path final_, temp_;
  std::string field_;
  bool committed_ = false;
};

/// Async-signal-safe: unlink the temporary file of the writer that is alive, if any. For SIGINT
/// and SIGTERM handlers, so that an interrupted run leaves nothing behind.
void remove_pending_results_file() noexcept;

/// Current time as ISO 8601 UTC, e.g. "2026-12-01T18:40:00Z".
std::string iso8601_utc_now();

}  // namespace roundtrip::io
