// CSV reader for positive, non-increasing tables on the imaginary axis (decreasing_table.h).
#include "solver/materials/decreasing_table.h"

#include <fmt/format.h>

#include <cctype>
#include <charconv>
#include <cmath>
#include <fstream>
#include <string_view>

#include "solver/input_error.h"
#include "solver/materials/csv_text.h"

namespace roundtrip {
namespace {

using csv_text::printable;
using csv_text::split;
using csv_text::trim;

std::string names(const ColumnUnits& u) {
  std::string s;
  for (std::size_t i = 0; i < u.size(); ++i)
    s += (i == 0 ? "" : i + 1 == u.size() ? " or " : ", ") + u[i].first;
  return s;
}

}  // namespace

DecreasingTable read_decreasing_csv(const std::filesystem::path& path,
                                    const ColumnUnits& xi_columns, const ColumnUnits& value_columns,
                                    const std::string& what) {
  const std::string file = path.string();
  constexpr std::uintmax_t kMaxTableBytes = std::uintmax_t{1} << 30;  // as optical tables
  std::error_code ec;
  if (!std::filesystem::is_regular_file(path, ec))
    throw InputError(fmt::format("{}: not a regular file (a {} table is a CSV file)", file, what));
  if (const auto size = std::filesystem::file_size(path, ec); !ec && size > kMaxTableBytes)
    throw InputError(fmt::format("{}: {} bytes, more than the 1 GiB a table may have", file, size));
  std::ifstream in(path);
  if (!in) throw InputError(fmt::format("{}: cannot open the {} table", file, what));
  const auto error = [&](int line, const std::string& m) {
    return InputError(fmt::format("{}:{}: {}", file, line, printable(m)));
  };
  const std::string example = xi_columns.front().first + ", " + value_columns.front().first;
  double xi_scale = 0.0, value_scale = 0.0;
  std::string xi_name, value_name;
  DecreasingTable t;
  t.origin = file;
  const int last_line = csv_text::for_each_record(in, [&](int line_no, std::string_view line) {
    const auto cells = split(line);
    if (xi_scale == 0.0) {
      if (cells.size() != 2)
        throw error(line_no,
                    fmt::format("header '{}': expected 2 columns, e.g. '{}'", line, example));
      xi_name = std::string(cells[0]);
      value_name = std::string(cells[1]);
      for (const auto& [n, f] : xi_columns)
        if (xi_name == n) xi_scale = f;
      if (xi_scale == 0.0)
        throw error(line_no, fmt::format("unknown column '{}' (first column: {})", cells[0],
                                         names(xi_columns)));
      for (const auto& [n, f] : value_columns)
        if (value_name == n) value_scale = f;
      if (value_scale == 0.0)
        throw error(line_no, fmt::format("unknown column '{}' (second column: {})", cells[1],
                                         names(value_columns)));
      return;
    }
    if (cells.size() != 2)
      throw error(line_no, fmt::format("expected 2 values, found {}", cells.size()));
    double v[2];
    for (int j = 0; j < 2; ++j) {
      const auto s = cells[j];
      if (!csv_text::parse_finite(s, v[j]))
        throw error(line_no, fmt::format("column {}: '{}' is not a finite number", j + 1, s));
    }
    const double xi = v[0] * xi_scale, a = v[1] * value_scale;
    if (t.xi.empty() && v[0] != 0.0)
      throw error(line_no, fmt::format("{} = {}: the first row must be xi = 0 (the static value, "
                                       "needed for the n = 0 term)",
                                       xi_name, v[0]));
    if (!(a > 0.0))
      throw error(line_no, fmt::format("{} = {}: a {} on the imaginary axis is > 0", value_name,
                                       v[1], what));
    if (!t.xi.empty() && !(xi > t.xi.back()))
      throw error(line_no, fmt::format("{} = {}: not increasing (the rows must be in increasing "
                                       "xi)",
                                       xi_name, v[0]));
    if (!t.value.empty() && a > t.value.back())
      throw error(line_no, fmt::format("{} = {}: larger than on the row before; a {} decreases "
                                       "monotonically in xi on the imaginary axis",
                                       value_name, v[1], what));
    t.xi.push_back(xi);
    t.value.push_back(a);
  });
  if (xi_scale == 0.0) throw error(last_line, fmt::format("no header line (e.g. '{}')", example));
  constexpr std::size_t kMinRows = 2;
  if (t.xi.size() < kMinRows)
    throw error(last_line,
                fmt::format("{} data rows; at least {} are needed", t.xi.size(), kMinRows));
  return t;
}

}  // namespace roundtrip
