#include "io/compare.h"

#include <H5Cpp.h>
#include <fmt/format.h>

#include <algorithm>
#include <boost/math/distributions/chi_squared.hpp>
#include <boost/math/tools/minima.hpp>
#include <boost/math/tools/roots.hpp>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <limits>
#include <sstream>

#include "io/errors.h"
#include "io/hdf5_helpers.h"
#include "io/results_hdf5.h"
#include "io/units.h"
#include "roundtrip/version.h"

namespace roundtrip::io {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
// A data gap this close (relative) to a computed gap takes the computed value itself.
constexpr double kSameGap = 1e-12;

std::string trim(const std::string& s) {
  const auto a = s.find_first_not_of(" \t\r");
  if (a == std::string::npos) return {};
  const auto b = s.find_last_not_of(" \t\r");
  return s.substr(a, b - a + 1);
}

std::vector<std::string> split_commas(const std::string& line) {
  std::vector<std::string> out;
  std::string cell;
  std::istringstream in(line);
  while (std::getline(in, cell, ',')) out.push_back(trim(cell));
  if (!line.empty() && line.back() == ',') out.push_back("");
  return out;
}

// "force [pN]" -> ("force", "pN"); false without brackets.
bool name_and_unit(const std::string& cell, std::string& name, std::string& unit) {
  const auto open = cell.find('[');
  const auto close = cell.rfind(']');
  if (open == std::string::npos || close == std::string::npos || close < open ||
      trim(cell.substr(close + 1)) != "")
    return false;
  name = trim(cell.substr(0, open));
  unit = trim(cell.substr(open + 1, close - open - 1));
  return !name.empty() && !unit.empty();
}

bool parse_number(const std::string& s, double& v) {
  if (s.empty()) return false;
  char* end = nullptr;
  v = std::strtod(s.c_str(), &end);
  return end == s.c_str() + s.size() && std::isfinite(v);
}

std::string text_attr(const H5::H5Object& obj, const std::string& name) {
  if (!obj.attrExists(name)) return {};
  const H5::Attribute a = obj.openAttribute(name);
  std::string v;
  a.read(a.getStrType(), v);
  return v;
}
double double_attr(const H5::H5Object& obj, const std::string& name, double fallback) {
  if (!obj.attrExists(name)) return fallback;
  double v = fallback;
  obj.openAttribute(name).read(H5::PredType::NATIVE_DOUBLE, &v);
  return v;
}
std::vector<double> read_vector(const H5::Group& g, const std::string& name) {
  const H5::DataSet ds = g.openDataSet(name);
  hsize_t n = 0;
  ds.getSpace().getSimpleExtentDims(&n);
  std::vector<double> v(n);
  if (n > 0) ds.read(v.data(), H5::PredType::NATIVE_DOUBLE);
  return v;
}

// Lagrange interpolation through (x[i], y[i]), i in idx, at t: value and derivative.
void lagrange(const std::vector<double>& x, const std::vector<double>& y,
              const std::vector<std::size_t>& idx, double t, double& value, double& slope) {
  value = 0.0;
  slope = 0.0;
  for (std::size_t a = 0; a < idx.size(); ++a) {
    double basis = 1.0, dbasis = 0.0;
    for (std::size_t b = 0; b < idx.size(); ++b) {
      if (b == a) continue;
      const double den = x[idx[a]] - x[idx[b]];
      // d/dt of a product: dbasis accumulates the product rule.
      dbasis = dbasis * (t - x[idx[b]]) / den + basis / den;
      basis *= (t - x[idx[b]]) / den;
    }
    value += y[idx[a]] * basis;
    slope += y[idx[a]] * dbasis;
  }
}

}  // namespace

double MeasuredData::sigma(std::size_t i) const {
  return std::sqrt(stat[i] * stat[i] + (has_syst ? syst[i] * syst[i] : 0.0));
}

