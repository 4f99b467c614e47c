#pragma once
// Text helpers of the table readers in solver/materials (optical data, decreasing tables):
// trimming, comma splitting, and echoing table text in messages with control characters as
// \xNN, so that a binary file given as a table cannot drive the terminal.
#include <fmt/format.h>

#include <cctype>
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
