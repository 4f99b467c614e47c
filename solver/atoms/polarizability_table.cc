// alpha(i xi) from a table (polarizability.h: read_polarizability_csv, make_table_polarizability).
//
// Interpolation: 1/alpha linear in xi^2 between the rows. For one oscillator
// alpha = a w^2/(w^2 + xi^2), 1/alpha = (w^2 + xi^2)/(a w^2) is linear in xi^2, so the rule is
// exact for it (derived) and keeps alpha positive and monotone between monotone rows. Beyond the
// last row xi_N: alpha = alpha_N (xi_N/xi)^2, the 1/xi^2 fall of any sum of oscillators (the
// Thomas-Reiche-Kuhn tail; standard), continuous at xi_N.
#include <fmt/format.h>

#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <fstream>
#include <string_view>

#include "solver/atoms/polarizability.h"
#include "solver/constants.h"
#include "solver/input_error.h"

namespace roundtrip {
namespace {

std::string_view trim(std::string_view s) {
  while (!s.empty() && std::isspace(static_cast<unsigned char>(s.front()))) s.remove_prefix(1);
  while (!s.empty() && std::isspace(static_cast<unsigned char>(s.back()))) s.remove_suffix(1);
  return s;
}

std::vector<std::string_view> split(std::string_view line) {
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

std::string printable(std::string_view s) {
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

class TablePolarizability final : public Polarizability {
 public:
  TablePolarizability(PolarizabilityTable t) : t_(std::move(t)) {
    for (std::size_t i = 0; i < t_.xi.size(); ++i) {
      x_.push_back(t_.xi[i] * t_.xi[i]);
      inv_.push_back(1.0 / t_.alpha[i]);
    }
    // The half-value frequency (alpha(i w) = alpha(0)/2) as the scale; the last row if the
    // table stops before.
    const double half = 2.0 / t_.alpha.front();
    w_ = t_.xi.back();
    for (std::size_t i = 1; i < x_.size(); ++i)
      if (inv_[i] >= half) {
        const double f = (half - inv_[i - 1]) / (inv_[i] - inv_[i - 1]);
        w_ = std::sqrt(x_[i - 1] + f * (x_[i] - x_[i - 1]));
        break;
      }
  }
  double alpha(double xi) const override {
    const double x = xi * xi;
    if (x >= x_.back()) {
      const double r = t_.xi.back() / xi;
      return t_.alpha.back() * r * r;
    }
    const auto it = std::upper_bound(x_.begin(), x_.end(), x);
    const std::size_t i = static_cast<std::size_t>(it - x_.begin());  // x_[i-1] <= x < x_[i]
    const double f = (x - x_[i - 1]) / (x_[i] - x_[i - 1]);
    return 1.0 / (inv_[i - 1] + f * (inv_[i] - inv_[i - 1]));
  }
  double characteristic_frequency() const override { return w_; }
  std::string name() const override { return "table"; }
  std::string description() const override {
    return fmt::format(
        "table {} ({} rows, xi up to {:.4g} eV), alpha(0) = {:.6g} m^3 ({:.6g} a.u.); 1/alpha "
        "linear in xi^2 between rows, alpha ~ 1/xi^2 beyond",
        t_.origin, t_.xi.size(), t_.xi.back() / kRadPerSecondPerEv, t_.alpha.front(),
        t_.alpha.front() / kBohrVolume);
  }

 private:
  PolarizabilityTable t_;
  std::vector<double> x_, inv_;
  double w_ = 0.0;
};

}  // namespace

PolarizabilityTable read_polarizability_csv(const std::filesystem::path& path) {
  const std::string file = path.string();
  constexpr std::uintmax_t kMaxTableBytes = std::uintmax_t{1} << 30;  // as optical tables
  std::error_code ec;
  if (!std::filesystem::is_regular_file(path, ec))
    throw InputError(
        fmt::format("{}: not a regular file (a polarizability table is a CSV file)", file));
  if (const auto size = std::filesystem::file_size(path, ec); !ec && size > kMaxTableBytes)
    throw InputError(fmt::format("{}: {} bytes, more than the 1 GiB a table may have", file, size));
  std::ifstream in(path);
  if (!in) throw InputError(fmt::format("{}: cannot open polarizability table", file));
  const auto error = [&](int line, const std::string& what) {
    return InputError(fmt::format("{}:{}: {}", file, line, printable(what)));
  };
  double xi_scale = 0.0, alpha_scale = 0.0;
  std::string xi_name, alpha_name;
  PolarizabilityTable t;
  t.origin = file;
  std::string text;
  int line_no = 0;
  while (std::getline(in, text)) {
    ++line_no;
    if (line_no == 1 && text.starts_with("\xEF\xBB\xBF")) text.erase(0, 3);
    const std::string_view line = trim(text);
    if (line.empty() || line.front() == '#') continue;
    const auto cells = split(line);
    if (xi_scale == 0.0) {
      if (cells.size() != 2)
        throw error(line_no,
                    fmt::format("header '{}': expected 2 columns, e.g. 'xi_eV, alpha_au'", line));
      xi_name = std::string(cells[0]);
      alpha_name = std::string(cells[1]);
      if (xi_name == "xi_eV")
        xi_scale = kRadPerSecondPerEv;
      else if (xi_name == "xi_rad/s")
        xi_scale = 1.0;
      else if (xi_name == "xi_au")
        xi_scale = kHartreeFrequency;
      else
        throw error(line_no, fmt::format("unknown column '{}' (first column: xi_eV, xi_rad/s or "
                                         "xi_au)",
                                         cells[0]));
      if (alpha_name == "alpha_au")
        alpha_scale = kBohrVolume;
      else if (alpha_name == "alpha_m^3")
        alpha_scale = 1.0;
      else if (alpha_name == "alpha_A^3" || alpha_name == "alpha_Å^3")
        alpha_scale = 1e-30;
      else
        throw error(line_no, fmt::format("unknown column '{}' (second column: alpha_au, "
                                         "alpha_m^3 or alpha_A^3, a volume alpha/(4 pi eps_0))",
                                         cells[1]));
      continue;
    }
    if (cells.size() != 2)
      throw error(line_no, fmt::format("expected 2 values, found {}", cells.size()));
    double v[2];
    for (int j = 0; j < 2; ++j) {
      const auto s = cells[j];
      const auto res = std::from_chars(s.data(), s.data() + s.size(), v[j]);
      if (res.ec != std::errc() || res.ptr != s.data() + s.size() || !std::isfinite(v[j]))
        throw error(line_no, fmt::format("column {}: '{}' is not a finite number", j + 1, s));
    }
    const double xi = v[0] * xi_scale, a = v[1] * alpha_scale;
    if (t.xi.empty() && v[0] != 0.0)
      throw error(line_no, fmt::format("{} = {}: the first row must be xi = 0 (the static "
                                       "polarizability, needed for the n = 0 term)",
                                       xi_name, v[0]));
    if (!(a > 0.0))
      throw error(line_no, fmt::format("{} = {}: a polarizability on the imaginary axis is > 0",
                                       alpha_name, v[1]));
    if (!t.xi.empty() && !(xi > t.xi.back()))
      throw error(line_no, fmt::format("{} = {}: not increasing (the rows must be in increasing "
                                       "xi)",
                                       xi_name, v[0]));
    if (!t.alpha.empty() && a > t.alpha.back())
      throw error(line_no, fmt::format("{} = {}: larger than on the row before; alpha(i xi) "
                                       "decreases monotonically in xi (a sum of f/(w^2 + xi^2), "
                                       "f >= 0)",
                                       alpha_name, v[1]));
    t.xi.push_back(xi);
    t.alpha.push_back(a);
  }
  if (xi_scale == 0.0) throw error(line_no, "no header line (e.g. 'xi_eV, alpha_au')");
  constexpr std::size_t kMinRows = 2;
  if (t.xi.size() < kMinRows)
    throw error(line_no,
                fmt::format("{} data rows; at least {} are needed", t.xi.size(), kMinRows));
  return t;
}

PolarizabilityPtr make_table_polarizability(PolarizabilityTable table) {
  const auto& xi = table.xi;
  const auto& a = table.alpha;
  if (xi.size() < 2 || xi.size() != a.size() || xi.front() != 0.0)
    throw std::invalid_argument(
        "a polarizability table needs at least 2 rows, the first at xi = 0");
  for (std::size_t i = 0; i < xi.size(); ++i) {
    if (!(a[i] > 0.0) || !std::isfinite(a[i]))
      throw std::invalid_argument("polarizability table: alpha must be finite and > 0");
    if (i > 0 && (!(xi[i] > xi[i - 1]) || a[i] > a[i - 1]))
      throw std::invalid_argument(
          "polarizability table: xi must increase and alpha must not increase");
  }
  return std::make_shared<TablePolarizability>(std::move(table));
}

}  // namespace roundtrip
