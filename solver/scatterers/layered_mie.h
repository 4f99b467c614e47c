#pragma once
// Mie amplitudes of a radially layered sphere (core and concentric shells) at imaginary frequency,
// in the same basis, normalisation and log form as the homogeneous mie_imaginary (mie.h):
// T_l = -(i_l(x)/k_l(x)) F_l, x = kappa R (R the OUTER radius, kappa = n_m xi/c in the medium).
//
// Method: transfer of a logarithmic derivative from the core outwards, layer by layer (the idea of
// Toon & Ackerman, Appl. Opt. 20, 3657 (1981) and Yang, Appl. Opt. 42, 1710 (2003), continued to
// imaginary argument where the modified spherical Bessel functions i_l, k_l are real). In region j
// (wavenumber k_j = sqrt(eps_j) xi/c) the radial function of an l-multipole is
// f = A i_l(k_j r) + B k_l(k_j r) (E = f X_lm for TE; E = (1/k_j) curl(f X_lm) for TM). With
// mu = 1 the interface conditions are, for u = r f:
//   TE: f and u' continuous        ->  r f'/f continuous,
//   TM: k_j f and u'/k_j continuous -> (1/eps_j) r u'/u continuous.
// The state is the reduced log-derivative H = r f'/f - l (so r u'/u = l + 1 + H), which is O(z^2/l)
// for small z = k_j r and O(z) for large z: no (l+1)/z terms that cancel. For the pure solutions
//   H_i(z) = z i_{l+1}(z)/i_l(z) >= 0,    H_k(z) = -z k_{l+1}(z)/k_l(z) < -(l+1)
// (DLMF 10.51 recurrences; ratios from solver/special/bessel.h). Across an interface from eps to
// eps': TE keeps H; TM gives H' = (eps'/eps - 1)(l+1) + (eps'/eps) H. Inside a layer [r_a, r_b],
// with gamma = B k_l(z_a)/(A i_l(z_a)) = (H_i(z_a) - H_a)/(H_a - H_k(z_a)) (the denominator is > 0
// because r u'/u > 0 for the solution regular at the centre, and 1 + gamma > 0),
//   H_b = (H_i(z_b) + gamma Q H_k(z_b)) / (1 + gamma Q),
//   Q = [k_l(z_b)/k_l(z_a)] [i_l(z_a)/i_l(z_b)] in (0, 1], taken from logs (never overflows),
// and 1 + gamma Q = (1 + gamma) + |gamma| (1 - Q) for gamma < 0 (two positive terms; 1 + gamma and
// 1 - Q = -expm1(log Q) computed directly): no cancellation where gamma -> -1 (TM in a region
// much denser than the one below, anything above a perfect conductor) or Q -> 1 (thin shells).
// Outside, H_out = (H_i(x) + T k_l/i_l H_k(x))/(1 + T k_l/i_l) gives
//   F_l = (H_out - H_i(x)) / (H_out - H_k(x)),
// which for one region is algebraically the homogeneous formula of mie.h.
// A perfectly conducting region hides everything inside it: above it, TE starts from f = 0
// (gamma = -1) and TM from u' = 0 (H = -(l+1)).
// Conditioning: where a region is much denser than what lies below it and thin (TE: gamma > 0), H_b
// is a difference of terms ~(eps_region/eps_below) larger than itself, and rounding grows by that
// ratio (measured: 1e-9 relative in T at a zero-thickness shell with eps ratio 3.5e6; estimated
// ~ulp R/d for a Drude shell of thickness d at low xi). At weak contrast F_l = O(eps - 1) is a
// difference of H's, as in the homogeneous formula. Regions of zero thickness (equal consecutive
// `outer`) are allowed and change nothing.
//
// Static limit (xi = 0), static_layered(): the same recursion with the exact xi -> 0 functions.
//   In a region with no static screening (dielectric; Drude for TE) i_l, k_l -> r^l, r^{-l-1}:
//   H_i = 0, H_k = -(2l+1), Q = (r_a/r_b)^{2l+1} (Laplace's equation).
//   TM: a conductor (Drude, plasma or perfect) is an equipotential: above it H = -(l+1) (for the
//   electric potential Phi = r^l + beta r^{-l-1}: Phi(r_c) = 0); an outermost conductor gives
//   g_l^2 = 1. Between dielectrics this is Laplace's problem with Phi and eps dPhi/dr continuous
//   (checked against the classic coated-sphere multipole polarisability and the dielectric-coated
//   conductor, both derived from Laplace's equation, in tests/scatterers).
//   TE: only plasma (London) and perfect conductors screen a static magnetic field. The l-th
//   static magnetic multipole in a plasma region obeys the London equation
//   curl curl B = -k_p^2 B (k_p = omega_p/c, the inverse London/plasma penetration depth), i.e.
//   the modified Helmholtz equation with wavenumber k_p: f = A i_l(k_p r) + B k_l(k_p r), which
//   is exactly the xi -> 0 limit of eps(i xi) xi^2/c^2 -> k_p^2. Outside screening regions f is
//   harmonic (r^l, r^{-l-1}); f and f' are continuous (mu = 1, no surface currents for a finite
//   k_p). A perfect conductor is f = 0 on its surface. Matching the outer field
//   r^l + w R^{2l+1} r^{-l-1} to H_out gives w = -H_out/(2l+1+H_out) = tau, and
//   g_l^2 = -tau l/(l+1) = l H_out / ((l+1)(2l+1+H_out)); for a homogeneous plasma sphere
//   H_out = y i_{l+1}(y)/i_l(y), y = k_p R, and this is the (l/(l+1)) i_{l+1}/i_{l-1} of mie.h.
//   TM: g_l^2 = tau l/(l+1), tau = -H_out/(2l+1+H_out) (H_out seen from the medium).
#include <vector>

#include "solver/materials/material.h"
#include "solver/scatterers/mie.h"

namespace roundtrip {

/// One region of a layered sphere at one imaginary frequency, listed from the core outwards.
struct MieRegion {
  double n = 1.0;      ///< sqrt(eps_j / eps_medium) > 0 (ignored if perfect_conductor)
  double outer = 1.0;  ///< outer radius / R, increasing, the last one exactly 1
  bool perfect_conductor = false;
};

/// Electromagnetic T_l, l = 0..lmax (l = 0 is zero), of the layered sphere; x = kappa R > 0.
MieLog mie_layered_imaginary(double x, const std::vector<MieRegion>& regions, int lmax);

/// One region for the xi = 0 limit, core first.
struct StaticRegion {
  StaticLimit limit;   ///< the material's exact xi -> 0 class
  double outer = 1.0;  ///< outer radius (m), increasing; the last is the sphere's radius
};

/// Exact xi = 0 factors g_l^2 (sign conventions of static_sphere in mie.h: g2_tm = tau^TM l/(l+1),
/// g2_te = -tau^TE l/(l+1) >= 0) of the layered sphere in a medium of static permittivity
/// medium_static_eps. g2_tm is exactly 1 where the outermost region conducts; g2_te is exactly 0
/// where no region is a plasma or perfect conductor.
StaticSphere static_layered(const std::vector<StaticRegion>& regions, double medium_static_eps,
                            int lmax);

}  // namespace roundtrip
