#pragma once
// Planar-response seam: Fresnel-type reflection coefficients of a plate seen from the medium.
//
// Conventions (imaginary frequency xi, transverse wave number k, medium eps_m):
//   kappa = sqrt(k^2 + eps_m xi^2 / c^2)  (1/m), the decay constant in the medium;
//   half-space:  r_TE = (kappa - kappa_1)/(kappa + kappa_1),
//                r_TM = (eps_1 kappa - eps_m kappa_1)/(eps_1 kappa + eps_m kappa_1),
//   kappa_1 = sqrt(k^2 + eps_1 xi^2/c^2). Perfect conductor: r_TE = -1, r_TM = +1.
// Sign convention: r_TM refers to the electric field along e_theta of each plane wave, so that
// r_TM -> +1 and r_TE -> -1 for a perfect conductor (Lifshitz formula as in Bordag, Mohideen,
// Mostepanenko, Phys. Rep. 353, 1 (2001)). At xi = 0 the exact static limits are used:
// dielectric r_TM = (eps_0 - eps_m)/(eps_0 + eps_m), r_TE = 0; conductors r_TM = 1; Drude r_TE = 0;
// plasma r_TE = (k - sqrt(k^2 + k_p^2))/(k + sqrt(k^2 + k_p^2)); perfect conductor r_TE = -1.
#include <memory>
#include <string>

#include "solver/materials/material.h"

namespace roundtrip {

struct Reflection {
  double te = 0.0;
  double tm = 0.0;
};

/// A planar surface bound to one imaginary frequency (material values cached).
class PlanarAtFrequency {
 public:
  virtual ~PlanarAtFrequency() = default;
  /// Reflection coefficients at transverse wave number k (1/m), k >= 0.
  virtual Reflection reflect(double k) const = 0;
};

class PlanarSurface {
 public:
  virtual ~PlanarSurface() = default;
  /// Bind to frequency xi >= 0 (rad/s) as seen from `medium`. xi == 0 gives the static limits.
  virtual std::unique_ptr<PlanarAtFrequency> at(double xi, const Material& medium) const = 0;
  /// One line for tables and HDF5 attributes, e.g. "half-space of gold-drude".
  virtual std::string describe() const = 0;
  /// True when r_TE = -1 and r_TM = +1 at every frequency (lets geometries take exact shortcuts).
  virtual bool is_perfect_conductor() const { return false; }
  /// The same body at temperature T (K) for bodies whose response depends on T (screening by
  /// thermal carriers, screened.h); null when it does not. io's build_geometry binds every plate
  /// to the case's temperature this way before building the geometry.
  virtual std::shared_ptr<const PlanarSurface> with_temperature(double /*temperature_K*/) const {
    return nullptr;
  }
};

using PlanarPtr = std::shared_ptr<const PlanarSurface>;

/// The homogeneous half-space of `material`.
PlanarPtr make_half_space(MaterialPtr material);

/// Ideal mirrors at every frequency: kElectric r_TE = -1, r_TM = +1 (perfect conductor);
/// kMagnetic r_TE = +1, r_TM = -1 (perfect magnetic conductor). solver/planar/ideal_mirror.cc.
enum class MirrorKind { kElectric, kMagnetic };
PlanarPtr make_ideal_mirror(MirrorKind kind);

}  // namespace roundtrip
