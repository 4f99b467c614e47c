// Feibelman d-parameters on a half-space (feibelman.h).
#include "solver/planar/feibelman.h"

#include <fmt/format.h>

#include <algorithm>
#include <charconv>
#include <cmath>
#include <fstream>
#include <limits>
#include <stdexcept>
#include <string_view>

#include "solver/constants.h"
#include "solver/input_error.h"
#include "solver/materials/csv_text.h"

namespace roundtrip {

std::string SurfaceParameter::describe() const {
  if (pole == 0.0) return fmt::format("{:.4g} nm", static_value * 1e9);
  return fmt::format("{:.4g} nm + ({:.4g} nm) W^2/(W^2 + xi^2), W = {:.4g} eV",
                     high_frequency * 1e9, (static_value - high_frequency) * 1e9,
                     pole / kRadPerSecondPerEv);
}

namespace {

class FeibelmanAt final : public PlanarAtFrequency {
 public:
  FeibelmanAt(std::unique_ptr<PlanarAtFrequency> plain, double xi, const Material& body,
              const Material& medium, const FeibelmanParameters& d)
      : plain_(std::move(plain)), dp_(d.perp_at(xi)), dl_(d.par_at(xi)) {
    if (xi > 0.0) {
      s_ = (xi / kSpeedOfLight) * (xi / kSpeedOfLight);
      eps_m_ = medium.epsilon(xi);
      eps_b_ = body.epsilon(xi);
    } else {
      const StaticLimit sb = body.static_limit();
      eps_m_ = medium.static_limit().static_eps;
      eps_b_ = sb.kind == StaticClass::kDielectric ? sb.static_eps
                                                   : std::numeric_limits<double>::infinity();
    }
    // u = eps_m/eps_b (0 for eps_b = inf or an overflowing eps_b s, where the eps -> inf limits
    // hold to < 1e-130 as in half_space.cc).
    u_ = std::isfinite(eps_b_) && std::isfinite(eps_b_ * s_) ? eps_m_ / eps_b_ : 0.0;
  }
  Reflection reflect(double k) const override {
    Reflection r = plain_->reflect(k);
    const double k2 = k * k;
    const double km = std::sqrt(k2 + eps_m_ * s_);
    if (km == 0.0) return r;  // k = 0 at xi = 0: no correction (linear in k)
    // kappa_b and kappa_b^2 only enter as u kappa_b and u kappa_b^2 = eps_m (k^2/eps_b + s).
    const double ukb2 = u_ == 0.0 ? eps_m_ * s_ : u_ * (k2 + eps_b_ * s_);
    const double ukb = u_ == 0.0 ? 0.0 : u_ * std::sqrt(k2 + eps_b_ * s_);
    const double den = km + ukb;
    r.tm += 2.0 * (1.0 - u_) * km * (k2 * dp_ + ukb2 * dl_) / (den * den);
    r.te *= 1.0 + 2.0 * km * dl_;
    return r;
  }

 private:
  std::unique_ptr<PlanarAtFrequency> plain_;
  double dp_, dl_, s_ = 0.0, eps_m_ = 1.0, eps_b_ = 1.0, u_ = 0.0;
};

class FeibelmanHalfSpace final : public PlanarSurface {
 public:
  FeibelmanHalfSpace(MaterialPtr m, FeibelmanParameters d)
      : m_(std::move(m)), d_(d), plain_(make_half_space(m_)) {}
  std::unique_ptr<PlanarAtFrequency> at(double xi, const Material& medium) const override {
    return std::make_unique<FeibelmanAt>(plain_->at(xi, medium), xi, *m_, medium, d_);
  }
  std::string describe() const override {
    if (d_.table)
      return fmt::format(
          "half-space of {} with Feibelman d_perp, d_par from table {} ({} rows, xi up to {:.4g} "
          "eV; d(0) = {:.4g} nm, {:.4g} nm; linear in xi between rows, constant beyond) (first "
          "order)",
          m_->name(), d_.table->origin, d_.table->xi.size(),
          d_.table->xi.back() / kRadPerSecondPerEv, d_.table->perpendicular.front() * 1e9,
          d_.table->parallel.front() * 1e9);
    return fmt::format("half-space of {} with Feibelman d_perp = {}, d_par = {} (first order)",
                       m_->name(), d_.perpendicular.describe(), d_.parallel.describe());
  }

