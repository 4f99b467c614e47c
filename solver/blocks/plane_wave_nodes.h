#pragma once
// Momentum nodes of plane-wave-mediated round trips between a sphere and a body facing it along
// the axis (a plate, or a second sphere), and the pieces that turn per-node multipole columns into
// a LowRankBlock (solver/logdet/low_rank.h). Shared by sphere-plate and sphere-sphere.
//
// Conventions (derivation in DEVELOPERS.md, "Sphere-plate round trip"): imaginary frequency xi,
// kappa = n_m xi / c in the medium, x = sqrt(k^2 + kappa^2)/kappa >= 1 for transverse wave
// number k. A round trip through the momentum integral carries e^{-tau x}, tau = kappa * (path
// length): tau = 2 kappa D for a plate at distance D from the sphere's centre, tau = kappa d for
// two spheres at centre distance d. Nodes in t = tau (x - 1) from a composite rule in sqrt(t)
// (solver/special/momentum_rule.h).
#include <Eigen/Dense>
#include <limits>
#include <vector>

#include "solver/logdet/low_rank.h"
#include "solver/special/gauss_laguerre.h"
#include "solver/spectral.h"

namespace roundtrip::blocks {

inline constexpr double kNegInf = -std::numeric_limits<double>::infinity();
/// W entries below e^kLogNegligible (~1.6e-18; |M| <= 1) are dropped (BandedWriter).
inline constexpr double kLogNegligible = -41.0;

/// Quadrature nodes and everything about them that does not depend on m.
struct NodeSet {
  std::vector<double> x;           // dynamic: x_j >= 1; static: t_j
  std::vector<double> half_log_w;  // 1/2 log Omega_j
  std::vector<double> c_te, c_tm;  // reflection factors per node (see block builders)
  std::vector<double> f1, f2;      // dOmega/dL / Omega, d2Omega/dL2 / Omega
  void resize(std::size_t n) {
    for (auto* v : {&x, &half_log_w, &c_te, &c_tm, &f1, &f2}) v->resize(n);
  }
};

/// xi > 0: x_j = 1 + t_j / tau and the weights of \int_1^inf dx e^{-tau x} f(x)
/// = (e^{-tau}/tau) \int_0^inf dt e^{-t} f(1 + t/tau); with tau growing by dtau_dl per unit gap,
/// f1 = -dtau_dl x and f2 = f1^2 (the L-derivatives of e^{-tau x}). c_te, c_tm are not set.
void fill_dynamic_nodes(const special::GaussLaguerreRule& gl, double tau, double dtau_dl,
                        NodeSet& nodes);

/// xi = 0 (kappa -> 0 at fixed k): nodes t_j = k * path, with the path length growing by
/// path / length per unit gap: f1 = -t / length, f2 = t^2 / length^2 (length = D for a plate,
/// d for two spheres). c_te, c_tm are not set.
void fill_static_nodes(const special::GaussLaguerreRule& gl, double length, NodeSet& nodes);

/// Nodes per unit of sqrt(t) for multipoles up to l_max at tolerance tol and u = xi/xi_c
/// (u < 0: static). Measured for sphere-plate (sphere_plate.cc, momentum_rule_for): 2 per unit
/// for rel_tol >= 1e-4 at u >= 0.1, else 3 (rel_tol >= 1e-5), 4 (>= 1e-7), 6. A positive
/// `fixed_per_unit` wins.
const special::GaussLaguerreRule& momentum_rule_for(int lmax, double tol, double u,
                                                    int fixed_per_unit);

/// Multipole cut-off model of a sphere of radius R at gap L from a plate (sphere_plate.cc,
/// lmax_for, where the constants were measured): u = xi / (c / (2 n L)), capped at 10.
/// Throws std::runtime_error naming R and L beyond kMaxMultipoleOrder (solver/guards.h).
int sphere_plate_lmax_model(double radius, double gap, double u, double tol, DerivativeOrder order);
/// The same model in double, never refused or wrapped (plans report it; solver/plan.h refuses).
double sphere_plate_lmax_required(double radius, double gap, double u, double tol,
                                  DerivativeOrder order);
/// Momentum nodes per unit of sqrt(t) (see momentum_rule_for).
int nodes_per_unit_for(double tol, double u, int fixed_per_unit);
/// Node count of momentum_rule_for(lmax, ...) for any lmax (computed, not built, beyond
/// kMaxMultipoleOrder).
double momentum_node_count(double lmax, double tol, double u, int fixed_per_unit);

/// Logs of the continued Mie angular functions at one node x > 1 (log_s = log sqrt(x^2 - 1))
/// over some rows, from log Pt^m (P) and log Pt^{m+1} (P1): t = m x Pt^m / s + Pt^{m+1},
/// p = m Pt^m / s (both terms positive: log-sum-exp); m = 0: t = Pt^1, p = 0.
template <class In0, class In1, class OutT, class OutP>
void angular_logs(int m, double x, double log_s, const In0& P, const In1& P1, OutT&& lt,
                  OutP&& lp) {
  if (m == 0) {
    lt = P1;
    lp.setConstant(kNegInf);
    return;
  }
  lp = std::log(double(m)) - log_s + P;
  const Eigen::ArrayXd a = lp + std::log(x);
  const Eigen::ArrayXd hi = a.max(P1), lo = a.min(P1);
  lt = hi + (1.0 + (lo - hi).exp()).log();
}

/// Reflection factor and L-derivative factors of node j: column j (TE channel, or the scalar
/// field) and, for EM, column N + j (TM channel).
void set_node_coefficients(const NodeSet& nodes, int j, bool em, LowRankBlock& b);

/// Writes W entries from their logs into a zeroed block. Entries below e^{-41} (~1.6e-18;
/// |M| <= 1) are dropped, and each column's non-zero row range per row group (TE rows, TM rows)
/// is recorded: W is banded in (l, node), and the node-space Gram skips the zeros
/// (solver/logdet/low_rank.h). Measured: ~20 % of the entries are non-zero at R/L = 200.
class BandedWriter {
 public:
  /// write_zeros = false: entries outside the recorded ranges are left unset
  /// (LowRankBlock::zero_outside_ranges).
  BandedWriter(LowRankBlock& b, std::vector<int> group_start, bool write_zeros = true);
  /// Rows row0 .. row0 + logs.size() - 1 of column col from their logs; the negligible ones
  /// at either end are set to zero and fall outside the recorded band.
  void put_column(int col, int row0, int group, const Eigen::ArrayXd& logs);
  /// The same from the values themselves (not their logs): entries not above e^{-41} at
  /// either end are dropped.
  void put_values(int col, int row0, int group, const Eigen::ArrayXd& values);

 private:
  LowRankBlock& b_;
  bool write_zeros_ = true;
  Eigen::ArrayXd values_;
  int groups_ = 1;
};

/// Each m block allocates matrices of several MiB; glibc serves those with mmap and returns them
/// at once, so every block paid its page faults again (40 % of the wall time was system time at
/// R/L = 1000). Keeping such blocks in the heap makes one frequency ~1.5x faster (measured at
/// R/L = 500). Process-wide and harmless for other code; done once.
void keep_large_blocks_in_heap();

}  // namespace roundtrip::blocks