MeasuredData read_measured_csv(const std::filesystem::path& path) {
  MeasuredData d;
  d.path = path.string();
  std::error_code ec;
  if (!std::filesystem::is_regular_file(path, ec))
    throw CaseError(fmt::format("DATA = \"{}\": no such file", printable(d.path)));
  {
    std::ifstream in(path, std::ios::binary);
    std::ostringstream s;
    s << in.rdbuf();
    d.text = s.str();
  }
  constexpr std::size_t kMaxBytes = std::size_t{64} << 20;  // a typo guard: data files are small
  if (d.text.size() > kMaxBytes)
    throw CaseError(
        fmt::format("{}: larger than 64 MiB: not a table of measured points", printable(d.path)));
  const auto at = [&](int line, const std::string& what) {
    return CaseError(fmt::format("{}:{}: {}", printable(d.path), line, what));
  };
  std::istringstream in(d.text);
  std::string raw;
  int line_no = 0;
  std::vector<std::string> names;
  while (std::getline(in, raw)) {
    ++line_no;
    std::string line = raw;
    if (line_no == 1 && line.rfind("\xEF\xBB\xBF", 0) == 0) line.erase(0, 3);  // UTF-8 BOM
    line = trim(line);
    if (line.empty() || line[0] == '#') continue;
    const std::vector<std::string> cells = split_commas(line);
    if (names.empty()) {
      // The header: gap [unit], <quantity> [unit], stat_error [unit][, syst_error [unit]].
      const std::string expected =
          "expected a header such as `gap [nm], force [pN], stat_error [pN], syst_error [pN]` "
          "(quantity: force, gradient, pressure or energy; syst_error optional)";
      if (cells.size() < 3 || cells.size() > 4)
        throw at(line_no, fmt::format("header \"{}\": {} columns; {}", printable(line),
                                      cells.size(), expected));
      std::vector<std::string> units(cells.size());
      names.resize(cells.size());
      for (std::size_t c = 0; c < cells.size(); ++c)
        if (!name_and_unit(cells[c], names[c], units[c]))
          throw at(line_no, fmt::format("column {} = \"{}\": no unit in brackets; {}", c + 1,
                                        printable(cells[c]), expected));
      const auto field = [&](std::size_t c) {
        return fmt::format("{}:{}: column {} ({})", printable(d.path), line_no, c + 1,
                           printable(names[c]));
      };
      if (names[0] != "gap")
        throw at(line_no, fmt::format("column 1 = \"{}\": must be `gap`; {}", printable(names[0]),
                                      expected));
      d.gap_unit = parse_output_unit(units[0], field(0));
      if (!(d.gap_unit.dim == Dimension3{0, 1, 0}))
        throw at(line_no, fmt::format("column 1 (gap) = \"{}\": not a length unit", units[0]));
      d.quantity = names[1];
      if (d.quantity != "force" && d.quantity != "gradient" && d.quantity != "pressure" &&
          d.quantity != "energy")
        throw at(line_no, fmt::format("column 2 = \"{}\": the quantity must be force, gradient, "
                                      "pressure or energy",
                                      printable(names[1])));
      d.value_unit = parse_output_unit(units[1], field(1));
      if (d.quantity == "pressure" && !(d.value_unit.dim == Dimension3{1, -1, -2}))
        throw at(line_no, fmt::format("column 2 (pressure) = \"{}\": not a pressure unit (Pa, "
                                      "mPa, ...)",
                                      units[1]));
      if (d.quantity == "force" && !(d.value_unit.dim == Dimension3{1, 1, -2}) &&
          !(d.value_unit.dim == Dimension3{1, 0, -2}))
        throw at(line_no, fmt::format("column 2 (force) = \"{}\": not a force unit (N, pN, ...; "
                                      "N/m per length; for plates use `pressure`)",
                                      units[1]));
      if (names[2] != "stat_error")
        throw at(line_no, fmt::format("column 3 = \"{}\": must be `stat_error`; {}",
                                      printable(names[2]), expected));
      d.error_unit = parse_output_unit(units[2], field(2));
      if (!(d.error_unit.dim == d.value_unit.dim))
        throw at(line_no, fmt::format("column 3 (stat_error) = \"{}\": not a unit of the {} "
                                      "column (\"{}\")",
                                      units[2], d.quantity, units[1]));
      if (cells.size() == 4) {
        if (names[3] != "syst_error")
          throw at(line_no, fmt::format("column 4 = \"{}\": must be `syst_error`; {}",
                                        printable(names[3]), expected));
        d.syst_unit = parse_output_unit(units[3], field(3));
        if (!(d.syst_unit.dim == d.value_unit.dim))
          throw at(line_no, fmt::format("column 4 (syst_error) = \"{}\": not a unit of the {} "
                                        "column (\"{}\")",
                                        units[3], d.quantity, units[1]));
        d.has_syst = true;
      }
      continue;
    }
    if (cells.size() != names.size())
      throw at(line_no,
               fmt::format("{} values, the header has {} columns", cells.size(), names.size()));
    double v[4] = {0, 0, 0, 0};
    for (std::size_t c = 0; c < cells.size(); ++c) {
      if (!parse_number(cells[c], v[c]))
        throw at(line_no, fmt::format("column {} ({}) = \"{}\": not a finite number", c + 1,
                                      names[c], printable(cells[c])));
    }
    const auto bad = [&](std::size_t c, const char* what) {
      return at(line_no,
                fmt::format("column {} ({}) = \"{}\": {}", c + 1, names[c], cells[c], what));
    };
    if (!(v[0] > 0.0)) throw bad(0, "a gap must be > 0");
    if (!(v[2] > 0.0)) throw bad(2, "a statistical uncertainty must be > 0");
    if (d.has_syst && !(v[3] >= 0.0)) throw bad(3, "a systematic uncertainty must be >= 0");
    d.gap.push_back(v[0] * d.gap_unit.factor);
    d.value.push_back(v[1] * d.value_unit.factor);
    d.stat.push_back(v[2] * d.error_unit.factor);
    d.syst.push_back(d.has_syst ? v[3] * d.syst_unit.factor : 0.0);
    d.line.push_back(line_no);
  }
  if (names.empty())
    throw CaseError(fmt::format(
        "{}: no header line (e.g. `gap [nm], force [pN], stat_error [pN], syst_error [pN]`)",
        printable(d.path)));
  if (d.gap.empty())
    throw CaseError(fmt::format("{}: no data rows after the header", printable(d.path)));
  return d;
}

