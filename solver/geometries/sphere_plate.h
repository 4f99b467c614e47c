#pragma once
// Sphere above a planar body (any PlanarSurface), exact by the scattering approach.
// Conventions: R sphere radius, L surface-to-surface gap, D = R + L centre-to-plate.
// Implementation and physics notes in sphere_plate.cc.
#include <memory>
#include <vector>

#include "solver/geometries/geometry.h"
#include "solver/logdet/low_rank.h"
#include "solver/materials/material.h"
#include "solver/planar/planar.h"
#include "solver/scatterers/field.h"
#include "solver/scatterers/sphere_body.h"

namespace roundtrip {

/// kBand: each W column over its band of non-negligible rows (the default); kFullRange: over all
/// l = l_min..l_max (the reference path, same W up to rounding); kBandCheckedAgainstFullRange:
/// both, and a block whose recorded bands or zeros differ, or whose entries differ by more than
/// 1e-9 relative, fails with a message (testing only).
enum class WBuild { kBand, kFullRange, kBandCheckedAgainstFullRange };

struct SpherePlateOptions {
  double radius = 0.0;  ///< R (m), > 0
  MaterialPtr sphere;   ///< sphere material (the core if shells are set; ignored for scalar)
  /// Coatings, outermost first, thicknesses in m; `radius` stays the OUTER radius and the core
  /// radius is radius - sum of thicknesses (solver/scatterers/sphere_body.h). Empty: homogeneous.
  std::vector<SphereShell> shells;
  PlanarPtr plate;     ///< planar body (ignored for scalar fields)
  MaterialPtr medium;  ///< medium between the bodies (vacuum if null)
  FieldKind field = FieldKind::kElectromagnetic;
  double rel_tol = 1e-5;   ///< target relative error; sets l_max and quadrature unless fixed
  int l_max = 0;           ///< 0: automatic from rel_tol and R/L
  int m_max = -1;          ///< -1: automatic (up to l_max, stopped by decay of the m terms)
  int nodes_per_unit = 0;  ///< momentum nodes per unit of sqrt(t); 0: automatic from rel_tol
  /// Factorisation of the node-space matrix (tests compare the banded and dense paths).
  NodeSpaceSolver node_solver = NodeSpaceSolver::kAuto;
  /// Testing only: how the xi > 0 W matrices are built (sphere_plate.cc, dynamic_block).
  WBuild w_build = WBuild::kBand;
  /// Debye constant kappa (1/m, >= 0; +inf screens completely) of ions in the medium
  /// (solver/planar/electrolyte.h): the xi = 0 TM term becomes the screened electrostatic problem
  /// (sphere_plate.cc). Built for a conducting sphere (Drude-like, no shells) over a plate that
  /// reflects static TM fields completely and has no static TE response; else validate() says so.
  double kappa_ion = 0.0;
  /// Scalar Dirichlet only: the l = 0 amplitude is the zero-flux (Neumann) one, the sphere an
  /// isolated neutral conductor (equipotential, no net charge; the screened n = 0 term).
  bool neutral_sphere = false;
  std::string validate() const;  ///< empty if valid, else a sentence naming the bad field
};

std::shared_ptr<Geometry> make_sphere_plate(const SpherePlateOptions& options);

}  // namespace roundtrip
