#pragma once
// Quadrature for the transverse-momentum integrals of plane-wave-mediated round trips,
//   \int_0^inf e^{-t} f(t) dt,
// where f(t) is (nearly) a polynomial of degree p <= 2 l_max with positive coefficients, so the
// integrand is a bump of width ~sqrt(p) around t ~ p. In u = sqrt(t) every such bump has width
// ~1/sqrt(2), independent of p; composite Gauss-Legendre panels in u therefore need only
// O(sqrt(l_max)) nodes, instead of the O(l_max) nodes Gauss-Laguerre needs for exactness (the
// same sqrt(R/L) scaling as the plane-wave discretisation of Spreng, Ingold, Maia Neto,
// J. Chem. Phys. 153, 024115 (2020)). Same return type as gauss_laguerre(): nodes t_j and
// log-weights including e^{-t_j}.
#include "solver/special/gauss_laguerre.h"

namespace roundtrip::special {

/// Rule resolving bumps up to degree `max_degree`; `nodes_per_unit` Gauss-Legendre nodes per unit
/// of u = sqrt(t). Cached (thread-safe).
const GaussLaguerreRule& momentum_rule(int max_degree, int nodes_per_unit = 4);

}  // namespace roundtrip::special
