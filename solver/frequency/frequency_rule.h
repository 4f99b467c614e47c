#pragma once
// Frequency rules: turn the per-frequency sum s(xi) of a Geometry into a free energy.
//   T = 0:  E = (hbar / 2 pi) \int_0^\infty dxi s(xi)       (adaptive quadrature, error reported)
//   T > 0:  E = k_B T \sum'_{n>=0} s(xi_n)                    (Matsubara, n = 0 weight 1/2)
//           or its Pade spectrum decomposition E ~ k_B T [s(0)/2 + sum_j eta_j s(xi_j)]
//           (pade_spectrum.h), chosen when it needs fewer frequencies,
//           or, at low temperature (many Matsubara terms), Matsubara terms with an integral tail:
//           E = k_B T [s(0)/2 + sum_{n=1}^{N-1} s(xi_n) + C_N] + (hbar/2 pi) \int_{xi_N}^inf s dxi,
//           C_N Gregory's end correction from s(xi_N) .. s(xi_{N+6}) (see low_temperature below).
// Derivatives with respect to L are summed with the same weights. See geometry.h for signs.
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "solver/geometries/geometry.h"

namespace roundtrip {

enum class FrequencyRuleKind {
  kZeroTemperatureQuadrature,
  kMatsubara,
  kPadeSpectrum,
  kMatsubaraIntegralTail,  ///< low T: explicit Matsubara terms + Gregory + T = 0 integral tail
};
std::string to_string(FrequencyRuleKind k);

/// Which sum to use at T > 0. kAuto takes the one with fewer frequencies for the case (decided
/// on a model spectrum, see choose_thermal_rule); at T = 0 only kAuto is valid.
enum class ThermalRule { kAuto, kMatsubara, kPade, kIntegralTail };
std::string to_string(ThermalRule r);
/// "auto", "matsubara", "pade", "integral-tail" -> rule; anything else -> nullopt.
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
  int pade_poles = 0;          ///< N of the Pade spectrum decomposition, if used
  int matsubara_explicit = 0;  ///< N of the Matsubara terms with an integral tail, if used
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
  int pade_poles = 0;                ///< N (0 unless rule == kPadeSpectrum)
  int matsubara_terms = 0;           ///< model estimate of the Matsubara terms (incl. n = 0)
  bool matsubara_estimated = false;  ///< matsubara_terms from the decay law, not a model run
  double pade_model_error = 0.0;     ///< relative error of the PSD on the model
  int tail_rule_terms = 0;           ///< evaluations of the integral-tail rule on the model (0: not
                                     ///< tried: a few Matsubara terms suffice)
  bool tail_rule_converged = false;  ///< the integral-tail rule met rel_tol on the model
};
inline constexpr double kPadeModelFraction = 0.1;
ThermalRuleChoice choose_thermal_rule(double xi_scale, const FrequencyRuleOptions& opts);

/// Why the rule chosen for this decay scale cannot reach rel_tol (judged on the model spectrum
/// before any s is computed: a forced Matsubara sum longer than max_matsubara_terms, a forced Pade
/// decomposition that misses rel_tol on the model); empty if it can. For `roundtrip check`.
std::string frequency_rule_problem(double xi_scale, const FrequencyRuleOptions& opts);

/// Matsubara terms with an integral tail (FrequencyRuleKind::kMatsubaraIntegralTail), used when
/// the Matsubara sum needs more than kTailRuleFromTerms terms and the other rules more evaluations.
/// Euler-Maclaurin in Gregory's form (finite differences instead of derivatives; e.g. Hildebrand,
/// Introduction to Numerical Analysis (1974), sec. 5.9; standard):
///   sum_{n>=N} f_n = \int_N^inf f dn + sum_{k=0}^{K} (-1)^k |G_{k+1}| Delta^k f_N + R_K,
/// f_n = s(xi_n), xi_n = n h, h = 2 pi k_B T/hbar, K = kGregoryDifferences, |G| = 1/2, 1/12, 1/24,
/// 19/720, 3/160, 863/60480, 275/24192. k_B T \int_N^inf f dn = (hbar/2 pi) \int_{xi_N}^inf s dxi
/// is the T = 0 rule started at xi_N. The n = 0 term is explicit and exact (static limits), so
/// the jump between s(0) and s(0+) of Drude metals (k_B T/2 times it: the linear-in-T term when h
/// is above the Drude TE scale) is kept; as T -> 0 the rule tends to the T = 0 integral plus
/// k_B T (s(0) - s(0+))/2. N starts at kLowTemperatureFirstTerms and is multiplied by 4 until the
/// last difference term is below kGregoryFraction rel_tol of sum |w s| in every component (taken
/// as Gregory's error and added to the reported error); the integral gets the rest of rel_tol.
inline constexpr int kGregoryDifferences = 6;
inline constexpr double kGregoryFraction = 0.1;
inline constexpr int kLowTemperatureFirstTerms = 16;
inline constexpr int kLowTemperatureMaxTerms = 4096;
inline constexpr int kTailRuleFromTerms = 100;

/// Gregory's end correction sum_k (-1)^k |G_{k+1}| Delta^k f_0 from f_0 .. f_K (1 <= K + 1 <= 8)
/// and its last term (the error estimate). Exposed for tests.
struct GregoryCorrection {
  Spectral value;
  Spectral last;
};
GregoryCorrection gregory_tail_correction(const std::vector<Spectral>& f);

/// The (xi, rel_tol) the rule will ask s for first, in order, when they are known before any
/// value: the Pade rule's terms with their per-term accuracies (a term may be asked again, more
/// accurately, if its computed share turns out larger than the model's). Empty for the other
/// rules (they choose their frequencies from the values). A caller may compute these ahead, in
/// parallel, and serve them when asked (solver/run.cc).
std::vector<std::pair<double, double>> planned_frequency_terms(double xi_scale,
                                                               const FrequencyRuleOptions& opts);

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
