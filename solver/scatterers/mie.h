#pragma once
// Mie scattering of a homogeneous sphere at imaginary frequency, in the basis of modified
// spherical waves (solver/special/bessel.h): an incident regular wave i_l(kappa r) X_lm (TE, "M")
// or (1/kappa) curl[i_l X_lm] (TM, "N") scatters into T_l times the same wave with k_l.
// With x = kappa R (kappa = n_m xi / c in the medium), n = sqrt(eps_s / eps_m), y = n x,
// psi(z) = z i_l(z), zeta(z) = z k_l(z):
//   T^TE_l = -[n psi(x) psi'(y) - psi(y) psi'(x)] / [n zeta(x) psi'(y) - psi(y) zeta'(x)],
//   T^TM_l = -[n psi(y) psi'(x) - psi(x) psi'(y)] / [n psi(y) zeta'(x) - zeta(x) psi'(y)],
// the continuation of the Bohren & Huffman (1983, ch. 4) coefficients b_l, a_l to imaginary
// frequency. Perfect conductor: T^TE = -i_l/k_l, T^TM = -(x i_l)'/(x k_l)'. Scalar fields:
// Dirichlet T = -i_l/k_l, Neumann T = -i_l'/k_l' (l >= 0). Signs for a sphere denser than the
// medium: T^TE < 0 < T^TM. Stored as log|T| and sign, since |T| ranges over thousands of decades.
//
// Static limit (xi -> 0): T_l -> tau_l x^{2l+1} / ((2l+1)!! (2l-1)!!), with tau^TM = (l+1)/l
// for conductors, (l+1)(eps-1)/(l eps + l + 1) for dielectrics (eps = eps_s(0)/eps_m(0));
// tau^TE = -1 (perfect conductor), -i_{l+1}(y0)/i_{l-1}(y0) with y0 = omega_p R / c (plasma model),
// 0 (Drude, dielectrics). static_sphere() returns g_l^2 = tau_l l/(l+1) (EM) or the scalar
// analogue, the factor that enters the n = 0 round-trip matrix (sphere_plate.cc).
#include <vector>

#include "solver/materials/material.h"
#include "solver/scatterers/field.h"

namespace roundtrip {

struct MieLog {
  std::vector<double> log_abs_te, log_abs_tm;  ///< log|T_l|, l = 0..lmax (scalar: te only)
  std::vector<int> sign_te, sign_tm;           ///< sign of T_l (0 if T_l = 0)
};

/// x = kappa R > 0; n = sqrt(eps_s/eps_m) (ignored for PEC and scalar fields).
MieLog mie_imaginary(FieldKind field, bool perfect_conductor, double x, double n, int lmax);

struct StaticSphere {
  std::vector<double> g2_te, g2_tm;  ///< signed g_l^2, l = 0..lmax (scalar: te only)
};

/// The xi = 0 factors; for EM, `sphere` static limit relative to the medium's static eps.
StaticSphere static_sphere(FieldKind field, const StaticLimit& sphere, double medium_static_eps,
                           double radius, int lmax);

}  // namespace roundtrip
