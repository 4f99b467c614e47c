#pragma once
// Comparison of computed results with measured data (`roundtrip compare`, README "Comparing
// with measurements").
//
// Data: a CSV file (read_measured_csv) with `#` comment lines, one header line naming the
// columns with their units, e.g. `gap [nm], force [pN], stat_error [pN], syst_error [pN]`
// (quantity: force | gradient | pressure | energy; syst_error optional), then one row per point.
//
// Statistics (common practice, e.g. Bevington & Robinson, Data Reduction and Error Analysis,
// 3rd ed. (2003), ch. 8 and 11): sigma_i^2 = stat_i^2 + syst_i^2 (treated as uncorrelated),
// chi^2 = sum_i ((d_i - m(L_i + delta)) / sigma_i)^2, dof = N - (1 if delta is fitted), the
// p-value Q(chi^2 | dof) = 1 - CDF of the chi-squared distribution (Boost.Math). The offset
// convention is L_theory = L_measured + delta (a positive delta: the true gap is larger than the
// measured one). delta minimises chi^2 within the user's range; its uncertainty is the half
// width of {chi^2 <= chi^2_min + 1} (one parameter, 68.3 %), with the linearised (Fisher)
// value 1/sqrt(sum (m'(L_i + delta)/sigma_i)^2) beside it (what a Gauss-Newton fitter such as
// scipy.optimize.curve_fit reports with absolute sigma).
//
// Models between computed gaps (at least 5): local Lagrange interpolation in x = ln L of
// y = ln|Q| (Q of one sign at every computed gap; else of Q itself): a cubic through the four
// nearest gaps is the value. The stated interpolation error bound (in y) is the largest of
// (a) |cubic - p| for the neighbouring interpolants p (the two quadratics through three of the
// cubic's gaps next to the interval, the quartics adding one gap on either side), each the
// leading error term of the lower-order one, and (b) the leave-one-out errors of the cubic's
// four gaps: each gap predicted by the cubic through its four nearest other gaps (a stencil
// about twice as wide). (a) alone assumes the asymptotic regime and was seen to underestimate
// by up to 30x on gold plates sampled at 7 gaps over 100 nm - 2 um; (b) is an error actually
// observed. The model's own numerical error rel_tol |Q| is added to the bound.
#include <filesystem>
#include <string>
#include <vector>

#include "io/output_units.h"

namespace roundtrip::io {

struct MeasuredData {
  std::string path;      ///< as given
  std::string text;      ///< the file verbatim (stored in the results file)
  std::string quantity;  ///< "force" | "gradient" | "pressure" | "energy"
  OutputUnit gap_unit, value_unit, error_unit, syst_unit;  ///< units of the columns
  bool has_syst = false;
  std::vector<double> gap, value, stat, syst;  ///< SI (m; N, N/m, Pa or J and the like)
  std::vector<int> line;                       ///< line of each row in the file
  /// sigma_i = sqrt(stat_i^2 + syst_i^2).
  double sigma(std::size_t i) const;
};
/// Throws CaseError "<file>:<line>: column <c> (<name>) = "<value>": <what is wrong>".
MeasuredData read_measured_csv(const std::filesystem::path& path);

/// One model: the results of one run or one scan point.
struct ModelCurve {
  std::string label;          ///< "material = gold-drude" (the scan label) or the title
  int scan_point = -1;        ///< k of /scan/<k>, -1 without a scan
  double rel_tol = 0.0;       ///< of the run
  std::vector<double> gap;    ///< computed gaps, m, ascending
  std::vector<double> value;  ///< the quantity at those gaps, SI
  std::string units;          ///< SI units of value (the dataset's `units` attribute)
};
/// Every model of a results file for the data's quantity. Throws CaseError when the file is no
/// results file, lacks the quantity, or its units do not match the data's dimension.
std::vector<ModelCurve> read_models(const std::filesystem::path& results, const MeasuredData& data);

/// The interpolant described above.
class ModelInterpolant {
 public:
  explicit ModelInterpolant(const ModelCurve& curve);
  struct Value {
    double value = 0.0;                ///< Q(L)
    double derivative = 0.0;           ///< dQ/dL
    double interpolation_error = 0.0;  ///< |cubic - quadratic| (0 at a computed gap)
  };
  /// Throws CaseError when L lies outside the computed gaps or needs interpolation with fewer
  /// than 4 computed gaps.
  Value at(double L) const;
  double min_gap() const { return gap_.front(); }
  double max_gap() const { return gap_.back(); }

 private:
  std::string label_;
  std::vector<double> gap_, x_, y_, loo_;
  bool log_y_ = false;
  double sign_ = 1.0;
};

struct CompareOptions {
  bool fit_offset = false;
  double offset_min = 0.0, offset_max = 0.0;  ///< m
};

struct ModelComparison {
  std::string label;
  int scan_point = -1;
  int points = 0, dof = 0;
  double chi2 = 0.0, reduced_chi2 = 0.0, p_value = 0.0;  ///< NaN reduced/p when dof = 0
  bool offset_fitted = false;
  double offset = 0.0;        ///< delta, m (0 unless fitted)
  double offset_error = 0.0;  ///< half width of chi^2 <= min + 1 (NaN if it leaves the range)
  double offset_low = 0.0, offset_high = 0.0;  ///< ends of that interval (NaN if outside)
  double offset_fisher_error = 0.0;            ///< 1/sqrt(sum (m'/sigma)^2)
  bool offset_at_edge = false;                 ///< the minimum lies at an end of the user's range
  std::vector<double> model;                   ///< m(L_i + delta), SI
  std::vector<double> residual;                ///< d_i - m(L_i + delta)
  std::vector<double> normalized;              ///< residual / sigma_i
  std::vector<double> model_error;             ///< interpolation bound + rel_tol |m|
  double worst_error_ratio = 0.0;              ///< max_i model_error_i / sigma_i
  double worst_error_gap = 0.0;                ///< the measured gap where it occurs
};

/// Throws CaseError if a shifted gap leaves the computed range.
ModelComparison compare_model(const MeasuredData& data, const ModelCurve& curve,
                              const CompareOptions& options);

/// "-5 nm, 5 nm" (or "-5 nm,5 nm", "-5nm:5nm") -> metres; min < max, both finite. CaseError
/// naming `field` otherwise.
std::pair<double, double> parse_offset_range(const std::string& text, const std::string& field);

/// Model error must stay below this share of the data's uncertainty (else `compare` warns and
/// asks for more gaps): at 0.1 the interpolation moves each term of chi^2 by at most about
/// 0.2 |d - m|/sigma + 0.01, well below the scatter of chi^2 itself (sqrt(2 dof)).
inline constexpr double kModelErrorShareOfSigma = 0.1;

/// Write the comparison into the results file as /comparison/<name> (replacing a group of that
/// name), atomically (results_hdf5.h, amend_results_file). Layout in README.md.
void write_comparison(const std::filesystem::path& results, const std::string& name,
                      const MeasuredData& data, const CompareOptions& options,
                      const std::vector<ModelComparison>& comparisons);

}  // namespace roundtrip::io
