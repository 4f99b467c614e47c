// CSV reader for optical constants (tabulated.h).
//
// Format: lines starting with '#' are comments; the first other line names three comma-separated
// columns: the abscissa "energy_eV", "wavelength_nm" or "wavelength_um", then "n,k" (refractive
// index) or "eps1,eps2" (dielectric function, eps = eps1 + i eps2, eps2 >= 0 for a passive
// medium). Then one row of numbers per line, strictly monotone in the abscissa (either
// direction). Conversions: omega = E / hbar, omega = 2 pi c / lambda; eps1 = n^2 - k^2,
// eps2 = 2 n k (standard).
#include <fmt/format.h>

#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <fstream>
#include <string_view>

#include "solver/constants.h"
#include "solver/input_error.h"
#include "solver/materials/csv_text.h"
#include "solver/materials/tabulated.h"

namespace roundtrip {
namespace {

using csv_text::printable;
using csv_text::split;
using csv_text::trim;

std::string lower(std::string_view s) {
  std::string out(s);
  for (auto& ch : out) ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
  return out;
}

}  // namespace

OpticalData read_optical_csv(const std::filesystem::path& path) {
  const std::string file = path.string();
  // Only regular files: a device (/dev/zero) or a pipe would be read until memory runs out. A
  // table of 10^7 rows is ~400 MB; 1 GiB is above any optical table.
  constexpr std::uintmax_t kMaxTableBytes = std::uintmax_t{1} << 30;
  std::error_code ec;
  if (!std::filesystem::is_regular_file(path, ec))
    throw InputError(fmt::format("{}: not a regular file (an optical table is a CSV file)", file));
  if (const auto size = std::filesystem::file_size(path, ec); !ec && size > kMaxTableBytes)
    throw InputError(
        fmt::format("{}: {} bytes, more than the 1 GiB an optical table may have", file, size));
  std::ifstream in(path);
  if (!in) throw InputError(fmt::format("{}: cannot open optical table", file));
  const auto error = [&](int line, const std::string& what) {
    return InputError(fmt::format("{}:{}: {}", file, line, printable(what)));
  };
  enum class Abscissa { kEnergyEv, kWavelengthNm, kWavelengthUm } abscissa{};
  bool header = false, nk = false;
  std::vector<double> x, c1, c2;
  std::vector<int> lines;
  const int last_line = csv_text::for_each_record(in, [&](int line_no, std::string_view line) {
    const auto cells = split(line);
    if (!header) {
      if (cells.size() != 3)
        throw error(line_no, fmt::format("header '{}': expected 3 columns (abscissa, n,k or "
                                         "eps1,eps2)",
                                         line));
      const std::string a = lower(cells[0]), b = lower(cells[1]), c = lower(cells[2]);
      if (a == "energy_ev")
        abscissa = Abscissa::kEnergyEv;
      else if (a == "wavelength_nm")
        abscissa = Abscissa::kWavelengthNm;
      else if (a == "wavelength_um")
        abscissa = Abscissa::kWavelengthUm;
      else
        throw error(line_no, fmt::format("unknown column '{}' (first column: energy_eV, "
                                         "wavelength_nm or wavelength_um)",
                                         cells[0]));
      if (b == "n" && c == "k")
        nk = true;
      else if (b == "eps1" && c == "eps2")
        nk = false;
      else
        throw error(line_no, fmt::format("unknown columns '{}, {}' (expected n, k or eps1, eps2)",
                                         cells[1], cells[2]));
      header = true;
      return;
    }
    if (cells.size() != 3)
      throw error(line_no, fmt::format("expected 3 values, found {}", cells.size()));
    double v[3];
    for (int j = 0; j < 3; ++j) {
      const auto s = cells[j];
      if (!csv_text::parse_finite(s, v[j]))
        throw error(line_no, fmt::format("column {}: '{}' is not a finite number", j + 1, s));
    }
    if (!(v[0] > 0.0)) throw error(line_no, fmt::format("abscissa {} must be > 0", v[0]));
    if (nk && (!(v[1] >= 0.0) || !(v[2] >= 0.0)))
      throw error(line_no, fmt::format("n = {}, k = {}: both must be >= 0", v[1], v[2]));
    if (!nk && !(v[2] >= 0.0))
      throw error(line_no,
                  fmt::format("eps2 = {} < 0: a passive medium absorbs (eps2 >= 0)", v[2]));
    if (x.size() >= 2 && ((v[0] > x.back()) != (x[1] > x[0]) || v[0] == x.back()))
      throw error(line_no, fmt::format("abscissa {} breaks the monotone order of the table", v[0]));
    if (x.size() == 1 && v[0] == x.back())
      throw error(line_no, fmt::format("abscissa {} repeats the previous row", v[0]));
    x.push_back(v[0]);
    c1.push_back(v[1]);
    c2.push_back(v[2]);
    lines.push_back(line_no);
  });
  if (!header) throw error(last_line, "no header line (e.g. 'energy_eV, n, k')");
  constexpr std::size_t kMinRows = 4;  // same minimum as TabulatedMaterial
  if (x.size() < kMinRows)
    throw error(last_line, fmt::format("{} data rows; at least {} are needed", x.size(), kMinRows));
  OpticalData d;
  d.origin = file;
  const std::size_t n = x.size();
  for (std::size_t i = 0; i < n; ++i) {
    double w = 0.0;
    switch (abscissa) {
      case Abscissa::kEnergyEv:
        w = x[i] * kRadPerSecondPerEv;
        break;
      case Abscissa::kWavelengthNm:
        w = 2.0 * kPi * kSpeedOfLight / (x[i] * 1e-9);
        break;
      case Abscissa::kWavelengthUm:
        w = 2.0 * kPi * kSpeedOfLight / (x[i] * 1e-6);
        break;
    }
    d.omega.push_back(w);
    d.eps1.push_back(nk ? c1[i] * c1[i] - c2[i] * c2[i] : c1[i]);
    d.eps2.push_back(nk ? 2.0 * c1[i] * c2[i] : c2[i]);
  }
  if (d.omega.size() > 1 && d.omega[1] < d.omega[0]) {
    std::reverse(d.omega.begin(), d.omega.end());
    std::reverse(d.eps1.begin(), d.eps1.end());
    std::reverse(d.eps2.begin(), d.eps2.end());
  }
  return d;
}

}  // namespace roundtrip
