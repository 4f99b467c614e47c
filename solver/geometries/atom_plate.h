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
  AtomPlate(PolarizabilityPtr atom, PlanarPtr plate, MaterialPtr medium);

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

 private:
  PolarizabilityPtr atom_;
  PlanarPtr plate_;
  MaterialPtr medium_;
  double eps_m0_ = 1.0;
};

std::shared_ptr<AtomPlate> make_atom_plate(PolarizabilityPtr atom, PlanarPtr plate,
                                           MaterialPtr medium = nullptr);

}  // namespace roundtrip
