#pragma once
// Plain-text tables for the terminal: a header line with units in brackets, a rule, then rows
// with numbers right-aligned. Widths count UTF-8 code points, so "µm" and "F′" line up.
#include <string>
#include <vector>

namespace roundtrip::io {

class TextTable {
 public:
  /// Column headers such as "gap [nm]" or "E/E_pfa".
  explicit TextTable(std::vector<std::string> headers);
  /// One cell per column (missing cells are left blank, extra ones are an error).
  void add_row(std::vector<std::string> cells);
  std::size_t rows() const { return rows_.size(); }
  /// The whole table, each line ending in '\n'.
  std::string render() const;

 private:
  std::vector<std::string> headers_;
  std::vector<std::vector<std::string>> rows_;
};

/// Number of UTF-8 code points (display width for the characters we print).
std::size_t display_width(const std::string& s);
/// A value in scientific notation with `digits` significant digits ("-1.234568e-03").
std::string sci(double v, int digits = 7);
/// A value in fixed notation with `decimals` places ("0.998712").
std::string fixed(double v, int decimals = 6);

/// A length unit to show a list of lengths in: "nm" below 10 µm, else "µm". Returns the factor
/// to divide SI metres by.
struct DisplayUnit {
  std::string name;
  double factor = 1.0;
};
DisplayUnit length_display_unit(const std::vector<double>& lengths_m);

}  // namespace roundtrip::io