std::vector<ModelCurve> read_models(const std::filesystem::path& results,
                                    const MeasuredData& data) {
  const std::string where = fmt::format("RESULTS = \"{}\"", printable(results.string()));
  if (!read_existing_results(results).readable)
    throw CaseError(where + ": not a roundtrip results file (or not readable)");
  H5::Exception::dontPrint();
  std::vector<ModelCurve> out;
  const std::string dataset = data.quantity == "pressure" ? "force" : data.quantity;
  try {
    H5::H5File file(results.string(), H5F_ACC_RDONLY);
    std::vector<std::pair<H5::Group, int>> groups;
    if (file.nameExists("scan")) {
      const H5::Group scan = file.openGroup("scan");
      std::vector<int> keys;
      for (hsize_t i = 0; i < scan.getNumObjs(); ++i)
        keys.push_back(std::atoi(scan.getObjnameByIdx(i).c_str()));
      std::sort(keys.begin(), keys.end());
      for (int k : keys) groups.emplace_back(scan.openGroup(std::to_string(k)), k);
    } else {
      groups.emplace_back(file.openGroup("/"), -1);
    }
    for (auto& [g, k] : groups) {
      ModelCurve m;
      m.scan_point = k;
      m.label = k >= 0 ? text_attr(g, "scan_label") : text_attr(file, "title");
      if (m.label.empty()) m.label = k >= 0 ? fmt::format("scan point {}", k + 1) : "results";
      m.rel_tol = double_attr(g, "rel_tol", 0.0);
      if (!g.nameExists("results/" + dataset))
        throw CaseError(fmt::format(
            "{}: {} holds no {} (the case's [compute] quantities did not include \"{}\")", where,
            k >= 0 ? fmt::format("scan point {}", k + 1) : std::string("the file"), dataset,
            dataset));
      const H5::Group r = g.openGroup("results");
      m.gap = read_vector(r, "gap");
      m.value = read_vector(r, dataset);
      m.units = text_attr(r.openDataSet(dataset), "units");
      const std::string scale = text_attr(g, "result_scale");
      Dimension3 dim;
      if (!dimension_of_si(m.units, dim))
        throw CaseError(
            fmt::format("{}: unknown units \"{}\" of results/{}", where, m.units, dataset));
      if (data.quantity == "pressure" && scale != "per_area")
        throw CaseError(fmt::format(
            "{}: the data are a pressure but the results are {} ({} in {}): use `force` in the "
            "data header",
            where, scale == "total" ? "total values" : scale, dataset, m.units));
      if (data.quantity == "force" && scale == "per_area")
        throw CaseError(
            fmt::format("{}: the results are per unit area (force in {}): name the "
                        "data column `pressure` and give it in Pa",
                        where, m.units));
      if (!(dim == data.value_unit.dim))
        throw CaseError(fmt::format(
            "{}: the data's {} is in \"{}\", a unit of {}, but the "
            "results' {} is in {} ({})",
            where, data.quantity, data.value_unit.name, dimension_text(data.value_unit.dim),
            dataset, m.units, dimension_text(dim)));
      // Ascending gaps (a case's list may be in any order).
      std::vector<std::size_t> order(m.gap.size());
      for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
      std::sort(order.begin(), order.end(), [&](auto a, auto b) { return m.gap[a] < m.gap[b]; });
      std::vector<double> gs, vs;
      for (auto i : order) {
        if (!gs.empty() && m.gap[i] == gs.back()) continue;
        gs.push_back(m.gap[i]);
        vs.push_back(m.value[i]);
      }
      m.gap = std::move(gs);
      m.value = std::move(vs);
      if (m.gap.empty())
        throw CaseError(fmt::format("{}: {} has no finished gaps", where, m.label));
      out.push_back(std::move(m));
    }
  } catch (const H5::Exception& e) {
    throw CaseError(fmt::format("{}: cannot read: {}", where, e.getDetailMsg()));
  }
  return out;
}

