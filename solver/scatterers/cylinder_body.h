#pragma once
// A coated (radially layered) infinite cylinder: a core and concentric shells, and its T-matrix
// at imaginary frequency xi and axial wave number k_z in the basis and normalisation of
// cylinder_t.h: (psi_E, psi_H) = (E_z, eta_0 H_z), T_m = -(I_m(pR)/K_m(pR)) tau_m, R the OUTER
// radius, p = sqrt(k_z^2 + eps_m xi^2/c^2) in the medium, mu = 1.
//
// How the geometries see it. The cylinder geometries (cylinder_plate.h, cylinder_cylinder.h)
// hold the cylinder as a MaterialPtr and get the T-matrix from cylinder::cylinder_t(material,
// ...). make_coated_cylinder() returns, for shells, a CoatedCylinder: a Material whose bulk
// answers (epsilon, static_limit, so is_perfect_conductor) are those of its OUTERMOST material
// (what a bulk question about the body's surface needs; an outermost perfect conductor hides
// everything inside it, so the whole body is then a perfect conductor), whose name() describes
// the layers, and which cylinder_t recognises and answers with the layered T-matrix below. With
// no shells make_coated_cylinder() returns the core itself (bit-identical homogeneous path).
// cylinder_pfa_partner() gives its PFA stand-in (films on a half-space of the core).
//
// Method (finite xi): in region j (permittivity eps_j, p_j = sqrt(k_z^2 + eps_j k_0^2),
// k_0 = xi/c) both psi_E and psi_H solve the modified Bessel equation with the SAME p_j, so a
// region's solutions are psi = alpha I_m(p_j rho) + beta K_m(p_j rho) with 2-vectors alpha, beta.
// The state carried outwards is the pair (Psi, Psi') of 2x2 matrices whose columns are the two
// independent solutions regular at the centre (rows E, H; ' = d/d rho), defined up to a right
// factor (the matrix form of a log-derivative: Psi' Psi^-1). Interfaces at rho = r: psi_E, psi_H
// and the tangential components (cylinder_t.h, derived from Maxwell's equations at omega = i xi)
//   p^2 E_phi = c psi_E - k_0 psi_H',   p^2 eta_0 H_phi = eps k_0 psi_E' + c psi_H,  c = k_z m/r,
// are continuous, so going from (eps, p) to (eps', p') Psi is kept and
//   row E of Psi' <- (eps p'^2/(eps' p^2)) row E of Psi' + c (eps' - eps) k_0/(eps' p^2) row H of
//   Psi row H of Psi' <- (p'^2/p^2) row H of Psi' - c (eps' - eps) k_0/p^2 row E of Psi
// (the difference eps' - eps formed directly: no cancellation between p^2 and p'^2; derived).
// Inside a region [r_a, r_b] (x = p r; hI = I'_m/I_m, hK = K'_m/K_m at x; log-derivative transfer
// of the layered sphere, layered_mie.h, Toon & Ackerman, Appl. Opt. 20, 3657 (1981), in matrix
// form):
//   beta = (p hI_a Psi_a - Psi'_a)/(p (hI_a - hK_a)),  alpha = Psi_a - beta,
//   Psi_b ~ Psi_a - (1 - Q) beta,  Psi'_b ~ p (hI_b alpha + Q hK_b beta),
//   Q = [K_m(x_b)/K_m(x_a)] [I_m(x_a)/I_m(x_b)] in (0, 1] from logs (never overflows), 1 - Q by
//   expm1; hI - hK = 1/(x I K) > 0 is a sum of two positive terms (Wronskian, DLMF 10.28.2).
// The common scale ~ I_m(x_b)/I_m(x_a) is dropped (the state is a subspace). In the medium
// (rho = R, x = pR, outgoing K, incident I): tau = (Psi' - p hI Psi)(Psi' - p hK Psi)^-1,
// the matrix form of the sphere's F_l = (H - H_i)/(H - H_k); with one region it is algebraically
// cylinder_t's Ahat_K^-1 Ahat_I (checked to rounding in tests/cylinders/coated_cylinder_test.cc).
// A perfectly conducting region hides everything inside it; above it psi_E = 0 and E_phi = 0
// (psi_H' = 0): Psi = diag(0, 1), Psi' = diag(1, 0). Lengths are scaled by R inside.
//
// Exact xi = 0 (k_0 = 0; k_z > 0 needed, as for cylinder_t): E and H decouple (cross terms 0).
//   E (electrostatics, psi_E ~ the potential): conductors (Drude, plasma, perfect) are
//   equipotentials, psi_E = 0 on them (an outermost conductor gives tau_EE = 1 exactly); between
//   dielectrics psi_E and eps psi_E' are continuous; p = k_z everywhere.
//   H (magnetostatics with London screening, as for the layered sphere): dielectric and Drude
//   regions are transparent (h = psi_H, h' continuous, p = k_z); a plasma region has
//   p_P^2 = k_z^2 + s, s = k_p^2 = lim eps k_0^2, and carries besides h an electric-type part
//   e = lim psi_E/k_0 (psi_E vanishes like k_0 there) that couples to h at its surfaces. From
//   the xi -> 0 limit of the continuity of H_z, H_phi, B_rho (B_rho from E_z, E_phi through
//   Faraday's law) the continuous quantities are (derived)
//     h,  (s e' + c h)/p^2,  (s c e + k_z^2 h')/p^2,  and e between two plasma regions,
//   with s = 0, p = k_z outside plasma regions. So a plasma region's state has two columns
//   (h, h', e, e'), a non-screening region's one (h, h'). Into a plasma region from a
//   non-screening one, e is free: columns (h, p_P^2 h'/k_z^2, 0, c h/k_z^2) and
//   (0, -s c/k_z^2, 1, 0); out of it the combination with s e' = c h s/k_z^2 survives and
//   h'_N = (s c e + k_z^2 h'_P)/p_P^2. A perfect conductor: h' = 0 (and e = 0 in a plasma region
//   above it). For one plasma region this reproduces cylinder_t's London tau_HH (checked).
//   No plasma and no perfect conductor: tau_HH = 0 exactly.
#include <string>
#include <vector>

