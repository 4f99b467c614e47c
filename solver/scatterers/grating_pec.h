#pragma once
// Reflection operator of a perfectly conducting lamellar grating (ridges and substrate perfect
// conductors) at imaginary frequency, by its own modal method: Rayleigh plane waves above the
// ridge tops, the exact waveguide modes of the rectangular grooves below, matched at the ridge
// tops (the classical mode matching of lamellar gratings; for rectangular corrugations in the
// Casimir setting see Buscher & Emig, PRA 69, 062101 (2004); the groove-mode expansion is
// derived below). A huge-eps Fourier modal method converges badly here; this method needs no eps.
//
// Conventions (those of grating_fmm.h, so that the matrix is interchangeable with the FMM's):
//   grooves along y, period Lambda along x, z up towards the gap, ridge tops at z = 0; ridges
//   centred at x = m Lambda with width f Lambda, grooves of width w = (1 - f) Lambda centred at
//   x = Lambda/2 + m Lambda, depth h (bottom at z = -h, perfectly conducting), filled with the
//   gap medium eps_m. Imaginary frequency xi > 0, Bloch vector (k_x, k_y), orders n = -N..N,
//   k_n = k_x + n G. Lengths in units of c/xi (q0 = xi/c = 1); then
//   curl E = -h, curl h = eps_m E (h = Z_0 H), every field ~ e^{i(k_n x + k_y y)}.
//   Basis ("tangential E"): (E_x of orders -N..N, E_y of orders -N..N) at z = 0; down-going
//   waves ~ e^{+kappa_n z}, up-going ~ e^{-kappa_n z}, kappa_n^2 = k_n^2 + k_y^2 + eps_m;
//   h~ = (-h_y, h_x) = V0 (d - u) with V0 = [[k_y^2 + eps_m, -k_y k_n], [-k_y k_n, k_n^2 + eps_m]]
//   / kappa_n per order (grating_fmm.cc); R maps d to u. A flat perfect conductor at z = 0 gives
//   R = -1 (r_TE = -1, r_TM = +1 in planar.h's convention).
// Grooves (derived): with gamma^2 = eps_m + k_y^2, the transverse fields follow from E_y and h_y,
//   E_x = -(i k_y d_x E_y + d_z h_y)/gamma^2,  h_x = (eps_m d_z E_y - i k_y d_x h_y)/gamma^2,
//   so the walls make E_y Dirichlet (modes sin(alpha_m s), m >= 1) and h_y Neumann
//   (cos(alpha_m s), m >= 0), s = x - f Lambda/2 across the groove, alpha_m = m pi / w, each
//   with decay q_m = sqrt(gamma^2 + alpha_m^2); the bottom makes E_y ~ sinh(q_m (z + h)) and
//   h_y ~ cosh(q_m (z + h)). In terms of the opening's tangential E, expanded as
//   E_x = sum_m b^x_m cos(alpha_m s), E_y = sum_m b^y_m sin(alpha_m s), the groove's h~ at z = 0
//   has the admittance per m (derived): (coth(q_m h)/q_m) [[gamma^2, i k_y alpha_m],
//   [-i k_y alpha_m, eps_m + alpha_m^2]], whose inverse is (tanh(q_m h)/(eps_m q_m))
//   [[eps_m + alpha_m^2, -i k_y alpha_m], [i k_y alpha_m, gamma^2]] (m = 0: tanh(gamma h)/gamma).
// Computed through the exact decoupling of a y-invariant perfect conductor into the Dirichlet
//   scalar E_y (TM) and the Neumann scalar h_y (TE) (Emig, Hanke, Golestanian, Kardar, PRL 87,
//   260402 (2001)), each matched at z = 0 (continuity over the opening, the scalar or its normal
//   derivative zero on the ridge tops, Galerkin with the groove modes; derived):
//     R_D = (1 + Z_D K)^-1 (Z_D K - 1),  Z_D = A_s diag(2 tanh(q_m h)/(w q_m)) A_s^T / Lambda,
//     R_N = (K + Z_N)^-1 (K - Z_N),      Z_N = A_c diag(q_m tanh(q_m h)/rho_m) A_c^T / Lambda,
//   K = diag(kappa_n), rho_0 = w, rho_m = w/2, and the projections referred to the ridge centre
//   (real after a diagonal unitary change of the groove basis; S+- = (w/2)[sinc((alpha_m - k_n)
//   w/2) +- sinc((alpha_m + k_n) w/2)]): A_c(n, m) = (-1)^n (S+ for m even, S- for m odd),
//   A_s(n, m) = (-1)^n (S- for m even, S+ for m odd). Only tanh(q h) = (1 - e^{-2qh})/(1 +
//   e^{-2qh}) appears: decaying exponentials only. Then to the tangential-E basis per pair of
//   orders (n, n') (derived from the E_x formula above):
//     R_xx = -(kappa_n/kappa_n') R_N,  R_xy = (k_y/gamma^2)(k_n R_D + kappa_n k_n' R_N/kappa_n'),
//     R_yx = 0,  R_yy = R_D.
//   Why not the vector matching directly (same result, tests/gratings/grating_pec_test.cc): the
//   tangential-E admittances of the gap (V0) and of the grooves both become singular like
//   (xi/c)^2 in their electrostatic direction, so it loses digits like (k c/xi)^2; the scalar
//   route loses at most ~k/gamma in R_xy. SI wave numbers with eps_m (xi/c)^2 in place of eps_m
//   (the formulas above scale to it exactly).
// Groove modes: m = 0..M_g with M_g = max(1, round(2 N (1 - f))), so that the highest groove
//   wave number M_g pi / w matches the highest order N G (the usual choice that keeps the two
//   expansions' resolutions equal; its convergence is tested in
//   tests/gratings/grating_pec_test.cc).
// Limits handled exactly: f = 1 or h = 0 give the flat conductor at z = 0 (R = -1); f = 0 gives
//   the flat conductor at z = -h (R = -e^{-2 kappa_n h} per order). Note that f -> 0+ is NOT
//   f = 0: infinitely thin walls remain, and they matter.
// xi = 0 (derived): the static fields are gradients, E = -grad phi, H = -grad psi, so E_y =
//   -i k_y phi and h_y ~ -i k_y psi: the same Dirichlet (phi: the grounded conductor) and Neumann
//   (psi: no normal B) problems with eps~ = 0 (Laplace; gamma = |k_y|, q_m = sqrt(k_y^2 +
//   alpha_m^2), kappa_n = |k|). They do not mix at xi = 0 for any planar body either (its static
//   TM reflection acts on phi, its static TE one on psi), so the static basis is (phi of orders
//   -N..N, psi of orders -N..N) and R = diag(R_D, R_N); a planar body gives diag(-r_TM(0),
//   -r_TE(0)) per order (planar_reflection_in_orders with both static scalars). The grooves'
//   m = 0 Neumann mode at k_y = 0 has q = 0 (its weight q tanh(q h) -> 0, no division); an order
//   with kappa_n = 0 (k_n = k_y = 0, a uniform potential) is decoupled with its limits R_D = -1,
//   R_N = +1 (its projections vanish like k; derived).
// Solved in symmetric positive definite form (Cholesky): R_D = -1 + 2 Z_D Y S^-1 Y with
//   Y = K^(1/2), S = 1 + Y Z_D Y (Woodbury), R_N = 2 (K + Z_N)^-1 K - 1, Z = A A^T with the
//   weights' square roots folded into the projections; only the rows and columns of a block of
//   orders lo..hi are formed when asked (a round trip needs only the orders that reach the other
//   body; grating_plate.cc).
#include <Eigen/Dense>