ModelInterpolant::ModelInterpolant(const ModelCurve& curve) : label_(curve.label), gap_(curve.gap) {
  bool all_pos = true, all_neg = true;
  for (double v : curve.value) {
    all_pos = all_pos && v > 0.0;
    all_neg = all_neg && v < 0.0;
  }
  log_y_ = all_pos || all_neg;
  sign_ = all_neg ? -1.0 : 1.0;
  for (std::size_t i = 0; i < gap_.size(); ++i) {
    x_.push_back(std::log(gap_[i]));
    y_.push_back(log_y_ ? std::log(std::abs(curve.value[i])) : curve.value[i]);
  }
  // Leave-one-out: each computed gap predicted by the cubic through its four nearest other
  // gaps (a stencil about twice as wide as the interpolant's), |prediction - value|.
  const std::size_t n = gap_.size();
  loo_.assign(n, 0.0);
  if (n >= 5)
    for (std::size_t k = 0; k < n; ++k) {
      std::vector<std::size_t> others;
      const std::size_t lo = std::min(k >= 2 ? k - 2 : 0, n - 5);
      for (std::size_t i = lo; i < lo + 5; ++i)
        if (i != k) others.push_back(i);
      if (others.size() == 5) others.pop_back();
      double y, slope;
      lagrange(x_, y_, others, x_[k], y, slope);
      loo_[k] = std::abs(y - y_[k]);
    }
}

