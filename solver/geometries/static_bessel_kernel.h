#pragma once
// The n = 0 (xi = 0) sphere-plate round trip in node space, in closed form over the multipoles,
// for the channels whose static sphere factor is g_l^2 = 1 for every l (TM of a conducting
// sphere, Drude or plasma; the scalar Dirichlet sphere) over a plate whose static reflection rho
// does not depend on k (conductors: 1; dielectric half-spaces: (eps-1)/(eps+1)).
//
// The multipole round trip of sphere_plate.cc at xi = 0 is M = W C W^T with
//   W_{l j} = g_l (R/2D)^{l+1/2} t_j^l sqrt(w_j) / sqrt((l-m)! (l+m)!),   c_j = rho,
// (t_j, w_j the nodes and weights of \int_0^inf dt e^{-t}, t = 2kD, D = R + L), and by Sylvester's
// identity det(1 - M) = det(1 - K), K = C^{1/2} W^T W C^{1/2}. With g_l = 1 the sum over l is a
// Bessel series, sum_{l>=m} y^{2l}/((l-m)!(l+m)!) = I_{2m}(2y) (DLMF 10.25.2), so
//   K_ij = rho sqrt(w_i w_j) (R/2D) [I_{2m}(R sqrt(t_i t_j)/D) - delta_{m0} [l = 0 excluded]],
// exact in l (no multipole cut-off); only the Nystrom nodes in t and the m range are truncated.
// K couples nodes within ~9 units of sqrt(t) (the kernel is ~exp(-(sqrt t_i - sqrt t_j)^2/2)),
// so it is stored as a band and 1 - K is factorised banded (solver/logdet/low_rank.h).
#include <Eigen/Core>
#include <vector>

namespace roundtrip {

class StaticBesselKernel {
 public:
  /// t, log_w: nodes and log weights (weight of e^{-t} dt included); R, D in metres; rho > 0;
  /// skip_monopole: the l = 0 term is absent (electromagnetic TM: l >= 1); m = 0 .. m_cap.
  StaticBesselKernel(const std::vector<double>& t, const std::vector<double>& log_w, double R,
                     double D, double rho, bool skip_monopole, int m_cap);
  int m_cap() const { return m_cap_; }
  int size() const { return static_cast<int>(n_); }
  /// 1 - K_m, q x q, zero outside the band (both triangles filled).
  Eigen::MatrixXd one_minus(int m) const;

 private:
  std::size_t n_ = 0;
  int m_cap_ = 0;
  std::vector<int> first_pair_;  // pairs of row i: (i, i + d), d = 0 .. len_[i] - 1
  std::vector<int> len_;
  std::vector<double> log_k_;  // [pair * (m_cap + 1) + m]
};

/// Highest m for which the n = 0 blocks still matter at relative accuracy tol: block m carries
/// ~Z^{2m} of the sum, Z = exp(-mu), cosh mu = D/R (the bispherical parameter of Bimonte & Emig,
/// PRL 109, 160403 (2012), where the Dirichlet blocks have eigenvalues Z^{2n+1}, n >= m).
int static_m_cap(double radius, double gap, double tol);

}  // namespace roundtrip
