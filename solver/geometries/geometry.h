#pragma once
// Geometry seam: a configuration of bodies gives, at one imaginary frequency, the sum over its
// symmetry blocks b (m for axially symmetric bodies, k for plates) of log det(1 - M_b(xi; L)) and
// its first two derivatives with respect to the gap L. M is the round-trip (TGTG) operator
// (Kenneth & Klich, PRL 97, 160401 (2006); Emig, Graham, Jaffe, Kardar, PRL 99, 170403 (2007)).
//
// The free energy follows from a frequency rule (solver/frequency/frequency_rule.h):
//   T = 0:  E = (hbar / 2 pi) \int_0^\infty dxi  s(xi)
//   T > 0:  E = k_B T \sum'_{n>=0} s(xi_n),  xi_n = 2 pi n k_B T / hbar, n = 0 weighted 1/2,
// where s(xi) = sum_b log det(1 - M_b). For plates s is per unit area (1/m^2) and E is J/m^2.
// Sign: E < 0 is attraction; force F = -dE/dL (F < 0 attractive); gradient dF/dL = -d2E/dL2.
#include <map>
#include <optional>
#include <string>

namespace roundtrip {

/// A frequency-resolved quantity and its derivatives with respect to the gap L (SI units:
/// d1 carries an extra 1/m, d2 an extra 1/m^2 relative to value).
struct Spectral {
  double value = 0.0;
  double d1 = 0.0;
  double d2 = 0.0;
  Spectral& operator+=(const Spectral& o) {
    value += o.value;
    d1 += o.d1;
    d2 += o.d2;
    return *this;
  }
  Spectral operator*(double w) const { return {value * w, d1 * w, d2 * w}; }
};

/// How many L-derivatives a caller needs: 0 energy only, 1 with force, 2 with gradient.
enum class DerivativeOrder : int { kEnergy = 0, kForce = 1, kGradient = 2 };

/// Proximity-force values to show beside an exact result (same units as the exact ones).
struct PfaValues {
  double energy = 0.0;
  double force = 0.0;
  double gradient = 0.0;
};

struct FrequencyRuleOptions;  // solver/frequency/frequency_rule.h

class Geometry {
 public:
  virtual ~Geometry() = default;
  /// s(xi) = sum_b log det(1 - M_b) at gap L (m) and imaginary frequency xi >= 0 (rad/s).
  /// xi == 0 must give the exact static limit. Thread-safe (const).
  virtual Spectral at_frequency(double xi, double gap, DerivativeOrder order) const = 0;
  /// The same to relative accuracy rel_tol, which may be looser than the geometry's own (the
  /// frequency rule asks so for terms with a small share of the sum, frequency_rule.h); a
  /// geometry may then truncate less. Default: ignores rel_tol.
  virtual Spectral at_frequency_within(double xi, double gap, DerivativeOrder order,
                                       double /*rel_tol*/) const {
    return at_frequency(xi, gap, order);
  }
  /// True if s is per unit area (plates): energies then are J/m^2, forces Pa, gradients Pa/m.
  virtual bool per_area() const = 0;
  /// A characteristic imaginary frequency (rad/s) at gap L, e.g. c/(2L): sets quadrature scales.
  virtual double frequency_scale(double gap) const = 0;
  /// Short kind name, e.g. "plate-plate", "sphere-plate".
  virtual std::string kind() const = 0;
  /// One-line description of bodies and materials.
  virtual std::string describe() const = 0;
  /// PFA energy, force and gradient at gap L with the same materials and temperature, if the
  /// geometry has one distinct from the exact result (plates do not).
  virtual std::optional<PfaValues> pfa(double /*gap*/, const FrequencyRuleOptions& /*opts*/) const {
    return std::nullopt;
  }
  /// The length R in the PFA expansion Q/Q_PFA = 1 + theta L/R + ... (sphere radius), if any.
  virtual std::optional<double> pfa_length() const { return std::nullopt; }
  /// Truncations used at gap L (e.g. "l_max", "m_max", "quadrature_nodes"), for reports and HDF5.
  virtual std::map<std::string, double> truncation(double /*gap*/) const { return {}; }
  /// True if at_frequency already runs in parallel (then callers do not add threads on top).
  virtual bool parallel_inside() const { return false; }
};

}  // namespace roundtrip
