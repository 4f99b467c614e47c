#include "io/journal.h"

#include <fcntl.h>
#include <fmt/format.h>
#include <sys/file.h>
#include <unistd.h>
#include <zlib.h>

#include <bit>
#include <cerrno>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <fstream>
#include <sstream>

#include "io/errors.h"

namespace roundtrip::io {
namespace {

constexpr const char* kMagic = "roundtrip-journal 2";
constexpr const char* kMagicV1 = "roundtrip-journal 1";  // no record checksums: never resumed
constexpr std::chrono::milliseconds kSyncInterval{200};  // power loss loses at most this much

std::string escape(const std::string& s) {
  std::string out;
  for (char c : s) {
    if (c == '\n')
      out += "\\n";
    else if (c == '\r')
      out += "\\r";
    else
      out += c;
  }
  return out;
}

std::string hex(double v) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%a", v);
  return buf;
}

std::uint64_t bits(double xi) { return std::bit_cast<std::uint64_t>(xi); }

std::string header_text(const JournalKey& key) {
  std::string h = std::string(kMagic) + "\n";
  h += fmt::format("hash {:016x}\n", journal_hash(key));
  for (const auto& [k, v] : key) h += "key " + escape(k) + " = " + escape(v) + "\n";
  h += "begin\n";
  return h;
}

// First difference between the key a journal was written for and the case now, as a sentence.
std::string first_difference(const JournalKey& old_key, const JournalKey& new_key) {
  std::map<std::string, std::string> old_map(old_key.begin(), old_key.end());
  for (const auto& [k, v] : new_key) {
    const auto it = old_map.find(escape(k));
    if (it == old_map.end()) return fmt::format("{} = {} was not set before", k, v);
    if (it->second != escape(v)) return fmt::format("{} was {}, now {}", k, it->second, v);
    old_map.erase(it);
  }
  if (!old_map.empty())
    return fmt::format("{} = {} was set before, now it is not", old_map.begin()->first,
                       old_map.begin()->second);
  return "the header hash differs";
}

// zlib's CRC-32 of a record's text (ISO 3309 / ITU-T V.42 polynomial; common practice).
std::uint32_t crc_of(const std::string& text) {
  return static_cast<std::uint32_t>(
      ::crc32(0L, reinterpret_cast<const Bytef*>(text.data()), static_cast<uInt>(text.size())));
}

std::string record_line(int point, int gap, double xi, const Spectral& s) {
  const std::string body =
      fmt::format("c {} {} {} {} {} {}", point, gap, hex(xi), hex(s.value), hex(s.d1), hex(s.d2));
  return fmt::format("{} {:08x}\n", body, crc_of(body));
}

// A record "c <point> <gap> <xi> <s> <ds/dL> <d2s/dL2> <crc32>": false if it does not parse,
// its checksum does not match its text, or a value is not finite (never taken from a journal).
bool parse_record(const std::string& line, int& point, int& gap, double v[4]) {
  if (line.size() < 2 || line[0] != 'c' || line[1] != ' ') return false;
  const auto sp = line.rfind(' ');
  const std::string body = line.substr(0, sp), crc_text = line.substr(sp + 1);
  if (crc_text.size() != 8 || crc_text.find_first_not_of("0123456789abcdef") != std::string::npos)
    return false;
  if (std::strtoul(crc_text.c_str(), nullptr, 16) != crc_of(body)) return false;
  const char* p = body.c_str() + 2;
  char* end = nullptr;
  errno = 0;
  const long a = std::strtol(p, &end, 10);
  if (end == p || errno) return false;
  p = end;
  const long b = std::strtol(p, &end, 10);
  if (end == p || errno) return false;
  p = end;
  for (int i = 0; i < 4; ++i) {
    v[i] = std::strtod(p, &end);
    if (end == p || !std::isfinite(v[i])) return false;
    p = end;
  }
  while (*p == ' ') ++p;
  if (*p != '\0' || a < 0 || b < 0 || a > 1000000000 || b > 1000000000) return false;
  point = static_cast<int>(a);
  gap = static_cast<int>(b);
  return true;
}

std::string no_space_hint(int e) {
  return e == ENOSPC || e == EDQUOT ? "; free some space and run the same command again to resume"
                                    : "";
}

// Write `s` at the end of the journal. On failure the journal is cut back to `size` (what it
// held before), so that it keeps every whole record written so far and no torn line.
void write_all(int fd, const std::string& s, const std::filesystem::path& path, bool sync,
               std::size_t& size, std::size_t records) {
  std::size_t done = 0;
  const auto fail = [&](const char* step, int e) {
    if (::ftruncate(fd, static_cast<off_t>(size)) != 0) {
      // nothing more to do: a torn last line is dropped when the journal is read
    }
    const auto dir = path.has_parent_path() ? path.parent_path() : std::filesystem::path(".");
    return StorageError(
        fmt::format("checkpoint journal \"{}\": {} failed: {}; the journal keeps every "
                    "contribution written before (at least {}){}",
                    path.string(), step, write_failure_reason(e, dir.string()), records,
                    no_space_hint(e)),
        e);
  };
  while (done < s.size()) {
    const ssize_t n = ::write(fd, s.data() + done, s.size() - done);
    if (n < 0) {
      if (errno == EINTR) continue;
      throw fail("write", errno);
    }
    done += static_cast<std::size_t>(n);
  }
  size += s.size();
  if (sync && ::fdatasync(fd) != 0 && errno != EINVAL)
    throw fail("flush to disk (fdatasync)", errno);
}

}  // namespace

