#pragma once
// Two parallel lamellar gratings facing each other across the gap medium; results per unit area.
// Lower grating (grating_fmm.h conventions): ridges of width f1 Lambda centred at x = m Lambda,
// tops at z = 0, pointing up. Upper grating: the mirror image z -> L - z of a lamellar grating
// (ridges pointing down, tops at z = L), with its ridges centred at x = b + m Lambda (lateral
// offset b, m). Both have the same period Lambda (grooves along y, parallel). L is measured
// between the ridge tops, so the gratings never touch for L > 0, whatever b.
//
// Per imaginary frequency xi (rad/s), with G = 2 pi / Lambda (Lambrecht & Marachevsky, PRL 101,
// 160403 (2008); the lateral shift as a translation of the upper grating, derived):
//   s(xi; L, b) = \int_BZ dk_x dk_y / (2 pi)^2  Re ln det(1 - M),
//   M = R_1 D Phi R_2 Phi^+ D,  D = e^{-K L},  Phi = diag(e^{-i n G b}) on order n,
// R_1, R_2 the gratings' reflection operators in the basis of orders -N..N (grating_fmm.h; the
// z -> -z mirror leaves the tangential-E basis and hence the matrix unchanged). Sign convention
// of the phases: a grating shifted by +b along x has R^b_{nm} = R_{nm} e^{-i (n - m) G b}.
// det(1 - M) is complex at one Bloch vector; the even profiles give f(-k_x, b) = conj f(k_x, b)
// (derived: parity maps n -> -n), so the integral over the zone is real and k_x runs over
// [0, G/2] with Re ln det = ln |det|.
// Derivatives (analytic): B = (1 - M)^-1,
//   d/dL ln det = -Tr[B M1], d2/dL2 = -Tr[B M2] - Tr[(B M1)^2] (M1, M2 as in grating_plate.h),
//   d/db ln det = -Tr[B R_1 D X' D],  X = Phi R_2 Phi^+,  X' = -i G (N X - X N),  N = diag(n).
// E(L, b) = frequency rule over s; normal force per area F = -dE/dL (Pa; < 0 attraction);
// lateral force per area F_b = -dE/db (Pa; > 0 pushes the upper grating towards +x).
// Bloch integral: the shared adaptive rule (blocks::BlochIntegral, solver/blocks/
// bloch_integral.h; maps and nested refinement as grating-plate), with the lateral derivative as
// a fourth component whose tolerance is taken relative to max(\int |ds/db|, 1e-3 G \int |s|) (it
// vanishes at b = 0 and b = Lambda/2).
// Orders N: the convergence test of grating-plate (study_orders, grating_orders.h) on
// s(xi*; L, b) of this offset, at xi* = frequency_scale(L): levels 4, 6, 8, 11, 16, ... (each
// pair on the same Bloch nodes), observed algebraic rate from three levels, accepted on Roache's
// GCI or on two agreeing Richardson extrapolations (then every frequency is the extrapolated
// pair). ds/db is computed with the same levels and weights; the test is on s.
// Lateral offsets share the gratings' operators: R_1, R_2 do not depend on b (the offset enters
// only through Phi), so at_frequency_shared evaluates the offsets of a scan on one set of Bloch
// nodes (one FMM per node and level for all of them; each offset keeps its own adaptive test,
// so its value is the one it has alone, bit for bit).
// PFA (derived, in the spirit of Bao et al., PRL 105, 250402 (2010)): the period is split into
// the four columns (ridge|groove of 1) x (ridge|groove of 2), of widths set by the overlap o(b)
// of the ridges (per period):
//   E_PFA = [o E_pp(L; r1, r2) + (w1 - o) E_pp(L + h2; r1, s2) + (w2 - o) E_pp(L + h1; s1, r2)
//            + (Lambda - w1 - w2 + o) E_pp(L + h1 + h2; s1, s2)] / Lambda,
// w_i = f_i Lambda, r_i ridge and s_i substrate half-spaces (grooves hold the gap medium).
// Coated gratings (grating_coating.h): the same sum over pairs of columns (ridge, coated walls,
// groove) weighted by their overlaps, coated_pfa_terms.
#include <map>
#include <memory>
#include <mutex>
#include <vector>

#include "solver/geometries/geometry.h"
#include "solver/geometries/grating_orders.h"
#include "solver/scatterers/grating_fmm.h"

