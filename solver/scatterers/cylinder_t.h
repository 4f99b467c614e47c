#pragma once
// T-matrix of an infinitely long homogeneous cylinder (radius R, axis along z) at imaginary
// frequency xi and axial wave number k_z, in the basis of the longitudinal field components
// (psi_E, psi_H) = (E_z, eta_0 H_z) (eta_0 the vacuum impedance, the same inside and outside)
// with angular dependence e^{i m phi} e^{i k_z z}:
//   incident  psi = a_m I_m(p rho) e^{i m phi},  scattered  psi = b_m K_m(p rho) e^{i m phi},
//   b_m = T_m a_m,  T_m = -(I_m(pR)/K_m(pR)) tau_m  (2 x 2, real),
// p = sqrt(k_z^2 + eps_m xi^2/c^2) outside, p_1 = sqrt(k_z^2 + eps_1 xi^2/c^2) inside, mu = 1.
// Continuity of E_z, H_z, E_phi, H_phi at rho = R (E_phi, H_phi from the longitudinal
// components, derived from Maxwell's equations at omega = i xi:
//   E_phi = [(k_z m/rho) psi_E - k_0 d_rho psi_H]/p^2,
//   eta_0 H_phi = [eps k_0 d_rho psi_E + (k_z m/rho) psi_H]/p^2,  k_0 = xi/c)
// gives tau_m = Ahat_K^-1 Ahat_I with
//   Ahat_X = [[k_0 a^E_X, Delta], [-Delta, k_0 a^H_X]],  Delta = (k_z m/R)(1/p^2 - 1/p_1^2),
//   a^E_X = eps_m X'/(p X) - eps_1 D_1,  a^H_X = X'/(p X) - D_1,  D_1 = I'_m(p_1 R)/(p_1 I_m(p_1
//   R)),
// X = I_m or K_m at pR (the imaginary-frequency form of the dielectric-cylinder Mie problem,
// Bohren & Huffman, Absorption and Scattering of Light by Small Particles (1983), ch. 8, at
// oblique incidence; TE and TM mix through Delta at k_z != 0; the same structure as in
// Noruzifar, Emig, Zandi, PRA 84, 042501 (2011)). Limits (derived, tested in tests/cylinders):
// eps_1 -> inf gives tau = diag(1, I'K/(K'I)), i.e. T_EE = -I/K (Dirichlet), T_HH = -I'/K'
// (Neumann); k_z = 0 decouples. m -> -m flips the sign of the off-diagonal entries only.
//
// xi = 0 is exact (static limits, derived as the xi -> 0 limit of the above):
//   E: conductors (Drude, plasma, perfect) tau_EE = 1; a dielectric eps_1(0):
//      tau_EE = (eps_m - eps_1) I'/I / (eps_m K'/K - eps_1 I'/I) (arguments pR, p = |k_z|);
//   H: dielectrics and Drude conductors tau_HH = 0 (mu = 1); perfect conductor I'K/(K'I);
//      plasma (London), p_1^2 = k_z^2 + k_p^2:
//      tau_HH = (Delta^2 - k_p^2 D_1 a^H_I)/(Delta^2 - k_p^2 D_1 a^H_K);
//   cross terms 0.
#include <array>
#include <vector>

#include "solver/materials/material.h"

namespace roundtrip::cylinder {

/// out[n] = log K_n(z), n = 0..n_max, z > 0 (Boost K_0, K_1 below z = 600, DLMF 10.40.2 above;
/// upward recurrence in ratio form).
void log_k_range(double z, int n_max, std::vector<double>& out);
/// out[m] = log I_m(x), m = 0..m_max, x > 0 (downward ratio recurrence, DLMF 10.29.1).
void log_i_range(double x, int m_max, std::vector<double>& out);
/// I'_m(x)/I_m(x), m = 0..m_max (large x: Debye's expansion, DLMF 10.41.3).
void i_log_derivative(double x, int m_max, std::vector<double>& out);
/// K'_m(x)/K_m(x), m = 0..m_max.
void k_log_derivative(double x, int m_max, std::vector<double>& out);

/// tau_m as {EE, EH, HE, HH} for m >= 0 (negative m: flip EH and HE).
using Tau = std::array<double, 4>;

/// Orders m = 0..m_max of a homogeneous cylinder of `material` (perfect conductor allowed) in a
/// dielectric medium eps_m = medium.epsilon(xi) (eps_m(0) at xi = 0). log_t[m] = log(I_m/K_m)
/// at pR, tau[m] as above. k_z >= 0 (the result depends on k_z^2 except the sign of Delta).
/// A CoatedCylinder (cylinder_body.h) as `material` gives its layered T-matrix
/// (coated_cylinder_t), `radius` being the outer radius.
void cylinder_t(const Material& material, const Material& medium, double radius, double xi,
                double kz, int m_max, std::vector<double>& log_t, std::vector<Tau>& tau);

}  // namespace roundtrip::cylinder