#include "solver/materials/material.h"
#include "solver/planar/planar.h"
#include "solver/scatterers/cylinder_t.h"

namespace roundtrip {

struct CylinderShell {
  MaterialPtr material;
  double thickness = 0.0;  ///< m, > 0 and finite
};

/// A cylinder as a Material for the cylinder geometries (see above). Shells outermost first.
class CoatedCylinder final : public Material {
 public:
  CoatedCylinder(MaterialPtr core, std::vector<CylinderShell> shells);
  double epsilon(double xi) const override { return surface().epsilon(xi); }
  StaticLimit static_limit() const override { return surface().static_limit(); }
  std::string name() const override;  ///< e.g. "gold-drude (50 nm) on silica"
  std::string description() const override;
  std::string source() const override { return surface().source(); }

  const MaterialPtr& core() const { return core_; }
  const std::vector<CylinderShell>& shells() const { return shells_; }
  /// Empty if the shells fit in a cylinder of outer radius `radius` (sum of thicknesses < R),
  /// else a sentence naming the bad value.
  std::string validate(double radius) const;

 private:
  const Material& surface() const { return *shells_.front().material; }
  MaterialPtr core_;
  std::vector<CylinderShell> shells_;
};

/// The core itself if `shells` is empty, else a CoatedCylinder. Throws std::invalid_argument for
/// a missing material or a thickness that is not finite and > 0.
MaterialPtr make_coated_cylinder(MaterialPtr core, std::vector<CylinderShell> shells);

/// PFA stand-in of a cylinder: a half-space of its material, or for a coated cylinder its shells
/// (outermost first) as films on a half-space of its core (Derjaguin's local plate-plate
/// picture, as for spheres, solver/pfa/pfa.h).
PlanarPtr cylinder_pfa_partner(const MaterialPtr& cylinder);

namespace cylinder {

/// Orders m = 0..m_max of a coated cylinder of outer radius `radius` (the conventions of
/// cylinder_t(); method above). k_z >= 0; xi = 0 is the exact static limit (k_z > 0).
void coated_cylinder_t(const CoatedCylinder& body, const Material& medium, double radius, double xi,
                       double kz, int m_max, std::vector<double>& log_t, std::vector<Tau>& tau);

}  // namespace cylinder
}  // namespace roundtrip