ModelInterpolant::Value ModelInterpolant::at(double L) const {
  const std::size_t n = gap_.size();
  const auto outside = [&] {
    return CaseError(fmt::format(
        "the gap {:.6g} nm lies outside the computed gaps {:.6g}-{:.6g} nm of \"{}\": compute "
        "the case over the data's range (and the offset range)",
        L * 1e9, gap_.front() * 1e9, gap_.back() * 1e9, label_));
  };
  if (!(L >= gap_.front() * (1.0 - kSameGap) && L <= gap_.back() * (1.0 + kSameGap)))
    throw outside();
  const double t = std::log(L);
  const auto from_y = [&](double y, double dy_dx) {
    Value v;
    if (log_y_) {
      v.value = sign_ * std::exp(y);
      v.derivative = v.value * dy_dx / L;
    } else {
      v.value = y;
      v.derivative = dy_dx / L;
    }
    return v;
  };
  // A computed gap: its value (the slope from the cubic where there are enough gaps).
  for (std::size_t i = 0; i < n; ++i)
    if (std::abs(L - gap_[i]) <= kSameGap * gap_[i] && n < 5) return from_y(y_[i], 0.0);
  if (n < 5)
    throw CaseError(fmt::format(
        "\"{}\" has {} computed gap{}: interpolating to {:.6g} nm needs at least 5 (give the "
        "case more gaps over the data's range)",
        label_, n, n == 1 ? "" : "s", L * 1e9));
  std::size_t j = std::upper_bound(x_.begin(), x_.end(), t) - x_.begin();
  j = j == 0 ? 0 : j - 1;
  if (j >= n - 1) j = n - 2;  // t at the last gap
  const std::size_t c0 = std::min(j == 0 ? 0 : j - 1, n - 4);
  const std::vector<std::size_t> cubic{c0, c0 + 1, c0 + 2, c0 + 3};
  double y3, s3;
  lagrange(x_, y_, cubic, t, y3, s3);
  // Error bound: the largest difference between the cubic and its neighbours in order, the
  // quadratics through three of its gaps next to the interval and the quartics that add one
  // gap on either side (each difference is the leading error term of the lower-order one of the
  // pair; taking all of them covers a vanishing third or fourth derivative).
  double dy = 0.0;
  const auto compare_with = [&](std::vector<std::size_t> idx) {
    double y, slope;
    lagrange(x_, y_, idx, t, y, slope);
    dy = std::max(dy, std::abs(y - y3));
  };
  if (j >= 1) compare_with({j - 1, j, j + 1});
  if (j + 2 < n) compare_with({j, j + 1, j + 2});
  if (c0 >= 1) compare_with({c0 - 1, c0, c0 + 1, c0 + 2, c0 + 3});
  if (c0 + 4 < n) compare_with({c0, c0 + 1, c0 + 2, c0 + 3, c0 + 4});
  // Before the asymptotic regime (gaps too far apart for the curve's structure) those
  // differences can underestimate; the leave-one-out errors of the stencil's gaps are errors
  // actually observed at a wider spacing and cover that.
  for (std::size_t i : cubic) dy = std::max(dy, loo_[i]);
  Value v = from_y(y3, s3);
  for (std::size_t i = 0; i < n; ++i)
    if (std::abs(L - gap_[i]) <= kSameGap * gap_[i]) {
      v.value = from_y(y_[i], s3).value;
      return v;  // interpolation error 0
    }
  v.interpolation_error = log_y_ ? std::abs(v.value) * std::expm1(dy) : dy;
  return v;
}

std::pair<double, double> parse_offset_range(const std::string& text, const std::string& field) {
  auto sep = text.find(',');
  if (sep == std::string::npos) sep = text.find(':');
  if (sep == std::string::npos)
    throw CaseError(fmt::format("{} = \"{}\": expected two lengths, e.g. \"-5 nm, 5 nm\"", field,
                                printable(text)));
  const double a = parse_quantity_string(trim(text.substr(0, sep)), Dimension::kLength, field);
  const double b = parse_quantity_string(trim(text.substr(sep + 1)), Dimension::kLength, field);
  if (!(a < b))
    throw CaseError(
        fmt::format("{} = \"{}\": the first end must be below the second", field, printable(text)));
  return {a, b};
}

