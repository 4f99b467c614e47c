#pragma once
// Text helpers of the table readers (optical data, decreasing tables, d-parameter tables):
// the record loop, trimming, comma splitting, finite numbers, and echoing table text in messages
// with control characters as \xNN, so that a binary file given as a table cannot drive the
// terminal.
#include <fmt/format.h>

#include <cctype>
#include <charconv>
#include <cmath>
#include <istream>
#include <string>
#include <string_view>
#include <vector>

namespace roundtrip::csv_text {

inline std::string_view trim(std::string_view s) {
  while (!s.empty() && std::isspace(static_cast<unsigned char>(s.front()))) s.remove_prefix(1);
  while (!s.empty() && std::isspace(static_cast<unsigned char>(s.back()))) s.remove_suffix(1);
  return s;
}

/// The comma-separated fields of a line, each trimmed (an empty line gives one empty field).
inline std::vector<std::string_view> split(std::string_view line) {
  std::vector<std::string_view> out;
  std::size_t start = 0;
  for (;;) {
    const std::size_t comma = line.find(',', start);
    out.push_back(trim(line.substr(start, comma - start)));
    if (comma == std::string_view::npos) break;
    start = comma + 1;
  }
  return out;
}

/// Calls f(line_no, line) for every record of a table text: the first line without a UTF-8
/// byte-order mark (spreadsheet exports write one; it is not part of the first cell), each line
/// trimmed, blank lines and '#' comments skipped. Returns the number of the last line read (for
/// messages about the end of the table).
template <class F>
int for_each_record(std::istream& in, F&& f) {
  std::string text;
  int line_no = 0;
  while (std::getline(in, text)) {
    ++line_no;
    if (line_no == 1 && text.starts_with("\xEF\xBB\xBF")) text.erase(0, 3);
    const std::string_view line = trim(text);
    if (line.empty() || line.front() == '#') continue;
    f(line_no, line);
  }
  return line_no;
}

/// The whole cell as a finite number (no trailing characters, no nan or inf).
inline bool parse_finite(std::string_view s, double& v) {
  const auto res = std::from_chars(s.data(), s.data() + s.size(), v);
  return res.ec == std::errc() && res.ptr == s.data() + s.size() && std::isfinite(v);
}

inline std::string printable(std::string_view s) {
  std::string out;
  for (const char ch : s) {
    const auto c = static_cast<unsigned char>(ch);
    if ((c < 0x20 && c != '\t') || c == 0x7F)
      out += fmt::format("\\x{:02X}", c);
    else
      out += ch;
  }
  return out;
}

}  // namespace roundtrip::csv_text
