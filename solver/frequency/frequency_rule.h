#pragma once
// Frequency rules: turn the per-frequency sum s(xi) of a Geometry into a free energy.
//   T = 0:  E = (hbar / 2 pi) \int_0^\infty dxi s(xi)       (adaptive quadrature, error reported)
//   T > 0:  E = k_B T \sum'_{n>=0} s(xi_n)                    (Matsubara, n = 0 weight 1/2)
//           or its Pade spectrum decomposition E ~ k_B T [s(0)/2 + sum_j eta_j s(xi_j)]
//           (pade_spectrum.h), chosen when it needs fewer frequencies.
// Derivatives with respect to L are summed with the same weights. See geometry.h for signs.
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "solver/geometries/geometry.h"

namespace roundtrip {

enum class FrequencyRuleKind { kZeroTemperatureQuadrature, kMatsubara, kPadeSpectrum };
std::string to_string(FrequencyRuleKind k);

/// Which sum to use at T > 0. kAuto takes the one with fewer frequencies for the case (decided
/// on a model spectrum, see choose_thermal_rule); at T = 0 only kAuto is valid.
enum class ThermalRule { kAuto, kMatsubara, kPade };
std::string to_string(ThermalRule r);
/// "auto", "matsubara", "pade" -> rule; anything else -> nullopt.
std::optional<ThermalRule> thermal_rule_from_string(const std::string& s);

struct FrequencyRuleOptions {
  double temperature_K = 0.0;  ///< 0 selects the T = 0 quadrature.
  double rel_tol = 1e-6;       ///< target relative error of the energy (and derivatives).
  int max_matsubara_terms = 200000;
  ThermalRule thermal_rule = ThermalRule::kAuto;
  std::string validate() const;  ///< empty if valid, else a sentence naming the bad field
};

/// One evaluated frequency: xi (rad/s), its weight in the rule (J: hbar dxi/2pi at T = 0, k_B T at
/// T > 0), and s(xi). total = sum weight * s.
struct FrequencyTerm {
  double xi = 0.0;
  double weight = 0.0;
  Spectral s;
  double rel_tol = 0.0;  ///< accuracy s was asked for (>= the case's rel_tol / 2; see below)
};

struct FrequencySum {
  Spectral total;                    ///< E, dE/dL, d2E/dL2 (J or J/m^2, and per m, per m^2)
  double abs_error = 0.0;            ///< estimated absolute error of total.value
  std::vector<FrequencyTerm> terms;  ///< every evaluation, in order of xi
  FrequencyRuleKind rule = FrequencyRuleKind::kZeroTemperatureQuadrature;
  int pade_poles = 0;  ///< N of the Pade spectrum decomposition, if used
  bool converged = true;
  std::string message;  ///< why not converged, if not
};

using SpectralFunction = std::function<Spectral(double xi)>;
/// s(xi) to relative accuracy rel_tol. The Pade rule asks each term for
///   eps_j = max(rel_tol/2, rel_tol / (2 K share_j)),  at most kMaxTermRelTol,
/// with K terms and share_j = |w_j s_j| / |E| (worst of value and derivatives), so that
/// sum_j eps_j |w_j s_j| <= rel_tol |E|: the many small high-frequency terms are computed with
/// smaller truncations. share_j comes from the model spectrum (choose_thermal_rule) and is
/// checked against the computed term: if the term turns out larger, it is computed again.
/// When that split would cost more than asking every term for rel_tol (work ~ ln(20/eps)^2 per
/// term), every term is asked for rel_tol instead.
using TolerantSpectralFunction = std::function<Spectral(double xi, double rel_tol)>;
inline constexpr double kMaxTermRelTol = 1e-2;

/// The rule sum_over_frequencies uses at this decay scale, and for the Pade spectrum
/// decomposition its number of poles. Decided on a model: the perfect-conductor plate-plate
/// spectrum at the gap c / (2 xi_scale) with its first two gap derivatives,
///   s(a) = -(1/4 pi) G(a),  G(a) = a Li_2(e^-a) + Li_3(e^-a),  a = xi / xi_scale
/// (Lifshitz formula for perfect mirrors), which decays no faster than any real material's. The
/// poles N are the fewest whose model error, estimated against 2N poles, is below
/// kPadeModelFraction rel_tol in value and both derivatives.
struct ThermalRuleChoice {
  FrequencyRuleKind rule = FrequencyRuleKind::kMatsubara;
  int pade_poles = 0;             ///< N (0 unless rule == kPadeSpectrum)
  int matsubara_terms = 0;        ///< model estimate of the Matsubara terms (incl. n = 0)
  double pade_model_error = 0.0;  ///< relative error of the PSD on the model
};
inline constexpr double kPadeModelFraction = 0.1;
ThermalRuleChoice choose_thermal_rule(double xi_scale, const FrequencyRuleOptions& opts);

/// Apply the rule selected by opts.temperature_K to s(xi). xi_scale (rad/s) is the frequency at
/// which s has decayed by about e^-1 (Geometry::frequency_scale). s is called sequentially.
FrequencySum sum_over_frequencies(const SpectralFunction& s, double xi_scale,
                                  const FrequencyRuleOptions& opts);
/// The same with per-term accuracies (used only by the Pade rule; the others ask for rel_tol).
FrequencySum sum_over_frequencies(const TolerantSpectralFunction& s, double xi_scale,
                                  const FrequencyRuleOptions& opts);

/// The T = 0 rule used before the exp-exp rule (exp-sinh map, nested levels from h = 1/2, left
/// end u = 2.4e-19): an independent path for tests and benchmarks (frequency_rule.cc).
FrequencySum zero_temperature_exp_sinh_rule(const SpectralFunction& s, double xi_scale,
                                            const FrequencyRuleOptions& opts);

}  // namespace roundtrip
