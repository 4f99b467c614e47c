// Resource guards (guards.h).
#include "solver/guards.h"

#include <algorithm>
#include <cstdint>
#include <fstream>
#include <sstream>

namespace roundtrip {
namespace {

std::atomic<const std::atomic<bool>*>& installed_flag() {
  static std::atomic<const std::atomic<bool>*> flag{nullptr};
  return flag;
}

// First number of a one-line file ("max" or a missing file: negative).
double read_number(const std::string& path) {
  std::ifstream in(path);
  std::string word;
  if (!(in >> word)) return -1.0;
  try {
    std::size_t used = 0;
    const double v = std::stod(word, &used);
    return used == word.size() && v >= 0.0 ? v : -1.0;
  } catch (...) {
    return -1.0;
  }
}

// Value of `key` in a "key value" file (memory.stat), or 0.
double stat_value(const std::string& path, const std::string& key) {
  std::ifstream in(path);
  std::string k;
  double v = 0.0;
  while (in >> k >> v)
    if (k == key) return v;
  return 0.0;
}

}  // namespace

CancelScope::CancelScope(const std::atomic<bool>* flag)
    : previous_(installed_flag().exchange(flag)) {}
CancelScope::~CancelScope() { installed_flag().store(previous_); }

bool cancellation_requested() noexcept {
  const std::atomic<bool>* f = installed_flag().load(std::memory_order_acquire);
  return f && f->load(std::memory_order_relaxed);
}

void throw_if_cancelled() {
  if (cancellation_requested()) throw Cancelled{};
}

AvailableMemory available_memory(const std::string& root) {
  AvailableMemory a;
  {
    std::ifstream in(root + "/proc/meminfo");
    std::string line;
    while (std::getline(in, line)) {
      std::istringstream s(line);
      std::string key;
      double kib = 0.0;
      if (s >> key >> kib && key == "MemAvailable:") {
        a.bytes = kib * 1024.0;
        a.source = "MemAvailable in /proc/meminfo";
      }
    }
  }
  // A limit at or above 2^60 bytes is the kernel's "no limit" (v1 writes ~2^63).
  constexpr double kNoLimit = 1152921504606846976.0;
  struct Cgroup {
    const char *limit, *usage, *stat, *inactive_key, *name;
  };
  const Cgroup groups[] = {
      {"/sys/fs/cgroup/memory.max", "/sys/fs/cgroup/memory.current", "/sys/fs/cgroup/memory.stat",
       "inactive_file", "cgroup memory.max"},
      {"/sys/fs/cgroup/memory/memory.limit_in_bytes", "/sys/fs/cgroup/memory/memory.usage_in_bytes",
       "/sys/fs/cgroup/memory/memory.stat", "total_inactive_file", "cgroup memory.limit_in_bytes"}};
  for (const Cgroup& g : groups) {
    const double limit = read_number(root + g.limit);
    if (!(limit > 0.0) || limit >= kNoLimit) continue;
    const double usage = std::max(0.0, read_number(root + g.usage));
    const double inactive = stat_value(root + g.stat, g.inactive_key);
    const double left = std::max(0.0, limit - std::max(0.0, usage - inactive));
    if (a.source.empty() || left < a.bytes) {
      a.bytes = left;
      a.source = g.name;
    }
    break;
  }
  return a;
}

}  // namespace roundtrip