std::uint64_t journal_hash(const JournalKey& key) {
  std::uint64_t h = 14695981039346656037ull;  // FNV-1a 64 offset basis
  const auto feed = [&](const std::string& s) {
    for (unsigned char c : s) {
      h ^= c;
      h *= 1099511628211ull;  // FNV-1a 64 prime
    }
    h ^= 0xff;  // separator that no UTF-8 text contains
    h *= 1099511628211ull;
  };
  for (const auto& [k, v] : key) {
    feed(k);
    feed(v);
  }
  return h;
}

class Journal::PointStore final : public ContributionStore {
 public:
  PointStore(Journal& j, int point) : j_(j), point_(point) {}
  bool lookup(int gap_index, double xi, Spectral& s) override {
    return j_.lookup(point_, gap_index, xi, s);
  }
  void record(int gap_index, double xi, const Spectral& s) override {
    j_.record(point_, gap_index, xi, s);
  }

 private:
  Journal& j_;
  int point_;
};

Journal::Journal(std::filesystem::path path, const JournalKey& key, bool restart)
    : path_(std::move(path)) {
  const std::string where = fmt::format("checkpoint journal \"{}\"", path_.string());
  // One run per journal (and so per results file): take an exclusive lock before reading, so
  // that a second run is refused instead of interleaving records or cutting the first's lines.
  fd_ = ::open(path_.c_str(), O_WRONLY | O_APPEND | O_CREAT | O_CLOEXEC, 0644);
  if (fd_ < 0)
    throw CaseError(fmt::format("{}: cannot create or open it: {}", where, std::strerror(errno)));
  if (::flock(fd_, LOCK_EX | LOCK_NB) != 0) {
    ::close(fd_);
    fd_ = -1;
    throw CaseError(fmt::format(
        "{}: another roundtrip run is writing this results file and its journal; wait for it "
        "or choose another output file (-o)",
        where));
  }
  try {
    load_or_start(key, restart, where);
  } catch (...) {
    ::close(fd_);  // releases the lock: a refused journal stays as it was
    fd_ = -1;
    throw;
  }
}

