#pragma once
// Progress and ETA on stderr for `roundtrip run`. On a terminal one status line is redrawn
// (carriage return) at most ten times a second; elsewhere (--progress with stderr redirected)
// plain lines: one when the first gap starts ("starting gap 1 of N, frequency 1 of ~M"), one
// per finished gap and, on long gaps, one per finished frequency at most every 5 s.
//   ETA = elapsed * (remaining work / work done), for the whole run: with a scan (set_scan) the
//   elapsed time and the work of the earlier points count too, so the ETA does not restart at
//   each point. Without a plan, work is counted in gaps and a running gap counts as
//   (frequencies so far) / (mean frequencies of the finished gaps); with a plan (set_plan:
//   expected frequencies and relative cost per gap, solver/plan.h) each gap weighs its planned
//   cost and counts as n / max(expected, n + 1) after n frequencies: a gap that needs more
//   frequencies than planned is taken to need at least one more, so the last frequency's ETA is
//   about one frequency's time, not a fixed share of the whole gap.
// The plan is itself an estimate, so the ETA is a guide, not a promise.
#include <chrono>
#include <map>
#include <mutex>
#include <ostream>
#include <string>
#include <vector>

namespace roundtrip::io {

class Progress {
 public:
  /// `terminal`: redraw one line; otherwise print lines. `prefix` e.g. "scan point 2/4, ".
  Progress(std::ostream& err, bool terminal, int total_gaps, std::string prefix = "");
  /// Expected frequencies and relative cost (any unit) of each gap, from the run's plan.
  void set_plan(std::vector<int> frequencies, std::vector<double> cost);
  /// Part of a scan: the run started at `start`, the points before this one cost `before` and
  /// all points `total` (units of set_plan's cost). The ETA is then that of the whole scan.
  void set_scan(std::chrono::steady_clock::time_point start, double before, double total);
  /// Gap `gap` (0-based) starts: its first frequency is being computed.
  void gap_started(int gap);
  /// One frequency evaluated at gap `gap` (0-based), `evaluations` so far there.
  void frequency(int gap, int evaluations);
  /// A gap finished; `done` of `total` so far.
  void gap_done(int done, int total);
  /// Gap `gap` (0-based) finished, `done` of `total` so far (when the caller knows which gap,
  /// as an MPI run's rank 0 does).
  void gap_finished(int gap, int done, int total);
  /// Clear the status line (terminal) before other output.
  void finish();

  /// "12 s", "3.4 min", "1.2 h".
  static std::string duration_text(double seconds);
  /// "1 frequency", "2 frequencies": n and the singular or plural noun.
  static std::string count_text(long n, const std::string& one, const std::string& many);

 private:
  double elapsed() const;
  std::string status(double now) const;
  void emit(const std::string& line, bool force);

  std::ostream& err_;
  bool terminal_;
  int total_;
  std::string prefix_;
  std::chrono::steady_clock::time_point start_;
  std::mutex mutex_;
  int done_ = 0;
  long finished_evaluations_ = 0;
  std::map<int, int> running_;  // gap -> evaluations so far
  std::vector<int> planned_frequencies_;
  std::vector<double> planned_cost_;
  double finished_cost_ = 0.0;
  bool scan_ = false;
  std::chrono::steady_clock::time_point scan_start_;
  double scan_before_ = 0.0, scan_total_ = 0.0;
  double last_emit_;  // s since start_; lines wait kLineInterval from the start
  bool dirty_ = false;
  bool started_ = false;  // a gap has started (the first start is always shown)
};

}  // namespace roundtrip::io