namespace roundtrip {

class PlatePlate;

struct GratingGratingOptions {
  int orders = 0;               ///< N (orders -N..N); 0 = chosen by the convergence test
  double bloch_rel_tol = 1e-6;  ///< relative accuracy of the Bloch integral per frequency
  double offset = 0.0;          ///< b (m): the upper grating's ridges centred at x = b
  double rel_tol = 1e-4;        ///< target of the convergence test in orders
  int max_orders = 64;          ///< the order study stops here (unverified beyond)
};

/// s and its derivatives with respect to L and b at one frequency.
struct GratingGratingSpectral {
  Spectral s;
  double d_offset = 0.0;  ///< ds/db (units of s per m)
};

class GratingGrating final : public Geometry {
 public:
  GratingGrating(LamellarGrating lower, LamellarGrating upper, MaterialPtr medium,
                 GratingGratingOptions opts);
  Spectral at_frequency(double xi, double gap, DerivativeOrder order) const override;
  Spectral at_frequency_within(double xi, double gap, DerivativeOrder order,
                               double rel_tol) const override;
  /// s, its L-derivatives and ds/db at one frequency, Bloch integral to relative tol, with the
  /// orders of study(gap).
  GratingGratingSpectral spectral(double xi, double gap, DerivativeOrder order, double tol) const;
  /// One integrand of terms_at: offset b (m) and the order levels with their weights.
  struct Term {
    double offset = 0.0;
    std::vector<int> orders;
    std::vector<double> weights;
  };
  /// Several terms at xi on shared Bloch nodes (one FMM per node and level; each term's own
  /// adaptive test, so each equals its value alone): per term, sum_i w_i s_i first, then each
  /// level's s_i.
  std::vector<std::vector<GratingGratingSpectral>> terms_at(double xi, double gap,
                                                            DerivativeOrder order, double tol,
                                                            const std::vector<Term>& terms) const;
  /// The same gratings, medium and numerics, any offset (the points of an [offsets] scan).
  bool shares_frequency_work_with(const Geometry& other) const override;
  /// This offset and the others' on shared Bloch nodes (terms_at); each value and its ds/db
  /// (kept for extra_quantities) equal those of the geometry alone.
  std::vector<Spectral> at_frequency_shared(
      double xi, double gap, DerivativeOrder order, double rel_tol,
      const std::vector<const Geometry*>& others) const override;
  ResultScale scale() const override { return ResultScale::kPerArea; }
  double frequency_scale(double gap) const override;
  std::string kind() const override { return "grating-grating"; }
  std::string describe() const override;
  std::optional<PfaValues> pfa(double gap, const FrequencyRuleOptions& opts) const override;
  /// The lateral force per area F_b = -dE/db (and its PFA), each from its own frequency sum
  /// (ds/db of frequencies already computed by at_frequency is reused).
  std::vector<ExtraQuantity> extra_quantities(double gap,
                                              const FrequencyRuleOptions& opts) const override;
  /// "orders", "orders_low", "order_rate", "order_error", "bloch_rel_tol" (after the study of
  /// that gap; before it, the damping model's N).
  std::map<std::string, double> truncation(double gap) const override;
  /// Empty when the order test met rel_tol; else why not.
  std::string unverified_truncation(double gap) const override;
  bool parallel_inside() const override { return true; }
  /// s(xi) is one Bloch-vector integral (blocks::BlochIntegral): cut into node chunks on
  /// clusters (solver/parallel/frequency_rounds.h).
  blocks::BlockSum block_sum() const override { return blocks::BlockSum::kBloch; }
  /// The order count N used at gap L (runs the study if needed).
  int orders_at(double gap) const;
  /// The convergence test in orders at gap L for this offset (cached; runs it on first use).
  /// With orders set by hand: that N, no test.
  GratingStudy study(double gap) const;
  double offset() const { return opts_.offset; }
  /// PFA energy per area (J/m^2) and lateral force -dE_PFA/db (Pa) at gap L, offset b.
  std::pair<double, double> pfa_energy_and_lateral(double gap, double b,
                                                   const FrequencyRuleOptions& opts) const;
  /// The ridge overlap o(b) per period (m) of the two gratings and do/db (header).
  std::pair<double, double> overlap(double b) const;
  /// PFA of coated gratings: per pair of columns (ridge, coated walls, groove; grating.cc) the
  /// weight o_ij(b)/Lambda, its b derivative, the extra gap (m) and the plate-plate pair.
  struct PfaTerm {
    double weight, d_weight, extra_gap;
    std::shared_ptr<PlatePlate> pp;
  };
  std::vector<PfaTerm> coated_pfa_terms(double b) const;

 private:
  GratingStudy run_study(double gap) const;
  /// The studies of gap L of the members of `group` (geometries that share frequency work)
  /// that have none yet, each equal to its run_study, with their values at each level computed
  /// together (one FMM per Bloch node and level).
  void study_together(double gap, const std::vector<const GratingGrating*>& group) const;
  LamellarGrating g1_, g2_;
  MaterialPtr medium_;
  GratingGratingOptions opts_;
  mutable std::mutex cache_mutex_;
  mutable std::map<std::pair<double, double>, double> d_offset_cache_;  // (xi, L) -> ds/db
  mutable std::mutex study_mutex_;
  mutable std::map<double, GratingStudy> studies_;
};

}  // namespace roundtrip
