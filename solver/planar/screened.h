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
// In general kappa^2 = (e^2/(eps_0 eps_s)) dn/dmu (linear screening by one carrier species,
// standard; Ashcroft & Mermin, Solid State Physics (1976), ch. 17). Statistics:
//  - Boltzmann (nondegenerate, Debye): kappa_D^2 = n e^2/(eps_0 eps_s k_B T), n in 1/m^3, T in K
//    (standard); at T = 0 kappa_D = inf.
//  - Thomas-Fermi (degenerate free-electron gas, spin 2, effective mass m* = mass_ratio m_e):
//    kappa_TF^2 = 3 n e^2/(2 eps_0 eps_s E_F), E_F = hbar^2 (3 pi^2 n)^{2/3}/(2 m*) (Ashcroft &
//    Mermin (1976), eq. 17.50 with eps_s; standard); independent of T.
//  - Fermi-Dirac (the crossover, parabolic band): n = N_c F_{1/2}(eta), N_c = 2 (m* k_B T/
//    (2 pi hbar^2))^{3/2}, dn/dmu = N_c F_{-1/2}(eta)/(k_B T), so
//    kappa^2 = kappa_D^2 F_{-1/2}(eta)/F_{1/2}(eta) (solver/special/fermi_dirac.h): Boltzmann for
//    n << N_c (kappa^2/kappa_D^2 = 1 - n/(2^{3/2} N_c) + ...), Thomas-Fermi for E_F >> k_B T
//    (kappa^2/kappa_TF^2 = 1 - (pi^2/12)(k_B T/E_F)^2 + ...; both derived from the series of F_j);
//    T = 0 gives Thomas-Fermi.
// Or a Debye length lambda_D = 1/kappa_D directly (then independent of T).
#include <optional>

#include "solver/materials/material.h"
#include "solver/planar/planar.h"

namespace roundtrip {

enum class CarrierStatistics { kBoltzmann, kThomasFermi, kFermiDirac };

struct Screening {
  double carrier_density = 0.0;  ///< n, 1/m^3 (>= 0), used when debye_length is unset
  CarrierStatistics statistics = CarrierStatistics::kBoltzmann;
  double mass_ratio = 1.0;             ///< m*/m_e (Thomas-Fermi, Fermi-Dirac)
  std::optional<double> debye_length;  ///< lambda_D (m, > 0): kappa_D = 1/lambda_D
  double temperature_K = 0.0;          ///< T for kappa_D from n (set by with_temperature)
  /// kappa^2 in 1/m^2 (Boltzmann: +inf for n > 0 at T = 0; 0 for n = 0).
  double kappa_sq(double static_eps) const;
  /// E_F = hbar^2 (3 pi^2 n)^{2/3}/(2 m*) in J (free-electron gas, spin 2).
  double fermi_energy() const;
};

/// The half-space of a dielectric `material` with screened static TM reflection. Throws
/// std::invalid_argument if the material is a conductor at xi = 0 (its r_TM(0) is 1 already).
PlanarPtr make_screened_half_space(MaterialPtr material, Screening screening);

}  // namespace roundtrip
