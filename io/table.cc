#include "io/table.h"

#include <fmt/format.h>

#include <algorithm>
#include <stdexcept>

namespace roundtrip::io {

TextTable::TextTable(std::vector<std::string> headers) : headers_(std::move(headers)) {}

void TextTable::add_row(std::vector<std::string> cells) {
  if (cells.size() > headers_.size())
    throw std::invalid_argument("TextTable::add_row: more cells than columns");
  cells.resize(headers_.size());
  rows_.push_back(std::move(cells));
}

std::size_t display_width(const std::string& s) {
  // Count bytes that do not continue a multi-byte UTF-8 sequence (10xxxxxx).
  return static_cast<std::size_t>(std::count_if(
      s.begin(), s.end(), [](char c) { return (static_cast<unsigned char>(c) & 0xC0) != 0x80; }));
}

namespace {
std::string pad_left(const std::string& s, std::size_t width) {
  const std::size_t w = display_width(s);
  return w >= width ? s : std::string(width - w, ' ') + s;
}
}  // namespace

std::string TextTable::render() const {
  std::vector<std::size_t> width(headers_.size());
  for (std::size_t c = 0; c < headers_.size(); ++c) {
    width[c] = display_width(headers_[c]);
    for (const auto& r : rows_) width[c] = std::max(width[c], display_width(r[c]));
  }
  constexpr const char* kSeparator = "  ";
  std::string out;
  const auto line = [&](const auto& cell_of) {
    std::string l;
    for (std::size_t c = 0; c < headers_.size(); ++c) {
      if (c > 0) l += kSeparator;
      l += pad_left(cell_of(c), width[c]);
    }
    out += l + "\n";
  };
  line([&](std::size_t c) { return headers_[c]; });
  line([&](std::size_t c) { return std::string(width[c], '-'); });
  for (const auto& r : rows_) line([&](std::size_t c) { return r[c]; });
  return out;
}

std::string sci(double v, int digits) { return fmt::format("{:.{}e}", v, std::max(digits - 1, 0)); }

std::string fixed(double v, int decimals) { return fmt::format("{:.{}f}", v, decimals); }

DisplayUnit length_display_unit(const std::vector<double>& lengths_m) {
  constexpr double kMicrometreSwitch = 10e-6;  // above this, nm digits become unwieldy
  double largest = 0.0;
  for (double l : lengths_m) largest = std::max(largest, std::abs(l));
  if (largest >= kMicrometreSwitch) return {"\u00b5m", 1e-6};
  return {"nm", 1e-9};
}

}  // namespace roundtrip::io