namespace roundtrip {

struct PecLamellar {
  double period = 0.0;   ///< Lambda (m), > 0
  double filling = 0.0;  ///< f in [0, 1]
  double depth = 0.0;    ///< h (m), >= 0
};

/// The default groove-mode count M_g (modes m = 0..M_g) for N orders (header).
int pec_groove_modes(int orders, double filling);

/// The Dirichlet and Neumann scalar reflections (header) on the orders of index lo..hi (0..2N;
/// hi < 0: all), with k_n and kappa_n (1/m) of every order -N..N.
struct PecScalarReflection {
  Eigen::MatrixXd rd, rn;  ///< R_D, R_N on the block lo..hi
  Eigen::VectorXd k, kappa;
};
PecScalarReflection pec_lamellar_scalar(const PecLamellar& g, double xi, double eps_m, int orders,
                                        double kx, double ky, int groove_modes = -1, int lo = 0,
                                        int hi = -1);

/// The reflection operator at xi >= 0 (rad/s), gap medium eps_m, Bloch vector (k_x, k_y) (1/m);
/// groove_modes < 0: the default M_g. xi > 0: the tangential-E basis (2M x 2M, M = 2N + 1;
/// header); xi = 0: the static basis (phi, psi), diag(R_D, R_N). With a block lo..hi of order
/// indices (0..2N), only that block of each component (2 (hi - lo + 1) square).
Eigen::MatrixXd pec_lamellar_reflection(const PecLamellar& g, double xi, double eps_m, int orders,
                                        double kx, double ky, int groove_modes = -1, int lo = 0,
                                        int hi = -1);

/// The n = 0 term's operator of a lamellar grating of a Drude (or any static) conductor, ridges
/// and substrate one connected conductor: an equipotential (the static TM problem is the
/// Dirichlet problem of the potential), and no static TE reflection (mu = 1: a Drude metal
/// does not screen a static magnetic field). Returns R_D at xi = 0 on the orders lo..hi, in the
/// FMM's static potential basis (grating_fmm.h: a planar body reflects the potential by
/// -r_TM(0), so a flat conductor gives -1). A function only: the geometries still refuse
/// conducting non-ideal ridges (io/grating_spec.cc).
Eigen::MatrixXd conductor_lamellar_static(const PecLamellar& g, double eps_m, int orders, double kx,
                                          double ky, int lo = 0, int hi = -1);

}  // namespace roundtrip
