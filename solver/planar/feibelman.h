#pragma once
// Feibelman surface-response parameters d_perp(i xi), d_par(i xi) as a first-order correction to
// the Fresnel coefficients of a half-space (Feibelman, Prog. Surf. Sci. 12, 287 (1982)).
//
// Conventions as planar.h: body b below z = 0, medium m above; kappa_j = sqrt(k^2 + eps_j s),
// s = xi^2/c^2. d_perp is the centroid of the induced charge and d_par that of the normal
// derivative of the tangential current, both measured from the surface of the local model,
// POSITIVE TOWARDS THE MEDIUM (outwards; spill-out gives d_perp > 0). With the mesoscopic
// boundary conditions [[E_par]] = -d_perp grad_par [[E_perp]] and [[H_par]] = -i omega d_par
// [[D_par]] x z ([[f]] = f(0+) - f(0-); the signs fixed by the exact rigid-shift property below),
// the boundary-value problem at imaginary frequency gives (derived; tests/planar):
//   r_TM = [eps_b k_m - eps_m k_b + (eps_b - eps_m)(q^2 d_perp + k_m k_b d_par)]
//        / [eps_b k_m + eps_m k_b - (eps_b - eps_m)(q^2 d_perp - k_m k_b d_par)]  + O(d^2),
//   r_TE = [k_m - k_b - (k_b^2 - k_m^2) d_par] / [k_m + k_b + (k_b^2 - k_m^2) d_par],
// (k_j = kappa_j, q = k; the d_perp d_par cross term of the TM solution is second order and left
// out, as in the published forms). Only the first order is trusted (k|d| << 1), and the rational
// forms have poles at k|d| ~ 1, so the plate uses the linearisation:
//   r_TM = r_TM^F + 2 (eps_b - eps_m) kappa_m [eps_b k^2 d_perp + eps_m kappa_b^2 d_par]
//                   / (eps_b kappa_m + eps_m kappa_b)^2,
//   r_TE = r_TE^F (1 + 2 kappa_m d_par),
// which grows at most linearly in k (a gap L > 2|d| keeps r^2 e^{-2 kappa L} < 1; atoms always
// converge). Property: d_perp = d_par = d is the local interface moved by d towards the medium,
// r = r^F e^{2 kappa_m d} = r^F (1 + 2 kappa_m d) + O(d^2) (derived). eps_b -> inf (perfect or
// Drude conductor at xi = 0): r_TM = 1 + 2 (k^2 d_perp + eps_m s d_par)/kappa_m.
// Models of d(i xi): constant, or one undamped pole pair at +-Omega on the real axis,
//   d(i xi) = d_inf + (d_0 - d_inf) Omega^2/(Omega^2 + xi^2)  (d_0 at xi = 0, d_inf as xi -> inf),
// or a table of d_perp(i xi), d_par(i xi) (DParameterTable below; real on the imaginary axis, as
// d(omega) of a causal response is real at imaginary omega: Feibelman (1982)).
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "solver/materials/material.h"
#include "solver/planar/planar.h"

namespace roundtrip {

struct SurfaceParameter {
  double static_value = 0.0;    ///< d(0), m
  double high_frequency = 0.0;  ///< d(i inf), m (= static_value for a constant)
  double pole = 0.0;            ///< Omega, rad/s (0: constant)
  double at(double xi) const {
    if (pole == 0.0) return static_value;
    const double r = xi / pole;
    return high_frequency + (static_value - high_frequency) / (1.0 + r * r);
  }
  std::string describe() const;
};

/// d_perp(i xi), d_par(i xi) from rows. Interpolation: linear in xi between rows (error at most
/// h^2 max|d''|/8 in a row interval of width h; standard), d constant beyond the last row (the
/// value d(i inf) towards which any response with a finite high-frequency limit tends, as the
/// pole model's d_inf). The first row is xi = 0 (the n = 0 term needs d(0)).
struct DParameterTable {
  std::vector<double> xi;             ///< rad/s, xi[0] = 0, strictly increasing
  std::vector<double> perpendicular;  ///< d_perp, m, |d| <= 10 nm
  std::vector<double> parallel;       ///< d_par, m, |d| <= 10 nm
  std::string origin;                 ///< file name
  double perp_at(double x) const { return at(perpendicular, x); }
  double par_at(double x) const { return at(parallel, x); }
  /// Empty if the rows are as above, else what is wrong.
  std::string validate() const;

 private:
  double at(const std::vector<double>& d, double x) const;
};

struct FeibelmanParameters {
  SurfaceParameter perpendicular, parallel;
  /// If set, d_perp and d_par come from it (the two SurfaceParameters are unused).
  std::shared_ptr<const DParameterTable> table;
  double perp_at(double xi) const { return table ? table->perp_at(xi) : perpendicular.at(xi); }
  double par_at(double xi) const { return table ? table->par_at(xi) : parallel.at(xi); }
};

/// |d| above which a d-parameter is refused (m): the first order in k d is meaningless beyond at
/// the wave numbers of any gap where a surface correction matters.
inline constexpr double kMaxDParameter = 1e-8;

/// Reads a d-parameter table (CSV): '#' comments; a header naming three comma-separated columns
/// in any order, one of xi_eV | xi_rad/s, one of d_perp_nm | d_perp_A | d_perp_m, one of
/// d_par_nm | d_par_A | d_par_m (A: angstrom); then rows of three finite numbers, the first at
/// xi = 0, xi strictly increasing, |d| <= 10 nm, at least 2 rows. Every violation is an
/// InputError "file:line: column = value: what is wrong" (solver/input_error.h).
DParameterTable read_d_parameters_csv(const std::filesystem::path& path);

/// The half-space of `material` with Feibelman d-parameters (first order; above). Throws
/// std::invalid_argument for a perfect conductor (no surface response of its own) or
/// non-finite parameters.
PlanarPtr make_feibelman_half_space(MaterialPtr material, FeibelmanParameters d);

/// The rational (unlinearised) TM and TE forms above at xi > 0 for eps_b, eps_m given, for tests
/// (finite-difference derivative against the first order).
Reflection feibelman_rational(double eps_b, double eps_m, double xi, double k, double d_perp,
                              double d_par);

}  // namespace roundtrip
