#pragma once
// Progress and ETA on stderr for `roundtrip run`. On a terminal one status line is redrawn
// (carriage return) at most ten times a second; elsewhere (--progress with stderr redirected)
// plain lines: one per finished gap and, on long gaps, one every few seconds.
//   ETA = elapsed * (remaining work / work done), work counted in gaps; a running gap counts
//   as (frequencies so far) / (mean frequencies of the finished gaps), capped below 1.
// Gaps cost unequal amounts (small gaps more), so the ETA is a guide, not a promise.
#include <chrono>
#include <map>
#include <mutex>
#include <ostream>
#include <string>

namespace roundtrip::io {

class Progress {
 public:
  /// `terminal`: redraw one line; otherwise print lines. `prefix` e.g. "scan point 2/4, ".
  Progress(std::ostream& err, bool terminal, int total_gaps, std::string prefix = "");
  /// One frequency evaluated at gap `gap` (0-based), `evaluations` so far there.
  void frequency(int gap, int evaluations);
  /// A gap finished; `done` of `total` so far.
  void gap_done(int done, int total);
  /// Clear the status line (terminal) before other output.
  void finish();

  /// "12 s", "3.4 min", "1.2 h".
  static std::string duration_text(double seconds);

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
  double last_emit_;            // s since start_; lines wait kLineInterval from the start
  bool dirty_ = false;
};

}  // namespace roundtrip::io
