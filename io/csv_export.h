#pragma once
// CSV export of printed tables (`--csv FILE` of run, compare, materials eps): RFC 4180 quoting,
// UTF-8, '\n' line ends, one header row with the units in brackets as in the printed table, and
// numbers at full double precision (shortest text that reads back to the same double). Written
// like the results files: to "<file>.tmp.<pid>", fsync'ed and renamed, so the file at the path
// is never partial.
#include <filesystem>
#include <string>
#include <vector>

namespace roundtrip::io {

class CsvTable {
 public:
  explicit CsvTable(std::vector<std::string> headers) : headers_(std::move(headers)) {}
  /// Cells already as text (use csv_number for numbers); fewer cells leave the rest empty.
  void add_row(std::vector<std::string> cells);
  std::string render() const;
  const std::vector<std::string>& headers() const { return headers_; }

 private:
  std::vector<std::string> headers_;
  std::vector<std::vector<std::string>> rows_;
};

/// Shortest round-trip text of v ("1.5e-12"); "nan", "inf" as such.
std::string csv_number(double v);

/// Checks before any work that `path` can be written (directory exists, not a directory, not
/// an existing file of another kind than CSV text is not checked): CaseError naming `field`.
void check_csv_path(const std::filesystem::path& path, const std::string& field);
/// Write `text` atomically (temporary file, fsync, rename). StorageError on failure.
void write_text_file_atomically(const std::filesystem::path& path, const std::string& text,
                                const std::string& field);

}  // namespace roundtrip::io
