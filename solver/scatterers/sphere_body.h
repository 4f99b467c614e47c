#pragma once
// A sphere as the solver sees it: a core and concentric shells. Shared by every geometry that
// holds spheres (sphere-plate, sphere-sphere).
//
// Conventions: `radius` is the OUTER radius R (m); shells are listed outermost first with their
// thicknesses (m); the core radius is R - sum of thicknesses. No shells is the homogeneous sphere
// of mie.h (the same functions are called, bit for bit). Amplitudes at imaginary frequency and the
// exact xi = 0 factors follow mie.h (homogeneous) and layered_mie.h (coated): log|T_l|, sign,
// T_l -> tau_l x^{2l+1}/((2l+1)!!(2l-1)!!), g2_tm = tau^TM l/(l+1), g2_te = -tau^TE l/(l+1).
// Materials are ignored for the scalar fields (Dirichlet, Neumann), whose sphere is homogeneous.
#include <string>
#include <vector>

#include "solver/materials/material.h"
#include "solver/scatterers/field.h"
#include "solver/scatterers/mie.h"

namespace roundtrip {

struct SphereShell {
  MaterialPtr material;
  double thickness = 0.0;  ///< m, > 0 and finite
};

struct SphereBody {
  double radius = 0.0;              ///< outer radius R (m)
  MaterialPtr core;                 ///< material inside the innermost shell
  std::vector<SphereShell> shells;  ///< outermost first

  /// Empty if valid, else a sentence naming the bad value: R > 0 finite, core set, every shell
  /// with a material and 0 < thickness < inf, sum of thicknesses < R.
  std::string validate() const;
  /// R - sum of thicknesses (m).
  double core_radius() const;
  /// The outermost material (the core if there are no shells).
  const MaterialPtr& surface_material() const;
  /// One line, e.g. "gold-drude (50 nm) on polystyrene" or the core's name.
  std::string describe() const;
};

/// Mie amplitudes T_l, l = 0..lmax, at imaginary frequency xi > 0 (rad/s) in `medium`.
MieLog sphere_mie(const SphereBody& body, FieldKind field, double xi, const Material& medium,
                  int lmax);

/// The exact xi = 0 factors g_l^2, l = 0..lmax (never evaluated at a small xi).
StaticSphere sphere_static(const SphereBody& body, FieldKind field, const Material& medium,
                           int lmax);

/// True when g2_tm = 1 exactly for every l >= 1 at xi = 0 (the outermost material conducts), i.e.
/// when the closed-form n = 0 Bessel kernel (static_bessel_kernel.h) may replace the multipoles.
bool static_tm_is_unit(const SphereBody& body);

}  // namespace roundtrip
