#pragma once
// An electrolyte between two planar bodies: the ions of the gap medium screen the zero-frequency
// (electrostatic) TM term; nothing at xi > 0 (ions cannot follow fields at the first Matsubara
// frequency, 2pi k_B T/hbar ~ 2.5e14 rad/s at 300 K; standard).
//
// Debye screening constant of the medium (SI; I the ionic strength in mol/m^3 = 1e-3 mol/L,
// I = (1/2) sum_i c_i z_i^2, eps_w the medium's static eps(0), T in K):
//   kappa^2 = 2 N_A e^2 I / (eps_0 eps_w k_B T)
// (Israelachvili, Intermolecular and Surface Forces, 3rd ed. (2011), ch. 14; standard), so
// 1/kappa = 0.304 nm / sqrt(I [mol/L]) for water (eps_w = 78.4) at 298.15 K.
//
// Zero-frequency TM term in the screened medium (derived; the same form as Parsegian, Van der
// Waals Forces (2006), n = 0 term with s_m = sqrt(k^2 + kappa^2), and Mahanty & Ninham,
// Dispersion Forces (1976)): the potential in the gap obeys (nabla^2 - kappa^2) phi = 0, so each
// transverse wave k decays across the gap with q = sqrt(k^2 + kappa^2):
//   s_0(L) = (1/2pi) int_0^inf k dk [ln(1 - r_a' r_b' e^{-2 q L}) + ln(1 - r_a,TE r_b,TE e^{-2kL})]
// with k dk = q dq. A body's static response is its admittance Y(k) = -eps_b dphi/dz / phi at its
// surface (inside; eps in units of eps_0): with an unscreened medium r_TM(0,k) = (Y - eps_m k)/
// (Y + eps_m k) (sign as planar.h: +1 for a conductor); with ions the medium's side is eps_m q:
//   r' = (Y - eps_m q)/(Y + eps_m q) = [(k - q) + r (k + q)] / [(k + q) + r (k - q)],
// the last form from r = r_TM(0,k) of the unscreened medium (derived; exact for any local body
// whose static response does not depend on the medium: half-spaces, layers, sheets, screened
// half-spaces; for first-order d-parameters it keeps the first order: a conductor with r =
// 1 + 2 k d gives 1 + 2 q d, the interface moved by d). A dielectric half-space gives
// r' = (eps_b k - eps_m q)/(eps_b k + eps_m q) -> -1 as k/q -> 0; a conductor r' = 1.
// Static TE (magnetic) fields are not screened by ions: that term keeps e^{-2kL}.
// Large kappa L: q >= kappa and k << kappa dominates, r_a' r_b' -> R_0 = (+1) for two bodies of
// the same kind (two dielectrics or two conductors), so
//   s_0 -> -(R_0/2pi) int_kappa^inf q dq e^{-2qL} = -R_0 (kappa/(4 pi L)) (1 + 1/(2 kappa L))
//          e^{-2 kappa L} [1 - sqrt(pi)(eps_a + eps_b)/(eps_m sqrt(kappa L)) + ...]
// for dielectrics (r' = -1 + 2 eps_j k/(eps_m q) + ..., and k ~ sqrt(kappa/L) where e^{-2qL}
// lives: <k> = (sqrt(pi)/2) sqrt(kappa/L); derived; conductors have no such correction),
// i.e. the screened Hamaker term A_0 (1 + 2 kappa L) e^{-2 kappa L} of Israelachvili (2011) and
// Parsegian (2006) when r = Delta is k-independent.

namespace roundtrip {

/// Avogadro constant (1/mol, exact since 2019).
inline constexpr double kAvogadro = 6.02214076e23;

/// kappa^2 (1/m^2) of an electrolyte of ionic strength I (mol/m^3, >= 0) in a medium of static eps
/// eps_w at T (K). T = 0 with I > 0 gives +inf (complete screening); I = 0 gives 0.
double electrolyte_kappa_sq(double ionic_strength_mol_m3, double eps_w, double temperature_K);

/// r' above from the unscreened static r_TM(0, k) of a body, k and q = sqrt(k^2 + kappa^2) (1/m).
/// q == k returns r exactly; k = 0 with r = 1 returns 1 (the conductor limit).
double screened_static_tm(double r, double k, double q);

}  // namespace roundtrip
