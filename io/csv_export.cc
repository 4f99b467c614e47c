#include "io/csv_export.h"

#include <fcntl.h>
#include <fmt/format.h>
#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <stdexcept>

#include "io/errors.h"
#include "io/units.h"

namespace roundtrip::io {
namespace {

// RFC 4180: a cell with a comma, quote or line break is quoted, quotes doubled.
std::string quoted(const std::string& cell) {
  if (cell.find_first_of(",\"\r\n") == std::string::npos) return cell;
  std::string out = "\"";
  for (char c : cell) {
    if (c == '"') out += '"';
    out += c;
  }
  return out + "\"";
}

std::filesystem::path directory_of(const std::filesystem::path& p) {
  return p.has_parent_path() ? p.parent_path() : std::filesystem::path(".");
}

}  // namespace

void CsvTable::add_row(std::vector<std::string> cells) {
  if (cells.size() > headers_.size())
    throw std::invalid_argument("CsvTable::add_row: more cells than columns");
  cells.resize(headers_.size());
  rows_.push_back(std::move(cells));
}

std::string CsvTable::render() const {
  std::string out;
  const auto line = [&](const std::vector<std::string>& cells) {
    for (std::size_t c = 0; c < cells.size(); ++c) out += (c ? "," : "") + quoted(cells[c]);
    out += "\n";
  };
  line(headers_);
  for (const auto& r : rows_) line(r);
  return out;
}

std::string csv_number(double v) { return fmt::format("{}", v); }

void check_csv_path(const std::filesystem::path& path, const std::string& field) {
  std::error_code ec;
  const auto fail = [&](const std::string& why) {
    return CaseError(fmt::format("{} = \"{}\": cannot write the CSV file: {}", field,
                                 printable(path.string()), why));
  };
  if (path.empty()) throw fail("empty path");
  if (std::filesystem::is_directory(path, ec)) throw fail("it is a directory");
  const auto dir = directory_of(path);
  if (!std::filesystem::is_directory(dir, ec))
    throw fail(fmt::format("directory \"{}\" does not exist", printable(dir.string())));
  if (::access(dir.c_str(), W_OK) != 0) throw fail(write_failure_reason(errno, dir.string()));
}

void write_text_file_atomically(const std::filesystem::path& path, const std::string& text,
                                const std::string& field) {
  std::filesystem::path temp = path;
  temp += fmt::format(".tmp.{}", static_cast<long>(getpid()));
  const auto failed = [&](std::string_view step, int e) {
    std::error_code ec;
    std::filesystem::remove(temp, ec);
    return StorageError(fmt::format("{} = \"{}\": {} failed: {}", field, printable(path.string()),
                                    step, write_failure_reason(e, directory_of(path).string())),
                        e);
  };
  if (const FileWriteFailure f = write_file_synced(temp, text); f.step)
    throw failed(fmt::format("{} the file", f.step), f.error);
  if (::rename(temp.c_str(), path.c_str()) != 0) throw failed("renaming into place", errno);
}

}  // namespace roundtrip::io
