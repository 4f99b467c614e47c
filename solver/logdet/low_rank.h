#pragma once
// log det(1 - M) and its derivatives for a round-trip matrix given in factored form
//   M(L) = S W C(L) W^T,   C(L) = diag(c_i(L)),   dC/dL = diag(f1_i c_i),  d2C/dL2 = diag(f2_i c_i)
// where W (n x q) is independent of L and S = diag(s_r), s_r = +-1 (the signs of the scattering
// amplitudes after the symmetrisation sqrt|T| ... sqrt|T|). This is the form every
// plane-wave-mediated geometry takes after a quadrature of the transverse momentum integral.
//   d log det(1-M)/dL   = -Tr[(1-M)^{-1} dM]          = -sum_i c_i f1_i G_ii
//   d2 log det(1-M)/dL2 = -Tr[(1-M)^{-1} d2M] - Tr[((1-M)^{-1} dM)^2]
//                       = -sum_i c_i f2_i G_ii - sum_ik c_i f1_i G_ik c_k f1_k G_ki,
// with G = W^T (1-M)^{-1} S W (Jacobi's formula).
// With S = +-1 uniformly, 1 - M is symmetric, and positive definite for a physical round trip
// at imaginary frequency (||M|| < 1), so the log det comes from a Cholesky factorisation
// (Hartmann, Ingold, Maia Neto, Phys. Scr. 93, 114003 (2018) use the same symmetrisation).
// Mixed signs fall back to a pivoted LU.
#include <Eigen/Dense>
#include <string>
#include <vector>

#include "solver/spectral.h"

namespace roundtrip {

struct LowRankBlock {
  Eigen::MatrixXd W;   ///< n x q
  Eigen::VectorXd c;   ///< q
  Eigen::VectorXd f1;  ///< q, only read for order >= 1
  Eigen::VectorXd f2;  ///< q, only read for order 2
  Eigen::VectorXd s;   ///< n, entries +-1 (0 allowed for zero rows)
  /// Optional sparsity of W (banded multipole-node structure): row groups [group_start[g],
  /// group_start[g+1]) and, per column c and group g, the rows [lo, hi) outside which column c
  /// is zero in that group: lo = col_lo[c * groups + g], hi = col_hi[...]. Empty: W is dense.
  std::vector<int> group_start;
  std::vector<int> col_lo, col_hi;
  /// False: W's entries outside the recorded ranges are unset (never written, so a builder
  /// saves writing n x q zeros); logdet_one_minus then reads only the ranges, or zeroes the
  /// rest on a copy when it needs a path that reads all of W. Requires the ranges.
  bool zero_outside_ranges = true;
  /// Size W (n x q), c, f1, f2 (q) and s (n); contents are left unset.
  void resize(Eigen::Index n, Eigen::Index q) {
    W.resize(n, q);
    c.resize(q);
    f1.resize(q);
    f2.resize(q);
    s.resize(n);
  }
};

struct LogDetResult {
  Spectral s;
  bool ok = true;
  std::string message;  ///< set if the factorisation failed (1 - M not positive definite)
  int dimension = 0;
};

/// How the node-space matrix 1 - K (q x q) is factorised. kAuto: banded when its non-zero band,
/// after ordering the columns by the centre of their row range, is narrow (the momentum nodes of
/// the sphere-plate blocks couple only to nodes nearby), dense otherwise. kDense and kBanded
/// force one (tests compare them).
enum class NodeSpaceSolver { kAuto, kDense, kBanded };

/// log det A from an LU factorisation of A when det A > 0 (an even number of negative pivots
/// and a finite log); false otherwise, with `out` set to the failure every caller reports.
bool positive_lu_log_det(const Eigen::PartialPivLU<Eigen::MatrixXd>& lu, LogDetResult& out);

LogDetResult logdet_one_minus(const LowRankBlock& block, DerivativeOrder order,
                              NodeSpaceSolver solver = NodeSpaceSolver::kAuto);

/// log det A and its L-derivatives for A = 1 - K given directly in node space: K symmetric,
/// K_ij = sqrt(c_i c_j) G_ij with G independent of L and dc_i/dL = f1_i c_i,
/// d2c_i/dL2 = f2_i c_i (the form logdet_one_minus reaches through Sylvester's identity).
/// Only the lower triangle of A is read. A must be positive definite.
LogDetResult logdet_node_matrix(Eigen::MatrixXd A, const Eigen::VectorXd& f1,
                                const Eigen::VectorXd& f2, DerivativeOrder order,
                                NodeSpaceSolver solver = NodeSpaceSolver::kAuto);

/// log det(1 - sign K) and its L-derivatives in node space, K = C^{1/2} W^T W C^{1/2} (q x q),
/// for c_i >= 0 and sign = +1 or -1; the signs S are not read. Same banded / dense choice as
/// logdet_one_minus. Sphere-sphere uses it for det(1 - G) det(1 + G) = det(1 - G^2),
/// G = W^T S W, with the mirror symmetry of equal spheres (sphere_sphere.cc).
LogDetResult logdet_node_gram(const LowRankBlock& block, double sign, DerivativeOrder order,
                              NodeSpaceSolver solver = NodeSpaceSolver::kAuto);

}  // namespace roundtrip
