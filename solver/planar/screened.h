#pragma once
// A dielectric half-space with mobile charge carriers whose zero-frequency TM reflection is
// screened (Debye-Hueckel): the static potential inside obeys (nabla^2 - kappa_D^2) phi = 0, so
// with phi and eps D_z continuous at the surface
//   r_TM(0, k) = (eps_s q - eps_m k)/(eps_s q + eps_m k),  q = sqrt(k^2 + kappa_D^2),
// eps_s the material's static (lattice) eps(0), eps_m the medium's (Pitaevskii, PRL 101, 163202
// (2008); Dalvit & Lamoreaux, PRL 101, 163203 (2008), vacuum eps_m = 1; the medium factor derived
// the same way). kappa_D -> 0 gives the dielectric term (eps_s - eps_m)/(eps_s + eps_m);
// kappa_D -> inf the Drude-conductor term r_TM = 1. r_TE(0) = 0 (carriers do not screen static
// magnetic fields). At xi > 0 the reflection is the plain Fresnel one of the material (the
// carriers' Drude term is left out of eps(i xi), as in both papers).
// Nondegenerate carriers of one sign (Debye): kappa_D^2 = n e^2/(eps_0 eps_s k_B T), n in 1/m^3,
// T in K (standard); at T = 0 kappa_D = inf. Or a Debye length lambda_D = 1/kappa_D directly
// (then independent of T).
#include <optional>

#include "solver/materials/material.h"
#include "solver/planar/planar.h"

namespace roundtrip {

struct Screening {
  double carrier_density = 0.0;        ///< n, 1/m^3 (>= 0), used when debye_length is unset
  std::optional<double> debye_length;  ///< lambda_D (m, > 0): kappa_D = 1/lambda_D
  double temperature_K = 0.0;          ///< T for kappa_D from n (set by with_temperature)
  /// kappa_D^2 in 1/m^2 (+inf for n > 0 at T = 0; 0 for n = 0).
  double kappa_sq(double static_eps) const;
};

/// The half-space of a dielectric `material` with screened static TM reflection. Throws
/// std::invalid_argument if the material is a conductor at xi = 0 (its r_TM(0) is 1 already).
PlanarPtr make_screened_half_space(MaterialPtr material, Screening screening);

}  // namespace roundtrip