ModelComparison compare_model(const MeasuredData& data, const ModelCurve& curve,
                              const CompareOptions& options) {
  const ModelInterpolant model(curve);
  const std::size_t n = data.gap.size();
  ModelComparison c;
  c.label = curve.label;
  c.scan_point = curve.scan_point;
  c.points = static_cast<int>(n);
  const auto chi2_at = [&](double delta) {
    double s = 0.0;
    for (std::size_t i = 0; i < n; ++i) {
      const double r = (data.value[i] - model.at(data.gap[i] + delta).value) / data.sigma(i);
      s += r * r;
    }
    return s;
  };
  double delta = 0.0;
  if (options.fit_offset) {
    c.offset_fitted = true;
    const auto [lo_data, hi_data] = std::minmax_element(data.gap.begin(), data.gap.end());
    // Every shifted gap must stay inside the computed ones.
    if (*lo_data + options.offset_min < model.min_gap() * (1.0 - kSameGap) ||
        *hi_data + options.offset_max > model.max_gap() * (1.0 + kSameGap))
      throw CaseError(fmt::format(
          "--offset-range: the shifted gaps {:.6g}-{:.6g} nm leave the computed gaps "
          "{:.6g}-{:.6g} nm of \"{}\": compute the case from at most {:.6g} nm to at least "
          "{:.6g} nm, or narrow the range",
          (*lo_data + options.offset_min) * 1e9, (*hi_data + options.offset_max) * 1e9,
          model.min_gap() * 1e9, model.max_gap() * 1e9, curve.label,
          (*lo_data + options.offset_min) * 1e9, (*hi_data + options.offset_max) * 1e9));
    // A coarse grid first (chi^2 may have more than one local minimum over a wide range), then
    // Brent's method around the best grid point (Brent, Algorithms for Minimization without
    // Derivatives (1973); Boost.Math).
    constexpr int kGrid = 200;
    const double a = options.offset_min, b = options.offset_max, h = (b - a) / kGrid;
    int best = 0;
    double best_chi2 = std::numeric_limits<double>::infinity();
    for (int k = 0; k <= kGrid; ++k) {
      const double v = chi2_at(a + k * h);
      if (v < best_chi2) {
        best_chi2 = v;
        best = k;
      }
    }
    // In u = (delta - a)/h: Boost's tolerances have an absolute part (~1e-8) that would swamp
    // offsets of nanometres in metres.
    const auto chi2_u = [&](double u) { return chi2_at(a + u * h); };
    const auto r =
        boost::math::tools::brent_find_minima(chi2_u, static_cast<double>(std::max(best - 1, 0)),
                                              static_cast<double>(std::min(best + 1, kGrid)), 50);
    delta = r.second <= best_chi2 ? a + r.first * h : a + best * h;
    const double chi2_min = std::min(r.second, best_chi2);
    const double span = b - a;
    c.offset_at_edge = delta - a < 1e-6 * span || b - delta < 1e-6 * span;
    // chi^2 = chi2_min + 1 on each side (bisection by TOMS 748 after a bracket search).
    const auto crossing = [&](double dir) {
      const auto g = [&](double d) { return chi2_at(d) - chi2_min - 1.0; };
      const double end = dir > 0 ? b : a;
      double inner = delta, step = std::max(h, 1e-3 * span) * dir;
      double outer = delta + step;
      while (dir * (outer - end) < 0.0 && g(outer) < 0.0) {
        inner = outer;
        step *= 2.0;
        outer = delta + step;
      }
      if (dir * (outer - end) >= 0.0) {
        outer = end;
        if (g(outer) < 0.0) return kNaN;  // chi^2 stays below min + 1 up to the range's end
      }
      boost::uintmax_t it = 100;
      const auto gu = [&](double u) { return g(a + u * h); };  // scaled as above
      const double ui = (inner - a) / h, uo = (outer - a) / h;
      const auto root =
          boost::math::tools::toms748_solve(gu, std::min(ui, uo), std::max(ui, uo),
                                            boost::math::tools::eps_tolerance<double>(40), it);
      return a + 0.5 * (root.first + root.second) * h;
    };
    c.offset_high = crossing(+1.0);
    c.offset_low = crossing(-1.0);
    c.offset_error = 0.5 * (c.offset_high - c.offset_low);  // NaN if one side is open
    double fisher = 0.0;
    for (std::size_t i = 0; i < n; ++i) {
      const double d = model.at(data.gap[i] + delta).derivative / data.sigma(i);
      fisher += d * d;
    }
    c.offset_fisher_error = fisher > 0.0 ? 1.0 / std::sqrt(fisher) : kNaN;
  }
  c.offset = delta;
  c.chi2 = 0.0;
  for (std::size_t i = 0; i < n; ++i) {
    const auto v = model.at(data.gap[i] + delta);
    const double sigma = data.sigma(i);
    const double err = v.interpolation_error + curve.rel_tol * std::abs(v.value);
    c.model.push_back(v.value);
    c.residual.push_back(data.value[i] - v.value);
    c.normalized.push_back(c.residual.back() / sigma);
    c.model_error.push_back(err);
    c.chi2 += c.normalized.back() * c.normalized.back();
    if (err / sigma > c.worst_error_ratio) {
      c.worst_error_ratio = err / sigma;
      c.worst_error_gap = data.gap[i];
    }
  }
  c.dof = c.points - (options.fit_offset ? 1 : 0);
  if (c.dof > 0) {
    c.reduced_chi2 = c.chi2 / c.dof;
    const boost::math::chi_squared_distribution<double> dist(c.dof);
    c.p_value = boost::math::cdf(boost::math::complement(dist, c.chi2));
  } else {
    c.reduced_chi2 = kNaN;
    c.p_value = kNaN;
  }
  return c;
}

