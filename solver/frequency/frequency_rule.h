#pragma once
// Frequency rules: turn the per-frequency sum s(xi) of a Geometry into a free energy.
//   T = 0:  E = (hbar / 2 pi) \int_0^\infty dxi s(xi)       (adaptive quadrature, error reported)
//   T > 0:  E = k_B T \sum'_{n>=0} s(xi_n)                    (Matsubara, n = 0 weight 1/2)
// Derivatives with respect to L are summed with the same weights. See geometry.h for signs.
#include <functional>
#include <string>
#include <vector>

#include "solver/geometries/geometry.h"

namespace roundtrip {

enum class FrequencyRuleKind { kZeroTemperatureQuadrature, kMatsubara };
std::string to_string(FrequencyRuleKind k);

struct FrequencyRuleOptions {
  double temperature_K = 0.0;  ///< 0 selects the T = 0 quadrature.
  double rel_tol = 1e-6;       ///< target relative error of the energy (and derivatives).
  int max_matsubara_terms = 200000;
  std::string validate() const;  ///< empty if valid, else a sentence naming the bad field
};

/// One evaluated frequency: xi (rad/s), its weight in the rule (J: hbar dxi/2pi at T = 0, k_B T at T > 0),
/// and s(xi). total = sum weight * s.
struct FrequencyTerm {
  double xi = 0.0;
  double weight = 0.0;
  Spectral s;
};

struct FrequencySum {
  Spectral total;           ///< E, dE/dL, d2E/dL2 (J or J/m^2, and per m, per m^2)
  double abs_error = 0.0;   ///< estimated absolute error of total.value
  std::vector<FrequencyTerm> terms;  ///< every evaluation, in order of xi
  FrequencyRuleKind rule = FrequencyRuleKind::kZeroTemperatureQuadrature;
  bool converged = true;
  std::string message;      ///< why not converged, if not
};

using SpectralFunction = std::function<Spectral(double xi)>;

/// Apply the rule selected by opts.temperature_K to s(xi). xi_scale (rad/s) is the frequency at
/// which s has decayed by about e^-1 (Geometry::frequency_scale). s is called sequentially.
FrequencySum sum_over_frequencies(const SpectralFunction& s, double xi_scale,
                                  const FrequencyRuleOptions& opts);

}  // namespace roundtrip
