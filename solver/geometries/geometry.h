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
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "solver/blocks/chunk.h"
#include "solver/result_scale.h"
#include "solver/spectral.h"

namespace roundtrip {

/// Proximity-force values to show beside an exact result (same units as the exact ones).
struct PfaValues {
  double energy = 0.0;
  double force = 0.0;
  double gradient = 0.0;
};

struct FrequencyRuleOptions;  // solver/frequency/frequency_rule.h

/// A per-gap result beyond E, F, F' that a geometry computes itself (e.g. the lateral force of
/// two gratings), stored as /results/<name> and printed as a column.
struct ExtraQuantity {
  std::string name;         ///< HDF5 dataset name, e.g. "lateral_force"
  std::string column;       ///< table column head without units, e.g. "F_b"
  std::string units;        ///< SI unit string, e.g. "Pa"
  std::string description;  ///< one sentence with its sign convention
  double value = 0.0;
  double abs_error = 0.0;  ///< estimated absolute error (frequency rule); 0 if not estimated
};

/// Model cost of one frequency of a geometry: its symmetry blocks (m, k_z or Bloch vector), each
/// with a cost in model flops, and the peak working memory of one thread. Flops are
/// "gemm-equivalent": seconds = flops x (seconds per flop of a large matrix product) x the
/// calibration of solver/plan.h. A geometry without dense blocks: one block of cost 1.
struct FrequencyCost {
  double blocks = 1.0;  ///< estimated blocks (double: beyond the int range for refused plans)
  /// Model flops per block; for more than kMaxListedBlocks blocks (plans refused anyway,
  /// solver/plan.h), per group of equal numbers of blocks, so the list stays short.
  std::vector<double> block_flops{1.0};
  double memory_bytes = 0.0;  ///< per thread
  double flops() const {
    double f = 0.0;
    for (double b : block_flops) f += b;
    return f;
  }
};

/// Blocks listed one by one in FrequencyCost::block_flops up to this count.
inline constexpr double kMaxListedBlocks = 4096;

/// The largest multipole order in a truncation map ("l_max", or "l_max1"/"l_max2" for two
/// spheres); 0 if there is none.
double max_multipole_order(const std::map<std::string, double>& truncation);

/// One frequency split into parts that can be timed apart (Geometry::probe; for `check`,
/// solver/plan_timing.h): constructing it does the frequency's set-up shared by its blocks
/// (Mie amplitudes, momentum nodes, plate reflections), block(b) computes symmetry block b
/// (its matrix and log det) on the calling thread, as the run does inside its parallel loop.
class FrequencyProbe {
 public:
  virtual ~FrequencyProbe() = default;
  /// Blocks the frequency's sum may visit (b = 0 .. blocks() - 1; the run may stop earlier).
  virtual int blocks() const = 0;
  /// Block b's log det(1 - M_b) and its gap derivatives, unweighted (the sum's weights are
  /// the geometry's: for an axially symmetric pair m > 0 counts twice).
  virtual Spectral block(int b) const = 0;
};

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
  /// True if at_frequency_shared with `other` saves work: the same shapes, medium and numerics,
  /// other materials (e.g. the points of a `[scan] material = [...]`). Default: false.
  virtual bool shares_frequency_work_with(const Geometry& /*other*/) const { return false; }
  /// s(xi) of this geometry ([0]) and of each of `others` ([1], ...) at the same xi, gap, order
  /// and rel_tol, each equal to its own at_frequency_within up to rounding. A geometry for which
  /// shares_frequency_work_with(other) holds computes them in one pass; the default computes
  /// each alone.
  virtual std::vector<Spectral> at_frequency_shared(
      double xi, double gap, DerivativeOrder order, double rel_tol,
      const std::vector<const Geometry*>& others) const {
    std::vector<Spectral> v{at_frequency_within(xi, gap, order, rel_tol)};
    for (const Geometry* g : others) v.push_back(g->at_frequency_within(xi, gap, order, rel_tol));
    return v;
  }
  /// How results are normalised (solver/result_scale.h): total (J, N, N/m), per area (plates,
  /// gratings: J/m^2, Pa, Pa/m) or per length (cylinders: J/m, N/m, N/m^2).
  virtual ResultScale scale() const = 0;
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
  /// Quantities beyond E, F, F' at gap L (default none); each from the geometry's own frequency
  /// sum with `opts`.
  virtual std::vector<ExtraQuantity> extra_quantities(double /*gap*/,
                                                      const FrequencyRuleOptions& /*opts*/) const {
    return {};
  }
  /// The same, given the point's own energy E (the result's scale, e.g. J/m^2) and its
  /// estimated absolute error from the run's frequency sum, for quantities derived from E (the
  /// PFA sphere force 2 pi R E of grating-plate). The run calls this one. Default:
  /// extra_quantities(gap, opts).
  virtual std::vector<ExtraQuantity> extra_quantities_of(double gap,
                                                         const FrequencyRuleOptions& opts,
                                                         double /*energy*/,
                                                         double /*energy_error*/) const {
    return extra_quantities(gap, opts);
  }
  /// The length R in the PFA expansion Q/Q_PFA = 1 + theta L/R + ... (sphere radius), if any.
  virtual std::optional<double> pfa_length() const { return std::nullopt; }
  /// Truncations used at gap L (e.g. "l_max", "m_max", "quadrature_nodes"), for reports and HDF5.
  virtual std::map<std::string, double> truncation(double /*gap*/) const { return {}; }
  /// Non-empty when a truncation of this geometry at gap L is not verified against rel_tol (a
  /// model cut-off without a convergence test): the run then marks the gap as not meeting
  /// rel_tol (the table's "!", exit status 3) and stores this sentence, so that such a number is
  /// never presented as converged. Default: every truncation is verified.
  virtual std::string unverified_truncation(double /*gap*/) const { return {}; }
  /// True if at_frequency already runs in parallel (then callers do not add threads on top).
  virtual bool parallel_inside() const { return false; }
  /// True if at_frequency_within returns one sum over m by blocks::sum_over_m (solver/blocks/
  /// m_sum.h) and nothing else, so that a frequency can be computed in m chunks on several ranks
  /// and summed by blocks::replay_sum_over_m to the same number (solver/parallel/
  /// frequency_rounds.h). Default: false.
  virtual bool sums_over_m() const { return false; }
  /// The one reduction at_frequency_within's value is, if any, so that a frequency can be cut
  /// into chunks of its units computed apart and replayed to the same number (solver/blocks/
  /// chunk.h; solver/parallel/frequency_rounds.h): kM for sums_over_m(), kAxial where it
  /// returns one cylinder::de_integrate over k_z and nothing else (cylinder-plate,
  /// cylinder-cylinder), kBloch where it computes one blocks::BlochIntegral (grating-plate,
  /// grating-grating). Default: kM if sums_over_m(), else kNone (not cut).
  virtual blocks::BlockSum block_sum() const {
    return sums_over_m() ? blocks::BlockSum::kM : blocks::BlockSum::kNone;
  }
  /// The cost model of one frequency at gap L (solver/plan.h uses it for estimates, progress and
  /// the work items a cluster run distributes). The default models blocked plane-wave round
  /// trips from truncation()'s "l_max" and "quadrature_nodes" (geometry.cc); a geometry
  /// without them costs one unit per frequency.
  virtual FrequencyCost cost(double gap, DerivativeOrder order, double rel_tol) const;
  /// The frequency xi at gap L split into set-up and blocks (FrequencyProbe), for timing a
  /// frequency too long to time whole by a few of its blocks; nullptr (the default) if the
  /// geometry does not split it (then it is timed whole).
  virtual std::unique_ptr<FrequencyProbe> probe(double /*xi*/, double /*gap*/,
                                                DerivativeOrder /*order*/,
                                                double /*rel_tol*/) const {
    return nullptr;
  }
};

}  // namespace roundtrip
