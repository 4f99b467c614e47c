#pragma once
// A cylinder (infinitely long, radius R, axis parallel to a plate) above a planar body, per unit
// length, by the scattering approach in the cylindrical-wave basis. Conventions: R radius, L
// surface-to-surface gap, H = R + L axis-to-plate distance. Results per unit length of the axis
// (ResultScale::kPerLength): s(xi) in 1/m, E/l in J/m, F/l in N/m, dF/dL per length in N/m^2.
// Implementation and physics notes in cylinder_plate.cc.
//
// Built: a homogeneous cylinder of any material (dielectric, Drude, plasma, tabulated, perfect
// conductor) over any planar body, electromagnetic field, T >= 0, in any non-conducting medium;
// the scalar Dirichlet and Neumann validation fields. Perfect conductors on both sides take the
// scalar (TM/TE decoupled, symmetric) path; anything else the vector path with TE/TM mixing
// (cylinder_plate_vector_logdet). Shells: a CoatedCylinder as the cylinder's material
// (solver/scatterers/cylinder_body.h; its T-matrix and its layered PFA partner).
#include <atomic>
#include <memory>
#include <string>

#include "solver/geometries/geometry.h"
#include "solver/materials/material.h"
#include "solver/planar/planar.h"
#include "solver/scatterers/field.h"

namespace roundtrip {

/// Basis of the round-trip matrix (cylinder_plate.cc): the cylindrical orders |m| <= M, the
/// plane waves of the plate's round trip on a trapezoid grid in t (k_x = p sinh t; the
/// Nystrom form, J ~ sqrt(H/L) nodes against M ~ H/L orders), or the cheaper of the two at each
/// (xi, k_z) node. Both give the same determinant to the requested accuracy (tests/cylinders).
enum class RoundTripBasis { kAuto, kOrders, kPlaneWaves };

/// Work counters of one geometry (benchmarks): k_z nodes summed over all frequencies asked,
/// the largest order cut-off and the largest plane-wave node count J met.
struct CylinderPlateCounters {
  std::atomic<long> kz_nodes{0};
  std::atomic<int> m_max{0};
  std::atomic<int> plane_wave_nodes{0};
};

struct CylinderPlateOptions {
  double radius = 0.0;   ///< R (m), > 0
  MaterialPtr cylinder;  ///< any material (needed for the electromagnetic field)
  PlanarPtr plate;       ///< any planar body (needed for the electromagnetic field)
  MaterialPtr medium;    ///< medium between the bodies (vacuum if null); a dielectric
  FieldKind field = FieldKind::kElectromagnetic;
  double rel_tol = 1e-5;  ///< target relative error: sets the m cut-off and the k_z rule
  int m_max = 0;          ///< 0: automatic (from the decay of the diagonal, cylinder_plate.cc)
  RoundTripBasis basis = RoundTripBasis::kAuto;     ///< not a case-file key (tests, benchmarks)
  std::shared_ptr<CylinderPlateCounters> counters;  ///< optional (benchmarks)
  std::string validate() const;  ///< empty if valid, else a sentence naming the bad field
};

/// Throws std::invalid_argument with validate()'s message.
std::shared_ptr<Geometry> make_cylinder_plate(const CylinderPlateOptions& options);

/// log det(1 - N) of one channel at one p = sqrt(k_z^2 + kappa^2) (1/m), N_mm' =
/// t_m(pR) K_{m+m'}(2pH), and its first two H-derivatives; m runs over |m| <= m_max (m_max = 0:
/// automatic to relative accuracy rel_tol). Exposed for tests. `m_used` receives the cut-off,
/// `nodes_used` the plane-wave node count J (0 when the order basis was used).
Spectral cylinder_plate_logdet(FieldKind channel, double p, double radius, double axis_height,
                               DerivativeOrder order, double rel_tol, int m_max = 0,
                               int* m_used = nullptr, RoundTripBasis basis = RoundTripBasis::kAuto,
                               int* nodes_used = nullptr);

/// log det(1 - T U) of the electromagnetic round trip at one (xi, k_z) for any cylinder material
/// and plate (bound to xi), and its first two H-derivatives (H = R + L the axis height). T from
/// solver/scatterers/cylinder_t.h, U and the conventions in cylinder_plate.cc. m_max = 0:
/// automatic. Exposed for tests.
Spectral cylinder_plate_vector_logdet(const Material& cylinder, const PlanarAtFrequency& plate,
                                      const Material& medium, double xi, double kz, double radius,
                                      double axis_height, DerivativeOrder order, double rel_tol,
                                      int m_max = 0, int* m_used = nullptr,
                                      RoundTripBasis basis = RoundTripBasis::kAuto,
                                      int* nodes_used = nullptr);

/// PFA per length of a perfectly conducting cylinder over a perfectly conducting plate in
/// vacuum, electromagnetic: E/l = -pi^3 hbar c sqrt(R) / (960 sqrt(2) L^(5/2)) (Bordag, PRD 73,
/// 125018 (2006)), F/l = -dE/dL, dF/dL. Scalar channels are half of it each.
PfaValues cylinder_plate_pfa_pec(double radius, double gap);

}  // namespace roundtrip
