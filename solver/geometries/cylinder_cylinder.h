#pragma once
// Two parallel infinitely long cylinders (radii R1, R2, axes along z), per unit length, by the
// scattering approach in the cylindrical-wave basis. Conventions: L surface-to-surface gap,
// d = R1 + R2 + L axis-to-axis distance; results per unit length of the axes
// (ResultScale::kPerLength): s(xi) in 1/m, E/l in J/m, F/l in N/m (F = -dE/dL, negative =
// attractive), dF/dL per length in N/m^2. Implementation and physics notes in
// cylinder_cylinder.cc.
//
// Built: homogeneous cylinders of any material (dielectric, Drude, plasma, tabulated, perfect
// conductor; the two may differ), electromagnetic field, T >= 0, in any dielectric medium; the
// scalar Dirichlet and Neumann validation fields. Perfect conductors on both sides take the
// scalar (TM/TE decoupled, symmetric Cholesky) path; anything else the vector path with TE/TM
// mixing (cylinder_pair_vector_logdet). Shells: a CoatedCylinder as a cylinder's material
// (solver/scatterers/cylinder_body.h; its T-matrix and its layered PFA partner).
#include <memory>
#include <string>

#include "solver/geometries/geometry.h"
#include "solver/materials/material.h"
#include "solver/scatterers/field.h"

namespace roundtrip {

struct CylinderCylinderOptions {
  double radius1 = 0.0;   ///< R1 (m), > 0: the lower body ([cylinder])
  double radius2 = 0.0;   ///< R2 (m), > 0: the upper body ([cylinder2])
  MaterialPtr cylinder1;  ///< any material (needed for the electromagnetic field)
  MaterialPtr cylinder2;
  MaterialPtr medium;  ///< medium between the bodies (vacuum if null); a dielectric
  FieldKind field = FieldKind::kElectromagnetic;
  double rel_tol = 1e-5;         ///< target relative error: sets the m cut-off and the k_z rule
  int m_max = 0;                 ///< 0: automatic (pair-weight tail, cylinder_cylinder.cc)
  std::string validate() const;  ///< empty if valid, else a sentence naming the bad field
};

/// Throws std::invalid_argument with validate()'s message.
std::shared_ptr<Geometry> make_cylinder_cylinder(const CylinderCylinderOptions& options);

/// log det(1 - N) of one perfectly conducting scalar channel (Dirichlet = TM, Neumann = TE) at
/// one p = sqrt(k_z^2 + kappa^2) (1/m), N = t1 U t2 U, U_mm' = K_{m-m'}(p d), and its first two
/// d-derivatives (= L-derivatives); orders |m| <= m_max (0: automatic to rel_tol). Exposed for
/// tests. `m_used` receives the cut-off.
Spectral cylinder_pair_logdet(FieldKind channel, double p, double radius1, double radius2,
                              double axis_distance, DerivativeOrder order, double rel_tol,
                              int m_max = 0, int* m_used = nullptr);

/// log det(1 - T1 U T2 U) of the electromagnetic round trip at one (xi, k_z) for any two
/// cylinder materials (T from solver/scatterers/cylinder_t.h, the same scalar U on E_z and
/// H_z), and its first two d-derivatives. m_max = 0: automatic. Exposed for tests.
Spectral cylinder_pair_vector_logdet(const Material& cylinder1, const Material& cylinder2,
                                     const Material& medium, double xi, double kz, double radius1,
                                     double radius2, double axis_distance, DerivativeOrder order,
                                     double rel_tol, int m_max = 0, int* m_used = nullptr);

/// PFA per length of two perfectly conducting cylinders in vacuum, electromagnetic:
/// E/l = -pi^3 hbar c sqrt(2 R_eff) / (1920 L^(5/2)), R_eff = R1 R2/(R1 + R2) (derived in
/// cylinder_cylinder.cc; R2 -> inf gives the cylinder-plate form of Bordag, PRD 73, 125018
/// (2006)), F/l = -dE/dL, dF/dL. Scalar channels are half of it each.
PfaValues cylinder_cylinder_pfa_pec(double radius1, double radius2, double gap);

}  // namespace roundtrip
