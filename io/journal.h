#pragma once
// Checkpoint journal: every finished per-frequency contribution s(xi) of a run is appended to
// "<results file>.journal" as it completes, so that an interrupted run (Ctrl-C, kill -9, power
// loss) resumes without recomputing it. Layout (text, one item per line, documented in
// README.md, "HDF5 layout"):
//   roundtrip-journal 2
//   hash <16 hex digits>              FNV-1a 64 of the key lines below
//   key <dotted.case.key> = <value>   the case content that fixes the numbers (title and
//   ...                               [output] excluded), plus the program version
//   begin
//   c <scan point> <gap index> <xi> <s> <ds/dL> <d2s/dL2> <crc>   hexfloats: exact doubles;
//                                     crc: zlib CRC-32 of the text before it, 8 hex digits
// Each record is handed to the kernel with one write() before the solver goes on, so a killed
// process (kill -9, a crash) loses no finished contribution; fdatasync follows at most every
// 0.2 s (and at the end), so a power loss or OS crash loses at most that much. A torn last line
// is dropped on reopening; a record whose checksum does not match, that does not parse or holds
// a value that is not finite is dropped (damaged_lines(): the caller reports them) and computed
// again. Every header line is compared with the case. CRLF line endings are accepted. A failed
// write (no space left on device, ...) throws StorageError and cuts the journal back to its
// last whole record. Units as in geometry.h (xi in rad/s; s in 1, or 1/m^2 per area).
#include <atomic>
#include <chrono>
#include <cstdint>
#include <filesystem>
#include <map>
#include <memory>
#include <mutex>
#include <string>
#include <tuple>
#include <utility>
#include <vector>

#include "solver/run.h"

namespace roundtrip::io {

/// The fields a journal is valid for: (dotted key, value as written), in a fixed order.
using JournalKey = std::vector<std::pair<std::string, std::string>>;

/// FNV-1a 64-bit hash of the key lines (Fowler, Noll, Vo; common practice for checksums).
std::uint64_t journal_hash(const JournalKey& key);

class Journal {
 public:
  /// Opens `path`. If it exists and was written for `key`, its records are loaded (resume).
  /// If it exists for another key (any header line differs), throws CaseError naming the first
  /// field that differs, unless `restart` (then it is discarded). A damaged header is a
  /// CaseError too; damaged records are dropped (damaged_lines()).
  Journal(std::filesystem::path path, const JournalKey& key, bool restart);
  ~Journal();
  Journal(const Journal&) = delete;
  Journal& operator=(const Journal&) = delete;

  /// The store for scan point `point` (0 without a scan); owned by the journal.
  ContributionStore* store(int point);
  /// Contributions loaded from disk when the journal was opened.
  std::size_t loaded() const { return loaded_; }
  /// Line numbers (1-based) of damaged records dropped when the journal was opened.
  const std::vector<int>& damaged_lines() const { return damaged_lines_; }
  /// The journal read had CRLF line endings (accepted).
  bool had_crlf() const { return crlf_; }
  /// Lookups answered from the journal so far.
  std::size_t reused() const { return reused_.load(); }
  const std::filesystem::path& path() const { return path_; }
  /// Delete the journal file (after the results file is safely in place).
  void remove();

 private:
  class PointStore;
  void load_or_start(const JournalKey& key, bool restart, const std::string& where);
  bool lookup(int point, int gap, double xi, Spectral& s);
  void record(int point, int gap, double xi, const Spectral& s);

  std::filesystem::path path_;
  int fd_ = -1;
  std::mutex mutex_;
  std::map<std::tuple<int, int, std::uint64_t>, Spectral> records_;
  std::size_t loaded_ = 0;
  std::size_t size_ = 0;  ///< bytes of whole lines in the file
  std::vector<int> damaged_lines_;
  bool crlf_ = false;
  std::chrono::steady_clock::time_point last_sync_{};
  std::atomic<std::size_t> reused_{0};
  std::map<int, std::unique_ptr<PointStore>> stores_;
};

}  // namespace roundtrip::io
