#pragma once
// Nonlocal metal half-space in the hydrodynamic (longitudinal plasmon) model.
//
// Free electrons with pressure term beta^2 grad(div P), background eps_b(xi) of bound charges,
// additional boundary condition: normal free-electron current zero at the surface. On the
// imaginary axis (xi rad/s, k 1/m, medium eps_m):
//   eps_T = eps_b + wp^2/(xi(xi+gamma)),  kappa_T = sqrt(k^2 + eps_T xi^2/c^2),
//   kappa_L = sqrt(k^2 + (wp^2/eps_b + xi(xi+gamma))/beta^2),
//   r_TM = [eps_T kappa - eps_m kappa_T - eps_m (eps_T-eps_b) k^2/(eps_b kappa_L)]
//        / [eps_T kappa + eps_m kappa_T + eps_m (eps_T-eps_b) k^2/(eps_b kappa_L)],
//   r_TE = local Fresnel with eps_T (the longitudinal wave does not couple to TE).
// Model as in Esquivel-Sirvent, Villarreal, Mochan, PRA 68, 052103 (2003); this form is derived
// here for eps_b, eps_m != 1 and reduces to the vacuum-bounded form of Esquivel-Sirvent et al.
// (2003) for eps_b = eps_m = 1. The nonlocal term always lowers r_TM (weaker attraction at small
// gaps); beta -> 0 gives the local Fresnel result. xi = 0 (exact): r_TM = (1 - eps_m k/(eps_b
// kappa_L0))/(1 + eps_m k/(eps_b kappa_L0)), kappa_L0 = sqrt(k^2 + wp^2/(eps_b beta^2))
// (Thomas-Fermi-like screening), r_TE as local.
#include <string>

#include "solver/materials/material.h"
#include "solver/planar/planar.h"

namespace roundtrip {

/// How beta follows from the Fermi velocity: beta^2 = (3/5) v_F^2 at high frequency (omega >>
/// 1/tau) or (1/3) v_F^2 at low frequency (standard; see Esquivel-Sirvent et al. 2003).
enum class HydrodynamicRegime { kHighFrequency, kLowFrequency };
std::string to_string(HydrodynamicRegime r);
/// beta (m/s) from v_F (m/s).
double hydrodynamic_beta(double fermi_velocity, HydrodynamicRegime regime);

/// Half-space of `metal` (a DrudeLorentz with plasma_frequency > 0; eps_inf, oscillators and
/// relaxations form eps_b) with hydrodynamic parameter beta (m/s, >= 0; 0 is the local limit).
/// Throws std::invalid_argument otherwise.
PlanarPtr make_hydrodynamic(MaterialPtr metal, double beta);

}  // namespace roundtrip
