#include "io/progress.h"

#include <fmt/format.h>

#include <algorithm>

namespace roundtrip::io {
namespace {
constexpr double kTerminalInterval = 0.1;  // s between redraws: readable, cheap
constexpr double kLineInterval = 5.0;      // s between lines on long gaps when not a terminal
constexpr double kRunningCap = 0.95;       // without a plan: a running gap never counts as done
}  // namespace

Progress::Progress(std::ostream& err, bool terminal, int total_gaps, std::string prefix)
    : err_(err),
      terminal_(terminal),
      total_(total_gaps),
      prefix_(std::move(prefix)),
      start_(std::chrono::steady_clock::now()),
      last_emit_(terminal ? -1e9 : 0.0) {}

double Progress::elapsed() const {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start_).count();
}

std::string Progress::duration_text(double s) {
  if (s < 0.1) return fmt::format("{:.2g} ms", 1e3 * s);
  if (s < 100.0) return fmt::format("{:.1f} s", s);
  if (s < 6000.0) return fmt::format("{:.1f} min", s / 60.0);
  return fmt::format("{:.1f} h", s / 3600.0);
}

std::string Progress::count_text(long n, const std::string& one, const std::string& many) {
  return fmt::format("{} {}", n, n == 1 ? one : many);
}

void Progress::set_scan(std::chrono::steady_clock::time_point start, double before, double total) {
  std::lock_guard<std::mutex> lock(mutex_);
  scan_ = true;
  scan_start_ = start;
  scan_before_ = before;
  scan_total_ = total;
}

void Progress::set_plan(std::vector<int> frequencies, std::vector<double> cost) {
  std::lock_guard<std::mutex> lock(mutex_);
  if (frequencies.size() != cost.size() || static_cast<int>(cost.size()) != total_) return;
  planned_frequencies_ = std::move(frequencies);
  planned_cost_ = std::move(cost);
}

std::string Progress::status(double now) const {
  double work = 0.0, total_work = 0.0;
  const auto planned = [&](int gap) {
    return gap >= 0 && gap < static_cast<int>(planned_frequencies_.size()) &&
           planned_frequencies_[gap] > 0;
  };
  if (!planned_cost_.empty()) {
    for (double c : planned_cost_) total_work += c;
    work = finished_cost_;
    for (const auto& [gap, n] : running_)
      if (planned(gap))
        work += planned_cost_[gap] * static_cast<double>(n) /
                std::max(planned_frequencies_[gap], n + 1);
  } else {
    total_work = total_;
    work = done_;
    const double mean = done_ > 0 ? static_cast<double>(finished_evaluations_) / done_ : 0.0;
    for (const auto& [gap, n] : running_)
      if (mean > 0.0) work += std::min(n / mean, kRunningCap);
  }
  // A scan: the whole run's elapsed time and work (its earlier points are finished).
  double elapsed_all = now;
  if (scan_ && !planned_cost_.empty()) {
    elapsed_all =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - scan_start_).count();
    work += scan_before_;
    total_work = std::max(scan_total_, total_work);
  }
  std::string eta = "ETA unknown";
  if (work > 0.0 && (done_ < total_ || work < total_work))
    eta = "ETA " + duration_text(elapsed_all * std::max(total_work - work, 0.0) / work);
  if (done_ == total_ && !(scan_ && work < total_work)) eta = "done";
  std::string freq;
  for (const auto& [gap, n] : running_) {
    freq += freq.empty() ? ", " : "; ";
    freq +=
        planned(gap)
            ? fmt::format("{} of ~{} frequencies at gap {}", n, planned_frequencies_[gap], gap + 1)
            : fmt::format("{} at gap {}", count_text(n, "frequency", "frequencies"), gap + 1);
  }
  return fmt::format("roundtrip: {}gap {} of {} done{} ({}, {})", prefix_, done_, total_, freq,
                     duration_text(elapsed_all), eta);
}

void Progress::emit(const std::string& line, bool force) {
  const double now = elapsed();
  const double interval = terminal_ ? kTerminalInterval : kLineInterval;
  if (!force && now - last_emit_ < interval) return;
  last_emit_ = now;
  if (terminal_) {
    err_ << "\r\033[K" << line << std::flush;
    dirty_ = true;
  } else {
    err_ << line << "\n" << std::flush;
  }
}

void Progress::gap_started(int gap) {
  std::lock_guard<std::mutex> lock(mutex_);
  running_[gap] = 0;
  const bool first = !started_;
  started_ = true;
  if (!terminal_ && !first) return;  // lines: only the first start; later ones show in updates
  const bool planned = gap >= 0 && gap < static_cast<int>(planned_frequencies_.size()) &&
                       planned_frequencies_[gap] > 0;
  emit(fmt::format("roundtrip: {}starting gap {} of {}, frequency 1{}", prefix_, gap + 1, total_,
                   planned ? fmt::format(" of ~{}", planned_frequencies_[gap]) : ""),
       first);
}

void Progress::frequency(int gap, int evaluations) {
  std::lock_guard<std::mutex> lock(mutex_);
  running_[gap] = evaluations;
  // Not a terminal: lines only for gaps that take long (no line per frequency).
  if (!terminal_ && elapsed() - last_emit_ < kLineInterval) return;
  emit(status(elapsed()), false);
}

void Progress::gap_done(int done, int total) {
  std::lock_guard<std::mutex> lock(mutex_);
  done_ = done;
  total_ = total;
  // RunOptions::progress does not say which gap finished; take the running gap with the most
  // evaluations (exact when gaps run one at a time, as sphere-plate does; a guess otherwise).
  if (!running_.empty()) {
    auto it = std::max_element(running_.begin(), running_.end(),
                               [](const auto& a, const auto& b) { return a.second < b.second; });
    finished_evaluations_ += it->second;
    if (it->first >= 0 && it->first < static_cast<int>(planned_cost_.size()))
      finished_cost_ += planned_cost_[it->first];
    running_.erase(it);
  }
  emit(status(elapsed()), true);
}

void Progress::gap_finished(int gap, int done, int total) {
  std::lock_guard<std::mutex> lock(mutex_);
  done_ = done;
  total_ = total;
  if (const auto it = running_.find(gap); it != running_.end()) {
    finished_evaluations_ += it->second;
    running_.erase(it);
  }
  if (gap >= 0 && gap < static_cast<int>(planned_cost_.size()))
    finished_cost_ += planned_cost_[gap];
  emit(status(elapsed()), true);
}

void Progress::finish() {
  std::lock_guard<std::mutex> lock(mutex_);
  if (terminal_ && dirty_) err_ << "\r\033[K" << std::flush;
  dirty_ = false;
}

}  // namespace roundtrip::io
