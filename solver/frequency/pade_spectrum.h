#pragma once
// Pade spectrum decomposition (PSD) of the Bose function: a replacement of the Matsubara sum by
// a much shorter sum over the poles of the [N-1/N] Pade approximant (Hu, Xu, Yan, J. Chem. Phys.
// 133, 101106 (2010); ibid. 134, 244106 (2011)).
//
// With z = hbar xi / (2 k_B T), coth z = 1/z + z phi(z^2), phi(w) = sum_{n>=1} 2 / (w + (n pi)^2)
// (Matsubara) = 1 / (3 + w / (5 + w / (7 + ...))) (Lambert's continued fraction). The
// convergent with denominator degree N is the [N-1/N] Pade approximant
//   phi_N(w) = sum_{j=1}^N 2 eta_j / (w + y_j^2),
// so that for any s(xi) analytic and decaying in the right half plane
//   k_B T sum'_{n>=0} s(xi_n)  ~=  k_B T [ s(0)/2 + sum_j eta_j s(xi_j) ],  xi_j = 2 y_j k_B
//   T/hbar.
// For the lowest poles y_j -> j pi and eta_j -> 1 (the Matsubara terms); the upper poles stand in
// for the whole Matsubara tail, so far fewer frequencies are needed when the spectrum is smooth
// on the scale of the Matsubara spacing (low temperature or short gaps).
#include <vector>

namespace roundtrip {

struct PadePoles {
  std::vector<double> y;    ///< dimensionless pole positions, z = i y_j, ascending
  std::vector<double> eta;  ///< weights relative to a Matsubara term (all > 0)
};

/// Largest supported N (the eigenvalue problem has 2N rows).
inline constexpr int kMaxPadePoles = 4000;

/// The N poles of the [N-1/N] PSD. y_j = 1/mu_j with mu_j the positive eigenvalues of the
/// symmetric tridiagonal 2N x 2N matrix with zero diagonal and off-diagonal
/// 1/sqrt((2i+3)(2i+5)), i = 0 .. 2N-2 (the Jacobi form of the continued fraction); eta_j from the
/// residues P(w)/Q'(w) of the convergent at w = -y_j^2. Throws std::invalid_argument unless
/// 1 <= n <= kMaxPadePoles.
PadePoles pade_spectrum_poles(int n);

}  // namespace roundtrip