 private:
  MaterialPtr m_;
  FeibelmanParameters d_;
  PlanarPtr plain_;
};

bool finite(const SurfaceParameter& p) {
  return std::isfinite(p.static_value) && std::isfinite(p.high_frequency) &&
         std::isfinite(p.pole) && p.pole >= 0.0;
}

}  // namespace

PlanarPtr make_feibelman_half_space(MaterialPtr material, FeibelmanParameters d) {
  if (material->is_perfect_conductor())
    throw std::invalid_argument(
        "a perfect conductor has no surface response of its own (use a Drude or plasma metal)");
  if (d.table) {
    if (const std::string why = d.table->validate(); !why.empty())
      throw std::invalid_argument("d-parameter table " + d.table->origin + ": " + why);
  } else if (!finite(d.perpendicular) || !finite(d.parallel)) {
    throw std::invalid_argument("d-parameters must be finite (pole frequency >= 0)");
  }
  return std::make_shared<FeibelmanHalfSpace>(std::move(material), d);
}

Reflection feibelman_rational(double eps_b, double eps_m, double xi, double k, double dp,
                              double dl) {
  const double s = (xi / kSpeedOfLight) * (xi / kSpeedOfLight);
  const double km = std::sqrt(k * k + eps_m * s), kb = std::sqrt(k * k + eps_b * s);
  const double de = eps_b - eps_m;
  const double tm = (eps_b * km - eps_m * kb + de * (k * k * dp + km * kb * dl)) /
                    (eps_b * km + eps_m * kb - de * (k * k * dp - km * kb * dl));
  // k_m - k_b - (k_b^2 - k_m^2) d_par = -(eps_b - eps_m) s (1/(k_m + k_b) + d_par): no
  // cancellation when eps_b s << k^2.
  const double g = de * s * dl;
  return {-de * s * (1.0 / (km + kb) + dl) / (km + kb + g), tm};
}

std::string DParameterTable::validate() const {
  if (xi.size() < 2 || perpendicular.size() != xi.size() || parallel.size() != xi.size() ||
      xi.front() != 0.0)
    return "needs at least 2 rows of xi, d_perp, d_par, the first at xi = 0";
  for (std::size_t i = 0; i < xi.size(); ++i) {
    if (!std::isfinite(xi[i]) || (i > 0 && !(xi[i] > xi[i - 1])))
      return "xi must be finite and strictly increasing";
    for (const double d : {perpendicular[i], parallel[i]})
      if (!std::isfinite(d) || std::abs(d) > kMaxDParameter)
        return "d must be finite with |d| <= 10 nm";
  }
  return {};
}

double DParameterTable::at(const std::vector<double>& d, double x) const {
  if (x >= xi.back()) return d.back();  // constant beyond the last row (feibelman.h)
  const auto it = std::upper_bound(xi.begin(), xi.end(), x);
  const std::size_t i = static_cast<std::size_t>(it - xi.begin());  // xi[i-1] <= x < xi[i]
  const double f = (x - xi[i - 1]) / (xi[i] - xi[i - 1]);
  return d[i - 1] + f * (d[i] - d[i - 1]);
}

DParameterTable read_d_parameters_csv(const std::filesystem::path& path) {
  using csv_text::printable;
  const std::string file = path.string();
  constexpr std::uintmax_t kMaxTableBytes = std::uintmax_t{1} << 30;  // as the other tables
  std::error_code ec;
  if (!std::filesystem::is_regular_file(path, ec))
    throw InputError(file + ": not a regular file (a d-parameter table is a CSV file)");
  if (const auto size = std::filesystem::file_size(path, ec); !ec && size > kMaxTableBytes)
    throw InputError(fmt::format("{}: {} bytes, more than the 1 GiB a table may have", file, size));
  std::ifstream in(path);
  if (!in) throw InputError(file + ": cannot open the d-parameter table");
  const auto error = [&](int line, const std::string& m) {
    return InputError(fmt::format("{}:{}: {}", file, line, printable(m)));
  };
  constexpr const char* kExample = "xi_eV, d_perp_nm, d_par_nm";
  // Column kinds: 0 xi, 1 d_perp, 2 d_par; each with its unit names and factors to SI.
  struct Column {
    const char* quantity;
    std::vector<std::pair<std::string, double>> units;
  };
  const Column kinds[3] = {
      {"xi", {{"xi_eV", kRadPerSecondPerEv}, {"xi_rad/s", 1.0}}},
      {"d_perp", {{"d_perp_nm", 1e-9}, {"d_perp_A", 1e-10}, {"d_perp_m", 1.0}}},
      {"d_par", {{"d_par_nm", 1e-9}, {"d_par_A", 1e-10}, {"d_par_m", 1.0}}}};
  const auto unit_list = [&](int k) {
    std::string s;
    for (const auto& [n, f] : kinds[k].units) s += (s.empty() ? "" : " | ") + n;
    return s;
  };
  int column_of[3] = {-1, -1, -1};  // kind -> column index
  double scale[3] = {0.0, 0.0, 0.0};
  std::string header[3];  // column index -> name
  bool have_header = false;
  DParameterTable t;
  t.origin = file;
  const int last_line = csv_text::for_each_record(in, [&](int line_no, std::string_view line) {
    const auto cells = csv_text::split(line);
    if (!have_header) {
      for (std::size_t c = 0; c < cells.size(); ++c) {
        int kind = -1;
        for (int k = 0; k < 3 && kind < 0; ++k)
          for (const auto& [n, f] : kinds[k].units)
            if (cells[c] == n) {
              kind = k;
              if (c < 3) scale[c] = f;
            }
        if (kind < 0)
          throw error(line_no, fmt::format("unknown column '{}' (columns: {}; {}; {})", cells[c],
                                           unit_list(0), unit_list(1), unit_list(2)));
        if (column_of[kind] >= 0)
          throw error(line_no, fmt::format("column '{}': a second {} column", cells[c],
                                           kinds[kind].quantity));
        column_of[kind] = static_cast<int>(c);
        if (c < 3) header[c] = std::string(cells[c]);
      }
      for (int k = 0; k < 3; ++k)
        if (column_of[k] < 0)
          throw error(line_no, fmt::format("header '{}': missing column {} (one of {}), e.g. '{}'",
                                           line, kinds[k].quantity, unit_list(k), kExample));
      have_header = true;
      return;
    }
    if (cells.size() != 3)
      throw error(line_no, fmt::format("expected 3 values, found {}", cells.size()));
    double v[3], si[3];
    for (int c = 0; c < 3; ++c) {
      const auto s = cells[c];
      if (!csv_text::parse_finite(s, v[c]))
        throw error(line_no, fmt::format("{} = '{}': not a finite number", header[c], s));
      si[c] = v[c] * scale[c];
    }
    const int cx = column_of[0];
    const double x = si[cx];
    if (t.xi.empty() && x != 0.0)
      throw error(line_no, fmt::format("{} = {}: the first row must be xi = 0 (d(0) is needed "
                                       "for the n = 0 term)",
                                       header[cx], v[cx]));
    if (!t.xi.empty() && !(x > t.xi.back()))
      throw error(line_no, fmt::format("{} = {}: not increasing (the rows must be in strictly "
                                       "increasing xi)",
                                       header[cx], v[cx]));
    for (int k = 1; k < 3; ++k) {
      const int c = column_of[k];
      if (!std::isfinite(si[c]) || std::abs(si[c]) > kMaxDParameter)
        throw error(line_no, fmt::format("{} = {}: |d| must be at most 10 nm (d-parameters are "
                                         "of the order of 0.1 nm; the first order in k d is "
                                         "meaningless beyond)",
                                         header[c], v[c]));
    }
    t.xi.push_back(x);
    t.perpendicular.push_back(si[column_of[1]]);
    t.parallel.push_back(si[column_of[2]]);
  });
  if (!have_header) throw error(last_line, fmt::format("no header line (e.g. '{}')", kExample));
  if (t.xi.size() < 2)
    throw error(last_line, fmt::format("{} data rows; at least 2 are needed", t.xi.size()));
  return t;
}

}  // namespace roundtrip
