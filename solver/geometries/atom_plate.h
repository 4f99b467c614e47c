#pragma once
// An atom at distance z above a planar body, in a medium: the Casimir-Polder free energy.
//
// Conventions: z (m) is the distance of the atom's nucleus from the plate's surface (the gap L of
// the frequency rules); alpha(i xi) the polarizability volume alpha_SI/(4 pi eps_0) in m^3
// (solver/atoms/polarizability.h); r_TE, r_TM the plate's reflection coefficients seen from the
// medium (solver/planar/planar.h: perfect conductor r_TE = -1, r_TM = +1);
// kappa = sqrt(k^2 + eps_m xi^2/c^2), kappa_0 = sqrt(eps_m) xi/c.
//
// At one imaginary frequency (dimensionless; E = k_B T sum' s(xi_n) or (hbar/2pi) \int s dxi,
// solver/geometries/geometry.h):
//   s(xi; z) = -(alpha(i xi)/eps_m) \int_0^inf dk (k/kappa) e^{-2 kappa z}
//                  [ (2 kappa^2 - kappa_0^2) r_TM - kappa_0^2 r_TE ]
//            = -(alpha/eps_m) \int_{kappa_0}^inf dkappa e^{-2 kappa z} [ ... ]
// (Lifshitz theory of an atom near a surface as the dilute limit of a second half-space, or the
// Green tensor: Antezza, Pitaevskii, Stringari, PRA 70, 053619 (2004), eq. (4) ff. in vacuum;
// Babb, Klimchitskaya, Mostepanenko, PRA 70, 042901 (2004); the factor 1/eps_m and eps_m in
// kappa for an atom embedded in a medium without local-field correction, alpha then the atom's
// polarizability in that medium: Buhmann & Welsch, Prog. Quantum Electron. 31, 51 (2007), from
// memory). U < 0 is attraction; F = -dU/dz (< 0 attracts the atom to the plate).
// z-derivatives are analytic: d/dz brings -2 kappa, d2/dz2 brings 4 kappa^2.
// xi = 0 exactly: kappa = k, the TE term carries kappa_0^2 = 0, so
//   s(0; z) = -(alpha(0)/eps_m(0)) \int_0^inf dk 2 k^2 e^{-2 k z} r_TM(0, k)
// (= -alpha(0) r/(2 z^3) for a k-independent static r_TM = r; the n = 0 term weighted 1/2 gives
// the high-temperature limit U = -k_B T alpha(0) r/(4 z^3), standard).
// Limits (tests/atoms): perfect mirror, T = 0, z large: U = -3 hbar c alpha(0)/(8 pi z^4)
// (Casimir & Polder, Phys. Rev. 73, 360 (1948)); z small: U = -C3/z^3,
//   C3 = (hbar/4pi) \int_0^inf dxi (alpha(i xi)/eps_m) r_TM(i xi, k -> inf)
// (Lennard-Jones, Trans. Faraday Soc. 28, 333 (1932); for a half-space in vacuum
// r_TM(k -> inf) = (eps - 1)/(eps + 1), standard).
// Electrolyte medium ([medium] ionic_strength; solver/planar/electrolyte.h): the ions screen the
// xi = 0 term only (they cannot follow fields at xi_1 = 2 pi k_B T/hbar ~ 2.5e14 rad/s at 300 K;
// Parsegian, Van der Waals Forces (2006)). Derived as the dilute limit of the screened plate-plate
// n = 0 term: plate 2 a layer z > L of atoms of density N in the same electrolyte, eps_2 = eps_m
// + 4 pi N alpha (the convention that gives the unscreened term above at kappa = 0). The ions'
// charge response -(2 N_A e^2 I/k_B T) phi does not depend on the local eps, so inside the layer
// eps_2 kappa_2^2 = eps_m kappa^2 (Parsegian's Debye constant of each medium, kappa_i^2 ~ 1/eps_i
// at a given ion density), q_2^2 = k^2 + kappa^2 eps_m/eps_2, and its reflection seen from the
// screened gap, (eps_2 q_2 - eps_m q)/(eps_2 q_2 + eps_m q) = (delta/2)(1 - kappa^2/(2 q^2)) +
// O(delta^2), delta = eps_2/eps_m - 1, depends on k (it would be k-independent only if the ions'
// response scaled with the local eps). With s_pp = -(1/2pi) int k dk r' r_2 e^{-2qL} to first order
// in N and s = -(1/N) ds_pp/dL:
//   s(0; z) = -(alpha(0)/eps_m(0)) \int_0^inf dk (k/q) (2 q^2 - kappa^2) r'(k) e^{-2 q z},
// r' = [(k - q) + r (k + q)]/[(k + q) + r (k - q)] the plate's static r_TM(0, k) seen from the
// screened medium (electrolyte.h). This is the xi > 0 integrand above with kappa -> q, kappa_0 ->
// kappa (the Debye constant), r_TM -> r' and no TE term; the z-derivatives keep their form. The
// same result follows for a point dipole from the screened Green function e^{-kappa d}/d of the
// medium with its Dirichlet image (derived), and the sphere-plate engine's small conducting
// sphere reproduces it (tests/sphere_plate/sphere_electrolyte_test.cc). kappa -> 0 gives the
// unscreened term; a Drude conductor (r' = 1):
//   \int_kappa^inf dq (2 q^2 - kappa^2) e^{-2qz} = e^{-2 kappa z} (kappa^2/(2z) + kappa/z^2 + 1/(2
//   z^3))
// (derived; from \int_kappa^inf q^2 e^{-2qz} dq = e^{-2 kappa z}(kappa^2/(2z) + kappa/(2z^2) +
// 1/(4z^3)), checked with mpmath quadrature to 6e-16 at kappa z = 0.6, 1, 5), so the thermal term
// falls as e^{-2 kappa z} beyond the Debye length. eps_m(0) and alpha(0) keep the atom-in-medium
// convention above (alpha the atom's polarizability in the medium, the factor 1/eps_m(0), no
// local-field correction).
// Numerics: kappa in units of 1/(2z), x = 2 kappa z = x_0 + y, y in [0, inf) by Boost's exp-sinh
// rule to a relative 1e-11 per component.
#include <memory>
#include <optional>
#include <string>

