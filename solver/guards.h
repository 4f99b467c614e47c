#pragma once
// Resource guards shared by the solver and the program:
//  - cooperative cancellation: one process-wide flag (set by the SIGINT/SIGTERM handler of the
//    program, or by a caller's own flag) that long loops poll (throw_if_cancelled) so that a
//    request is honoured within about a second, even inside one long frequency. Polling only
//    reads the flag: results that are not cancelled are bit-for-bit the same.
//  - the largest truncation the dense sphere-plate code can index (int ranges), and
//  - the memory this process may use: MemAvailable of /proc/meminfo, lowered by a cgroup limit.
#include <atomic>
#include <string>

namespace roundtrip {

/// Thrown by throw_if_cancelled(). Deliberately not a std::exception: handlers of solver
/// failures must not take a cancellation for one. run_sweep and `roundtrip check` catch it; code
/// inside OpenMP regions catches it there and rethrows after the region.
struct Cancelled {};

/// Installs `flag` (may be null) as the process-wide cancellation flag until the scope ends,
/// then restores the previous one. Not for use from several threads at once.
class CancelScope {
 public:
  explicit CancelScope(const std::atomic<bool>* flag);
  ~CancelScope();
  CancelScope(const CancelScope&) = delete;
  CancelScope& operator=(const CancelScope&) = delete;

 private:
  const std::atomic<bool>* previous_;
};

/// True if the installed flag is set (false without one). Cheap: one or two atomic loads.
bool cancellation_requested() noexcept;
/// Throws Cancelled if cancellation_requested().
void throw_if_cancelled();

/// Largest multipole order l_max (and 2 l_max + 1 momentum-rule degree) the sphere-plate code
/// may be asked for: its row, node and band indices are int, products like 2 (l_max + 1) and
/// the quadrature degree 2 l_max must stay far below 2^31. Anything beyond is a plan refusal
/// (solver/plan.h), never a silently wrapped value.
inline constexpr double kMaxMultipoleOrder = 1e8;

struct AvailableMemory {
  double bytes = 0.0;  ///< what the process may still allocate; 0 if unknown
  std::string source;  ///< e.g. "MemAvailable in /proc/meminfo" or "cgroup memory.max"
};

/// Memory available to this process: MemAvailable from <root>/proc/meminfo, and, if a cgroup
/// memory limit is set (v2: <root>/sys/fs/cgroup/memory.max, v1:
/// <root>/sys/fs/cgroup/memory/memory.limit_in_bytes), at most the limit minus the cgroup's
/// usage, not counting its inactive file cache (reclaimable; the "working set" of common
/// practice). `root` is for tests ("" = the real files).
AvailableMemory available_memory(const std::string& root = "");

}  // namespace roundtrip
