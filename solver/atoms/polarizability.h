#pragma once
// Ground-state dynamic polarizability of an atom on the imaginary frequency axis.
//
// Convention: alpha(xi) is the polarizability VOLUME alpha_SI(i xi) / (4 pi eps_0) in m^3
// (alpha_SI in C m^2 / V); xi in rad/s. Atomic units: alpha_au = alpha / a_0^3 with the Bohr
// radius a_0 = 5.29177210903e-11 m, frequencies in E_h / hbar = 4.1341373335e16 rad/s (CODATA
// 2018). alpha(i xi) is real, positive and decreases monotonically in xi (it is a sum of
// f / (omega^2 + xi^2) terms with f >= 0; Landau & Lifshitz, Statistical Physics 1, §123 logic
// applied to an atom).
//
// Models:
//   constant     alpha(i xi) = alpha_0 for every xi (the static, non-dispersive atom);
//   oscillators  alpha(i xi) = sum_j a_j omega_j^2 / (omega_j^2 + xi^2): a_j (m^3) is the static
//                contribution of term j, omega_j (rad/s) its resonance; alpha(0) = sum_j a_j;
//   table        rows (xi, alpha) from a CSV file, 1/alpha linear in xi^2 between rows (exact for
//                one oscillator), alpha ~ 1/xi^2 beyond the last (polarizability_table.cc);
//   hydrogen     the exact non-relativistic sum over the 1s -> np spectrum (discrete and
//                continuum; polarizability.cc), alpha(0) = 9/2 a_0^3;
//   helium, rubidium: published few-oscillator forms (values from memory; polarizability.cc).
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

namespace roundtrip {

inline constexpr double kBohrRadius = 5.29177210903e-11;      // m (CODATA 2018)
inline constexpr double kHartreeFrequency = 4.1341373335e16;  // E_h / hbar, rad/s (CODATA 2018)
inline constexpr double kBohrVolume = kBohrRadius * kBohrRadius * kBohrRadius;  // m^3

class Polarizability {
 public:
  virtual ~Polarizability() = default;
  /// alpha(i xi) / (4 pi eps_0) in m^3 for xi >= 0 (rad/s); xi = 0 is the static value.
  virtual double alpha(double xi) const = 0;
  /// A frequency (rad/s) above which alpha(i xi) falls off (the lowest resonance); +inf for a
  /// constant polarizability. Sets the scale of frequency integrals.
  virtual double characteristic_frequency() const = 0;
  /// "hydrogen", "constant", "oscillators".
  virtual std::string name() const = 0;
  /// One line with the parameters, e.g. "constant, alpha = 4.73e-29 m^3 (319.4 a.u.)".
  virtual std::string description() const = 0;
  /// Citation of the model, or "user defined".
  virtual std::string source() const { return "user defined"; }
};

using PolarizabilityPtr = std::shared_ptr<const Polarizability>;

struct AtomOscillator {
  double strength = 0.0;   ///< a_j: static contribution, m^3 (>= 0)
  double frequency = 0.0;  ///< omega_j, rad/s (> 0)
};

PolarizabilityPtr make_constant_polarizability(double alpha_m3);
/// Throws std::invalid_argument for an empty list, a negative strength or a frequency <= 0.
PolarizabilityPtr make_oscillator_polarizability(std::vector<AtomOscillator> oscillators,
                                                 std::string name = "oscillators",
                                                 std::string source = "user defined");
/// alpha(i xi) at rows of xi: xi[0] = 0, xi increasing, alpha > 0 and non-increasing.
struct PolarizabilityTable {
  std::vector<double> xi;     ///< rad/s
  std::vector<double> alpha;  ///< m^3 (alpha_SI/(4 pi eps_0))
  std::string origin;         ///< file name, for descriptions
};
/// Read a CSV table: '#' comments; a header naming the columns, the first "xi_eV", "xi_rad/s" or
/// "xi_au" and the second "alpha_au", "alpha_m^3" or "alpha_A^3"; then rows "xi, alpha" starting
/// at xi = 0, xi increasing, alpha > 0 and not increasing. Throws InputError "file:line: column
/// = value: what is wrong".
PolarizabilityTable read_polarizability_csv(const std::filesystem::path& path);
/// Throws std::invalid_argument for a table that breaks the rules above.
PolarizabilityPtr make_table_polarizability(PolarizabilityTable table);
/// Built-in ground-state atoms by name ("hydrogen", "helium", "rubidium"); null if unknown.
PolarizabilityPtr builtin_polarizability(const std::string& species);
std::vector<std::string> builtin_species();

/// Hydrogen 1s -> np oscillator strengths and their sums (atomic units), exposed for tests.
/// f_n of the transition to n p (n >= 2).
double hydrogen_discrete_strength(int n);
/// df/domega of the continuum at photoelectron momentum k (a.u.), omega = (1 + k^2)/2.
double hydrogen_continuum_density(double k);
/// S(p) = sum_n f_n omega_n^p + \int df omega^p over the whole 1s spectrum (a.u.), p in {-2..1}.
double hydrogen_sum_rule(int p);

}  // namespace roundtrip