void Journal::load_or_start(const JournalKey& key, bool restart, const std::string& where) {
  std::error_code ec;
  const std::string header = header_text(key);
  bool fresh = true;
  if (std::filesystem::file_size(path_, ec) > 0 && !restart) {
    std::ifstream in(path_, std::ios::binary);
    std::ostringstream ss;
    ss << in.rdbuf();
    const std::string text = ss.str();
    // Only whole lines count: a torn last line (killed while writing) is dropped.
    const std::size_t good_end = text.rfind('\n') == std::string::npos ? 0 : text.rfind('\n') + 1;
    std::size_t offset = 0;
    int lineno = 0;
    bool crlf = false;
    // The next whole line without its line ending (CRLF accepted: a journal copied through a
    // Windows editor or transfer reads the same); false at the end of the whole lines.
    const auto next_line = [&](std::string& line) {
      if (offset >= good_end) return false;
      const std::size_t nl = text.find('\n', offset);
      line = text.substr(offset, nl - offset);
      if (!line.empty() && line.back() == '\r') {
        line.pop_back();
        crlf = true;
      }
      offset = nl + 1;
      ++lineno;
      return true;
    };
    std::string line;
    if (!next_line(line)) line = text.substr(0, std::min<std::size_t>(text.size(), 60));
    if (line == kMagicV1)
      throw CaseError(fmt::format(
          "{}: written by an older roundtrip (journal format 1, without record checksums); it "
          "is not resumed. Rerun with --restart to discard it and start over",
          where));
    if (line != kMagic)
      throw CaseError(fmt::format(
          "{}: not a roundtrip checkpoint journal (first line \"{}\"); move it away or rerun "
          "with --restart",
          where, line.substr(0, 60)));
    JournalKey old_key;
    std::string old_hash;
    bool begun = false;
    while (next_line(line)) {
      if (line == "begin") {
        begun = true;
        break;
      }
      const auto eq = line.find(" = ");
      if (line.rfind("hash ", 0) == 0) {
        old_hash = line.substr(5);
      } else if (line.rfind("key ", 0) == 0 && eq != std::string::npos) {
        old_key.emplace_back(line.substr(4, eq - 4), line.substr(eq + 3));
      } else {
        throw CaseError(fmt::format(
            "{}:{}: damaged header line \"{}\"; it will not be resumed. Rerun with --restart to "
            "discard it and start over",
            where, lineno, line.substr(0, 60)));
      }
    }
    if (!begun) {
      // A run killed while writing the header saved nothing yet: start over.
      fresh = true;
    } else {
      // Every header line against the case: the key lines one by one, then the hash line.
      JournalKey escaped;
      for (const auto& [k, v] : key) escaped.emplace_back(escape(k), escape(v));
      if (old_key != escaped)
        throw CaseError(fmt::format(
            "{}: the case changed since this checkpoint was written ({}); it will not be "
            "resumed. Rerun with --restart to discard it and start over",
            where, first_difference(old_key, key)));
      if (old_hash != fmt::format("{:016x}", journal_hash(key)))
        throw CaseError(fmt::format(
            "{}: its header hash line \"hash {}\" does not match its key lines (the header was "
            "edited or damaged); it will not be resumed. Rerun with --restart to discard it",
            where, old_hash.substr(0, 40)));
      fresh = false;
      while (next_line(line)) {
        int point = 0, gap = 0;
        double v[4];
        if (!parse_record(line, point, gap, v)) {
          damaged_lines_.push_back(lineno);  // dropped: computed again and reported
          continue;
        }
        records_[{point, gap, bits(v[0])}] = Spectral{v[1], v[2], v[3]};
      }
      loaded_ = records_.size();
      crlf_ = crlf;
      // Cut a torn tail so that appended records start on a fresh line.
      if (good_end != text.size()) {
        if (::ftruncate(fd_, static_cast<off_t>(good_end)) != 0)
          throw StorageError(
              fmt::format("{}: cannot repair its torn last line: {}", where, std::strerror(errno)),
              errno);
      }
      size_ = good_end;
    }
  }
  if (fresh) {
    if (::ftruncate(fd_, 0) != 0)
      throw StorageError(fmt::format("{}: cannot truncate it: {}", where, std::strerror(errno)),
                         errno);
    size_ = 0;
    write_all(fd_, header, path_, true, size_, 0);
  }
}

Journal::~Journal() {
  if (fd_ >= 0) {
    ::fdatasync(fd_);
    ::close(fd_);
  }
}

ContributionStore* Journal::store(int point) {
  std::lock_guard<std::mutex> lock(mutex_);
  auto& s = stores_[point];
  if (!s) s = std::make_unique<PointStore>(*this, point);
  return s.get();
}

bool Journal::lookup(int point, int gap, double xi, Spectral& s) {
  std::lock_guard<std::mutex> lock(mutex_);
  const auto it = records_.find({point, gap, bits(xi)});
  if (it == records_.end()) return false;
  s = it->second;
  ++reused_;
  return true;
}

void Journal::record(int point, int gap, double xi, const Spectral& s) {
  // A value that is not finite is never saved: a resumed run computes it again.
  if (!std::isfinite(xi) || !std::isfinite(s.value) || !std::isfinite(s.d1) || !std::isfinite(s.d2))
    return;
  const std::string line = record_line(point, gap, xi, s);
  std::lock_guard<std::mutex> lock(mutex_);
  // write() alone survives kill -9 (the kernel holds the data); fdatasync, for power loss and
  // OS crashes, costs about a millisecond here, more than a plate-plate frequency, so it runs
  // at most every kSyncInterval.
  const auto now = std::chrono::steady_clock::now();
  const bool sync = now - last_sync_ >= kSyncInterval;
  write_all(fd_, line, path_, sync, size_, records_.size());
  if (sync) last_sync_ = now;
  records_[{point, gap, bits(xi)}] = s;
}

void Journal::remove() {
  if (fd_ >= 0) ::close(fd_);
  fd_ = -1;
  std::error_code ec;
  std::filesystem::remove(path_, ec);
}

}  // namespace roundtrip::io
