#pragma once
// A separation sweep: one Geometry, a list of gaps, a frequency rule -> energies, forces,
// gradients and PFA values at each gap. This is the library entry point the CLI uses.
#include <atomic>
#include <functional>
#include <map>
#include <mutex>
#include <optional>
#include <string>
#include <tuple>
#include <vector>

#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/geometry.h"
#include "solver/pfa/theta_fit.h"

namespace roundtrip {

struct Quantities {
  bool energy = true;
  bool force = true;
  bool gradient = false;
  DerivativeOrder order() const {
    return gradient ? DerivativeOrder::kGradient
                    : (force ? DerivativeOrder::kForce : DerivativeOrder::kEnergy);
  }
};

/// Finished per-frequency contributions, for checkpoint and resume (io/ keeps them on disk).
/// The frequency rules' nodes are deterministic, so a rerun asks for bit-identical xi.
class ContributionStore {
 public:
  virtual ~ContributionStore() = default;
  /// True (and s filled) if s(xi) at gap number gap_index was recorded before.
  virtual bool lookup(int gap_index, double xi, Spectral& s) = 0;
  /// Called once per newly computed s(xi); may be called from several threads.
  virtual void record(int gap_index, double xi, const Spectral& s) = 0;
};

/// Values s(xi) computed ahead for other sweeps: the points of a scan whose geometries share
/// work (Geometry::at_frequency_shared) are computed together while the first point runs, and
/// the later points find their values here. Keyed by geometry, gap, xi, rel_tol and order; each
/// value is handed out once. Thread-safe. Memory: one Spectral per frequency of the scan.
class SharedFrequencyValues {
 public:
  void put(const Geometry* g, double gap, double xi, double rel_tol, DerivativeOrder order,
           const Spectral& s);
  std::optional<Spectral> take(const Geometry* g, double gap, double xi, double rel_tol,
                               DerivativeOrder order);
  int hits() const;    ///< values handed out so far
  int stored() const;  ///< values put so far
 private:
  using Key = std::tuple<const Geometry*, double, double, double, int>;
  mutable std::mutex mutex_;
  std::map<Key, Spectral> values_;
  int hits_ = 0, stored_ = 0;
};

struct RunOptions {
  FrequencyRuleOptions frequency;
  Quantities quantities;
  int threads = 0;  ///< 0: OpenMP default
  /// Called after each finished gap with (done, total); may be empty.
  std::function<void(int, int)> progress;
  /// Called when a gap starts (gap index), before its first frequency; may be empty.
  std::function<void(int)> gap_started;
  /// Called after every frequency evaluation with (gap index, evaluations so far at that gap,
  /// from cache or not); may be empty. For ETAs on long gaps.
  std::function<void(int, int)> frequency_progress;
  /// Optional checkpoint store (not owned).
  ContributionStore* store = nullptr;
  /// Optional cancellation flag (e.g. set by a SIGINT handler): gaps not finished when it is
  /// seen are returned with complete = false; finished ones are kept. It is installed as the
  /// process-wide flag (solver/guards.h) for the sweep, so it is also seen inside a long
  /// frequency (sphere-plate: before every m block and W column); that frequency is abandoned
  /// and not recorded.
  const std::atomic<bool>* cancel = nullptr;
  /// Optional (not owned): values computed ahead for this sweep are taken from `shared`, and
  /// each s(xi) of this sweep is computed together with the `companions` (geometries of later
  /// scan points, Geometry::at_frequency_shared), whose values are put into `shared`.
  SharedFrequencyValues* shared = nullptr;
  std::vector<const Geometry*> companions;
};

/// Result at one gap. Units: those of the geometry's ResultScale (solver/result_scale.h).
struct PointResult {
  double gap = 0.0;           ///< m
  double energy = 0.0;        ///< free energy (T > 0) or energy (T = 0)
  double force = 0.0;         ///< -dE/dL
  double gradient = 0.0;      ///< dF/dL = -d2E/dL2
  double energy_error = 0.0;  ///< estimated absolute error of energy
  std::optional<PfaValues> pfa;
  std::vector<ExtraQuantity> extra;  ///< Geometry::extra_quantities (e.g. lateral force)
  FrequencySum frequencies;
  std::map<std::string, double> truncation;
  double wall_seconds = 0.0;
  bool complete = true;  ///< false if the run was cancelled before this gap finished
};

struct RunResult {
  std::string kind;  ///< Geometry::kind()
  std::string description;
  ResultScale scale = ResultScale::kTotal;  ///< Geometry::scale()
  std::vector<PointResult> points;
  double wall_seconds = 0.0;
  int threads = 1;
  bool cancelled = false;  ///< options.cancel was set; some points may be incomplete
  /// Fits of Q/Q_PFA = 1 + theta L/R + ... over the sweep (geometries with a PFA length scale,
  /// at least 3 finished gaps); see solver/pfa/theta_fit.h.
  ThetaFit theta_energy, theta_force, theta_gradient;
  /// Geometry::pfa_length(): the R of Q/Q_PFA = 1 + theta L/R (sphere radius, or
  /// R_eff = R1 R2/(R1 + R2) for two spheres); 0 if the geometry has none.
  double pfa_length = 0.0;
};

/// Compute every gap in `gaps` (m, each > 0). Deterministic for any thread count.
RunResult run_sweep(const Geometry& geometry, const std::vector<double>& gaps,
                    const RunOptions& options);

/// A gap's result from its frequency sum and PFA values (energy, force, gradient with the signs
/// of geometry.h, truncations, an unverified truncation marks it not converged); wall_seconds
/// is left 0. run_sweep and the distributed run (solver/parallel) both build points with it.
PointResult point_result(const Geometry& geometry, double gap, DerivativeOrder order,
                         FrequencySum frequencies, std::optional<PfaValues> pfa);
/// The theta fits of `result` over its complete points with a PFA (nothing if the geometry has
/// no PFA length).
void fit_thetas(const Geometry& geometry, const RunOptions& options, RunResult& result);

}  // namespace roundtrip