#include "solver/atoms/polarizability.h"
#include "solver/geometries/geometry.h"
#include "solver/materials/material.h"
#include "solver/planar/planar.h"

namespace roundtrip {

class AtomPlate final : public Geometry {
 public:
  /// medium null means vacuum; a conducting medium is refused (std::invalid_argument).
  /// kappa_ion (1/m, >= 0; +inf screens the static term completely): the Debye constant of ions
  /// in the medium (above; 0: no ions).
  AtomPlate(PolarizabilityPtr atom, PlanarPtr plate, MaterialPtr medium, double kappa_ion = 0.0);

  Spectral at_frequency(double xi, double z, DerivativeOrder order) const override;
  ResultScale scale() const override { return ResultScale::kTotal; }
  /// min(c/(2 z sqrt(eps_m(0))), the atom's characteristic frequency).
  double frequency_scale(double z) const override;
  std::string kind() const override { return "atom-plate"; }
  std::string describe() const override;

  /// C3 = (hbar/4pi) \int dxi alpha(i xi)/eps_m r_TM(i xi, k -> inf) in J m^3, with r_TM taken at
  /// k = max(1e12 /m, 1e6 sqrt(eps_m) xi/c): the top material's non-retarded reflection for
  /// films thicker than a few pm.
  double c3() const;
  /// C4 = 3 hbar c alpha(0)/(8 pi) in J m^4 when the plate is a perfect conductor in vacuum
  /// (Casimir & Polder 1948); none otherwise.
  std::optional<double> c4() const;

  const Polarizability& atom() const { return *atom_; }
  double kappa_ion() const { return kappa_ion_; }

 private:
  PolarizabilityPtr atom_;
  PlanarPtr plate_;
  MaterialPtr medium_;
  double eps_m0_ = 1.0;
  double kappa_ion_ = 0.0;
};

std::shared_ptr<AtomPlate> make_atom_plate(PolarizabilityPtr atom, PlanarPtr plate,
                                           MaterialPtr medium = nullptr, double kappa_ion = 0.0);

}  // namespace roundtrip
