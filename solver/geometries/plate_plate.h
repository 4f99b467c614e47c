#pragma once
// Two parallel planar bodies a and b across a gap L filled with `medium` (Lifshitz 1956).
//
// Per unit area (1/m^2), at imaginary frequency xi (rad/s):
//   s(xi; L) = (1/2pi) \int_0^inf k dk  sum_{p = TE, TM} ln(1 - r_a,p r_b,p e^{-2 kappa L}),
//   kappa = sqrt(k^2 + eps_m(i xi) xi^2 / c^2),
// with r the reflection coefficients of each body seen from the medium (conventions in
// planar/planar.h). The frequency rule then gives E/A in J/m^2 (geometry.h); E < 0 attracts.
// L-derivatives are analytic: d/dL ln(1 - rho) = 2 kappa rho/(1 - rho),
// d2/dL2 = -4 kappa^2 rho/(1 - rho)^2, rho = r_a r_b e^{-2 kappa L}.
// Lifshitz, Sov. Phys. JETP 2, 73 (1956); in this form Bordag, Mohideen, Mostepanenko,
// Phys. Rep. 353, 1 (2001), eq. (5.14) ff.
//
// For the PFA (solver/pfa) the L-integrated sum is also given in closed form:
//   U(xi; L) = \int_L^inf s(xi; L') dL' = (1/2pi) \int k dk sum_p [-Li_2(rho_p) / (2 kappa)],
// from ln(1 - rho) = -sum_n rho^n / n (derived). It is finite at xi = 0 for conductors too.
//
// Numerics: kappa is the integration variable, in units of 1/(2L): x = 2 kappa L from
// x_0 = 2 L sqrt(eps_m) xi / c, integrated in y = x - x_0 by the double-exponential (exp-sinh)
// rule with nested step halving until successive values agree to k_rel_tol (Takahasi & Mori,
// Publ. RIMS 9, 721 (1974)). ln(1 - rho) uses log1p, and 1 - rho is formed without cancellation
// for rho -> 1 (PEC or conductor TM at xi = 0).
//
// Electrolyte gap (solver/planar/electrolyte.h): with a Debye constant kappa_ion > 0 of the gap
// medium the xi = 0 TM term uses q = sqrt(k^2 + kappa_ion^2) in e^{-2qL} and the screened static
// reflections r'; the same integral with x = 2 q L from x_0 = 2 kappa_ion L (k dk = q dq), and the
// L-derivatives keep their form with kappa -> q. The static TE term keeps e^{-2kL}.
#include <map>
#include <memory>
#include <string>

#include "solver/geometries/geometry.h"
#include "solver/materials/material.h"
#include "solver/planar/planar.h"

namespace roundtrip {

class PlatePlate final : public Geometry {
 public:
  /// medium null means vacuum. k_rel_tol: target relative error of the k integral per frequency
  /// (kept well below any frequency-rule rel_tol; it is cheap).
  PlatePlate(PlanarPtr a, PlanarPtr b, MaterialPtr medium, double k_rel_tol = 1e-13);
  /// The same with ions in the gap medium: Debye constant kappa_ion (1/m, >= 0; +inf screens the
  /// static TM term completely).
  PlatePlate(PlanarPtr a, PlanarPtr b, MaterialPtr medium, double kappa_ion, double k_rel_tol);

  Spectral at_frequency(double xi, double gap, DerivativeOrder order) const override;
  /// {U, dU/dL, d2U/dL2} = {\int_L^inf s dL', -s, -ds/dL} at (xi, L), per unit area (1/m, 1/m^2,
  /// 1/m^3). Summed by a frequency rule it gives \int_L^inf E dL', -E, -dE/dL.
  Spectral integrated_at_frequency(double xi, double gap, DerivativeOrder order) const;

  ResultScale scale() const override { return ResultScale::kPerArea; }
  /// c / (2 L sqrt(eps_m(0))): where e^{-2 kappa L} has fallen by 1/e at k = 0.
  double frequency_scale(double gap) const override;
  std::string kind() const override { return "plate-plate"; }
  std::string describe() const override;
  std::map<std::string, double> truncation(double gap) const override;

  const PlanarSurface& a() const { return *a_; }
  const PlanarSurface& b() const { return *b_; }
  const Material& medium() const { return *medium_; }
  double kappa_ion() const { return kappa_ion_; }

 private:
  PlanarPtr a_, b_;
  MaterialPtr medium_;
  double k_rel_tol_;
  double kappa_ion_ = 0.0;
};

/// Plate-plate geometry of two planar bodies; `medium` null means vacuum.
std::shared_ptr<Geometry> make_plate_plate(PlanarPtr a, PlanarPtr b, MaterialPtr medium = nullptr,
                                           double kappa_ion = 0.0);

}  // namespace roundtrip
