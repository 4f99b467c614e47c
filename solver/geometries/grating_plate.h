#pragma once
// A lamellar grating (below, ridge tops at z = 0) facing a planar body (above, at z = L) across
// the gap medium; results per unit area. Per imaginary frequency xi (rad/s):
//   s(xi; L) = \int_BZ dk_x dk_y / (2 pi)^2  ln det(1 - R_g D R_p D),  D = e^{-K L},
// k_x over the first Brillouin zone [-G/2, G/2], k_y over the real line, R_g the grating's and
// R_p the plate's reflection operators in the basis of orders -N..N (grating_fmm.h), K the
// diagonal of kappa_n (Lambrecht & Marachevsky, PRL 101, 160403 (2008)). L is measured from the
// top of the ridges. L-derivatives are analytic (d/dL acts on D only): with B = (1 - M)^-1,
//   d/dL ln det = -Tr[B M1],  d2/dL2 = -Tr[B M2] - Tr[(B M1)^2],
//   M1 = -(R_g K D R_p D + M K),  M2 = R_g K^2 D R_p D + 2 R_g K D R_p K D + M K^2 (derived).
// Bloch integral: the profile is even, so s is even in k_x and k_y and the integral runs over
// k_x = (G/2) w(u), w(u) = u - sin(2 pi u)/(2 pi), u in [0, 1] (midpoint rule; levels n_x ->
// 3 n_x nest; w' = 0 at both ends smooths the |k| kink of the specular order at k = 0) and
// k_y = a sinh(t), a = min(1/(2L), sqrt(k_x^2 + eps_m xi^2/c^2)), t >= 0 (trapezoid, step
// halving, t = 0 weighted 1/2); each direction is refined until its change is below
// bloch_rel_tol of \int |f| for every requested component; the returned value adds both
// refinements' corrections (blocks::BlochIntegral, solver/blocks/bloch_integral.h, shared with
// grating-grating).
// PFA (Bao et al., PRL 105, 250402 (2010)): E_PFA = f E_pp(L; ridge) + (1 - f) E_pp(L + h;
// substrate), per area, with the same frequency rule.
#include <map>
#include <memory>
#include <mutex>
#include <utility>
#include <vector>

#include "solver/geometries/geometry.h"
#include "solver/geometries/grating_orders.h"
#include "solver/scatterers/grating_fmm.h"

namespace roundtrip {

struct GratingPlateOptions {
  int orders = 0;               ///< N (orders -N..N); 0 = chosen by a convergence test
  double bloch_rel_tol = 1e-6;  ///< relative accuracy of the Bloch integral per frequency
  double rel_tol = 1e-4;        ///< target of the convergence tests in orders and slices
  int max_orders = 64;          ///< the order study stops here (unverified beyond)
  int max_slices = 128;         ///< the slice study stops here (unverified beyond)
  /// R (m) of a sphere taking the plate's place in the PFA (0: none): extra_quantities_of
  /// gives F = 2 pi R E(L) from the exact per-area E beside 2 pi R E_PFA(L) (the grating PFA)
  /// and 2 pi R E_flat(L) (the sample without grooves: a film of the ridge material, as thick
  /// as the profile's height, on the substrate, its top at the ridge tops), in N, < 0 attractive
  /// (Derjaguin, Kolloid-Z. 69, 155 (1934): F_sphere(L) = 2 pi R E_per-area(L) for L << R).
  double sphere_radius = 0.0;
};

/// The cut-offs of one gap (GratingStudy, grating_orders.h) are chosen by convergence tests at
/// xi* = frequency_scale(L): slices first (non-lamellar profiles, at N = 4: S = 4, 8, 16, ... with
/// the plain criterion at 0.2 rel_tol, no extrapolation in S), then the orders by the shared
/// order study (study_orders, grating_orders.h).
class GratingPlate final : public Geometry {
 public:
  GratingPlate(LamellarGrating grating, PlanarPtr plate, MaterialPtr medium,
               GratingPlateOptions opts);
  Spectral at_frequency(double xi, double gap, DerivativeOrder order) const override;
  Spectral at_frequency_within(double xi, double gap, DerivativeOrder order,
                               double rel_tol) const override;
  ResultScale scale() const override { return ResultScale::kPerArea; }
  double frequency_scale(double gap) const override;
  std::string kind() const override { return "grating-plate"; }
  std::string describe() const override;
  std::optional<PfaValues> pfa(double gap, const FrequencyRuleOptions& opts) const override;
  /// With options.sphere_radius > 0: "sphere_force" (F_sphere), "sphere_force_grating_pfa"
  /// (F_sphere,PFA) and "sphere_force_flat" (F_sphere,flat), N (GratingPlateOptions).
  std::vector<ExtraQuantity> extra_quantities_of(double gap, const FrequencyRuleOptions& opts,
                                                 double energy, double energy_error) const override;
  /// E per area of the sample without grooves at gap L (J/m^2; the flat comparison).
  double flat_energy(double gap, const FrequencyRuleOptions& opts) const;
  /// "orders", "orders_low", "order_rate", "order_error", "slices", "slice_rate",
  /// "slice_error", "bloch_rel_tol" (after the study of that gap; before it, the planned values).
  std::map<std::string, double> truncation(double gap) const override;
  /// Empty when the convergence tests met rel_tol; else why not (orders set by hand, or the
  /// study ended at max_orders / max_slices), with the estimate.
  std::string unverified_truncation(double gap) const override;
  bool parallel_inside() const override { return true; }
  /// s(xi) is one Bloch-vector integral (blocks::BlochIntegral): cut into node chunks on
  /// clusters (solver/parallel/frequency_rounds.h).
  blocks::BlockSum block_sum() const override { return blocks::BlockSum::kBloch; }
  /// Bloch nodes x layers x levels of the plane-wave round trip (model, geometry.h).
  FrequencyCost cost(double gap, DerivativeOrder order, double rel_tol) const override;
  /// The order count N used at gap L (runs the study if needed).
  int orders_at(double gap) const;
  /// The convergence study of gap L (cached; runs it on first use). With orders set by hand:
  /// that N, no study.
  GratingStudy study(double gap) const;
  /// Bloch nodes used by the last call on this thread (for tests and benchmarks).
  static int last_node_count();

  /// One cut-off level: orders N and slices S.
  struct Level {
    int orders;
    int slices;
  };
  /// s at xi for several levels on the same Bloch nodes (chosen for sum_i w_i s_i to tol):
  /// returns sum_i w_i s_i first, then each s_i (for the studies and tests).
  std::vector<Spectral> levels_at(double xi, double gap, DerivativeOrder order, double tol,
                                  const std::vector<Level>& levels,
                                  const std::vector<double>& weights) const;

 private:
  Spectral compute(double xi, double gap, DerivativeOrder order, double tol) const;
  GratingStudy run_study(double gap) const;
  LamellarGrating g_;
  PlanarPtr plate_;
  MaterialPtr medium_;
  GratingPlateOptions opts_;
  mutable std::mutex mu_;
  mutable std::map<double, GratingStudy> studies_;
};

}  // namespace roundtrip
