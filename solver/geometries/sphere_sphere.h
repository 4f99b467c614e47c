#pragma once
// Two spheres on a common axis in a medium, exact by the scattering approach.
// Conventions: R1, R2 radii, L surface-to-surface gap, d = R1 + R2 + L centre distance.
// s(xi) = sum_m log det(1 - M_m), M = T1 U12 T2 U21 (per azimuthal number m). Implementation,
// signs and checks in sphere_sphere.cc and DEVELOPERS.md ("Sphere-sphere round trip").
#include <memory>
#include <string>

#include "solver/geometries/geometry.h"
#include "solver/logdet/low_rank.h"
#include "solver/materials/material.h"
#include "solver/scatterers/field.h"
#include "solver/scatterers/sphere_body.h"

namespace roundtrip {

/// kAuto: the mirror-symmetry path for equal spheres (same radius and material), the general
/// path otherwise. kGeneral forces the general path (tests compare the two).
enum class SphereSphereMethod { kAuto, kGeneral };

struct SphereSphereOptions {
  double radius1 = 0.0;  ///< R1 (m), > 0
  double radius2 = 0.0;  ///< R2 (m), > 0
  MaterialPtr sphere1;   ///< material of sphere 1 (ignored for scalar fields)
  MaterialPtr sphere2;   ///< material of sphere 2 (ignored for scalar fields)
  /// Shells of each sphere, outermost first (solver/scatterers/sphere_body.h); the radii stay
  /// the outer radii and sphere1/sphere2 the cores. Ignored for scalar fields.
  std::vector<SphereShell> shells1, shells2;
  MaterialPtr medium;  ///< medium around the spheres (vacuum if null)
  FieldKind field = FieldKind::kElectromagnetic;
  double rel_tol = 1e-5;   ///< target relative error; sets l_max and quadrature unless fixed
  int l_max = 0;           ///< 0: automatic per sphere from rel_tol and R_i/L; else both spheres
  int m_max = -1;          ///< -1: automatic (stopped by the decay of the m terms)
  int nodes_per_unit = 0;  ///< momentum nodes per unit of sqrt(t); 0: automatic from rel_tol
  SphereSphereMethod method = SphereSphereMethod::kAuto;
  /// Factorisation of the node-space matrices of the mirror path (banded or dense).
  NodeSpaceSolver node_solver = NodeSpaceSolver::kAuto;
  std::string validate() const;  ///< empty if valid, else a sentence naming the bad field
};

/// Throws std::invalid_argument("sphere-sphere: ...") if the options are invalid.
std::shared_ptr<Geometry> make_sphere_sphere(const SphereSphereOptions& options);

}  // namespace roundtrip