namespace {
using h5::attr;
const auto utf8 = h5::utf8_string_type;
const auto vec = h5::vector_dataset;
}  // namespace

void write_comparison(const std::filesystem::path& results, const std::string& name,
                      const MeasuredData& data, const CompareOptions& options,
                      const std::vector<ModelComparison>& comparisons) {
  amend_results_file(
      results,
      [&](H5::H5File& file) {
        if (!file.nameExists("comparison")) file.createGroup("comparison");
        H5::Group top = file.openGroup("comparison");
        if (top.nameExists(name)) top.unlink(name);  // a rerun with the same name replaces it
        H5::Group g = top.createGroup(name);
        // SI unit of the data: the unit of the models' dataset.
        std::string si;
        {
          const std::string ds = data.quantity == "pressure" ? "force" : data.quantity;
          const std::string path =
              file.nameExists("scan") ? "scan/0/results/" + ds : "results/" + ds;
          if (file.nameExists(path)) si = text_attr(file.openDataSet(path), "units");
        }
        attr(g, "data_file", data.path);
        attr(g, "quantity", data.quantity);
        attr(g, "data_units", data.value_unit.name);
        attr(g, "data_units_si_factor", data.value_unit.factor);
        attr(g, "data_gap_units", data.gap_unit.name);
        attr(g, "data_gap_units_si_factor", data.gap_unit.factor);
        attr(g, "created_utc", iso8601_utc_now());
        attr(g, "roundtrip_version", std::string(kVersion));
        attr(g, "uncertainty_model",
             std::string(data.has_syst ? "sigma^2 = stat^2 + syst^2 (uncorrelated)"
                                       : "sigma = stat"));
        attr(g, "offset_convention", std::string("L_theory = L_measured + offset"));
        attr(g, "offset_fitted", options.fit_offset ? 1 : 0);
        if (options.fit_offset) {
          attr(g, "offset_min", options.offset_min);
          attr(g, "offset_max", options.offset_max);
        }
        attr(g, "interpolation",
             std::string("local cubic Lagrange in ln L of ln|Q| (of Q if it changes sign); "
                         "error bound |cubic - quadratic| + rel_tol |Q|"));
        {
          const H5::StrType t = utf8();
          H5::DataSet ds = g.createDataSet("data_file_text", t, H5::DataSpace(H5S_SCALAR));
          ds.write(data.text, t);
        }
        vec(g, "gap", data.gap, "m", "measured gap L_measured");
        vec(g, "value", data.value, si, "measured " + data.quantity);
        vec(g, "stat_error", data.stat, si, "statistical uncertainty");
        if (data.has_syst) vec(g, "syst_error", data.syst, si, "systematic uncertainty");
        H5::Group models = g.createGroup("models");
        for (std::size_t k = 0; k < comparisons.size(); ++k) {
          const ModelComparison& c = comparisons[k];
          H5::Group m = models.createGroup(std::to_string(k));
          attr(m, "label", c.label);
          attr(m, "scan_point", c.scan_point);
          attr(m, "chi2", c.chi2);
          attr(m, "dof", c.dof);
          attr(m, "reduced_chi2", c.reduced_chi2);
          attr(m, "p_value", c.p_value);
          attr(m, "offset", c.offset);
          attr(m, "offset_units", std::string("m"));
          if (c.offset_fitted) {
            attr(m, "offset_error", c.offset_error);
            attr(m, "offset_low", c.offset_low);
            attr(m, "offset_high", c.offset_high);
            attr(m, "offset_fisher_error", c.offset_fisher_error);
            attr(m, "offset_at_edge", c.offset_at_edge ? 1 : 0);
          }
          attr(m, "worst_model_error_over_sigma", c.worst_error_ratio);
          vec(m, "model", c.model, si, "model at L_measured + offset (interpolated)");
          vec(m, "residual", c.residual, si, "measured - model");
          vec(m, "normalized_residual", c.normalized, "1", "residual / sigma");
          vec(m, "model_error", c.model_error, si, "interpolation error bound + rel_tol |model|");
        }
      },
      "RESULTS");
}

}  // namespace roundtrip::io
