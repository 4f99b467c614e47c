#pragma once
// Gauss-Laguerre quadrature  \int_0^inf e^{-t} f(t) dt ~ sum_j w_j f(t_j), exact for polynomials
// of degree <= 2N-1 (Abramowitz & Stegun 25.4.45). Nodes from the Golub-Welsch eigenvalue method
// (Math. Comp. 23, 221 (1969)) refined by Newton steps on L_N; weights in log form,
//   w_j = t_j / ((N+1)^2 L_{N+1}(t_j)^2)   (A&S 25.4.45),
// because they underflow (w_j ~ e^{-t_j}) for large nodes.
#include <vector>

namespace roundtrip::special {

struct GaussLaguerreRule {
  std::vector<double> nodes;        ///< t_j, ascending
  std::vector<double> log_weights;  ///< log w_j (weights include the e^{-t} factor)
};

/// The N-point rule (N >= 1). Computed once per N and cached (thread-safe).
const GaussLaguerreRule& gauss_laguerre(int n);

}  // namespace roundtrip::special
