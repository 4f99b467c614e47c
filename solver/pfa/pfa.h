#pragma once
// Proximity-force approximation (Derjaguin, Kolloid Z. 69, 155 (1934)) for a sphere of radius R
// above a plate at surface-to-surface gap L, from the plate-plate free energy per area E_pp:
//   E_PFA = 2 pi R \int_L^inf E_pp(L') dL',  F_PFA = -dE_PFA/dL = 2 pi R E_pp(L),
//   F'_PFA = dF_PFA/dL = -2 pi R P_pp(L),  P_pp = -dE_pp/dL.
// Units: J, N, N/m; signs as in geometry.h (negative energy and force attract). Two spheres use
// the same formula with R_eff = R1 R2 / (R1 + R2). PEC: E_PFA = -pi^3 hbar c R / (720 L^2).
// The sphere's material enters through the plate-plate geometry the caller builds (a half-space
// of the sphere's material facing the plate). The L-integral is done in closed form per
// frequency (PlatePlate::integrated_at_frequency) and summed by the same frequency rule as the
// exact result (same temperature and tolerance). Valid for L << R.
#include <memory>

#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/geometry.h"
#include "solver/geometries/plate_plate.h"
#include "solver/scatterers/sphere_body.h"

namespace roundtrip {

/// PFA energy, force and force gradient of a sphere of radius `radius` (m) at `gap` (m).
/// Throws std::invalid_argument for non-positive radius or gap, or invalid options. If `summary`
/// is given it receives the frequency sum of {\int_L^inf E_pp, -E_pp, P_pp} (convergence, error).
PfaValues sphere_plate_pfa(const PlatePlate& pp, double radius, double gap,
                           const FrequencyRuleOptions& opts, FrequencySum* summary = nullptr);

/// Effective radius R1 R2 / (R1 + R2) of two spheres for sphere_plate_pfa (Derjaguin 1934).
double pfa_effective_radius(double r1, double r2);

/// The planar body that stands for a sphere in its PFA: a half-space of the sphere's material,
/// or for a coated sphere the same films (outermost first) on a half-space of its core
/// (solver/planar/layered.h). Derjaguin's local plate-plate picture (derived).
PlanarPtr sphere_pfa_partner(const SphereBody& sphere);

/// PFA partner of the scalar test fields: Dirichlet and Neumann are each half of the
/// electromagnetic perfect-conductor plate-plate energy (r^2 = 1 per polarisation, at every
/// temperature; derived). Scale the PFA values of these plates by kScalarFieldPfaShare.
inline constexpr double kScalarFieldPfaShare = 0.5;
std::unique_ptr<PlatePlate> scalar_field_pfa_plates(MaterialPtr medium);

}  // namespace roundtrip
