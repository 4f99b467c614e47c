#pragma once
// A conducting 2D sheet (sheet conductivity sigma(i xi), in S) on the face of a substrate
// half-space (or free-standing: substrate = the medium), as a planar body.
//
// Conventions as planar.h (kappa_j = sqrt(k^2 + eps_j xi^2/c^2); perfect conductor r_TE = -1,
// r_TM = +1). The sheet adds its conductance in parallel to the substrate's admittance
// (boundary conditions: E_t continuous, jump of H_t = sigma E_t; standard, e.g. Bordag,
// Klimchitskaya, Mostepanenko, Phys. Rev. B 86, 165429 (2012) for graphene, from memory):
//   TM: r = (Y_s + sigma - Y_m)/(Y_s + sigma + Y_m),  Y_j = eps_0 eps_j xi/kappa_j,
//   TE: r = (Z_m - Z_s - mu_0 sigma xi)/(Z_m + Z_s + mu_0 sigma xi) with Z_j = kappa_j (all
//       multiplied by mu_0 xi),
// so a free-standing sheet has r_TM = sigma kappa/(2 eps_0 eps_m xi + sigma kappa) and
// r_TE = -mu_0 sigma xi/(2 kappa + mu_0 sigma xi); sigma -> inf gives the perfect mirror and
// sigma -> 0 the bare substrate (tests/planar/sheet_test.cc).
// Sheet models: sigma(i xi) = sigma_0 + D/(xi + gamma) with the Drude weight D = n e^2/m*
// (n carriers per m^2, effective mass m* = mass_ratio m_e; S/s) and damping gamma (rad/s).
// xi = 0 exactly: a sheet with sigma(0) > 0 reflects static TM fields completely (r_TM = 1);
// static TE: mu_0 lim xi sigma = mu_0 D for gamma = 0 (a plasma-like sheet), else 0;
// r_TE(0) = (k - kappa_s - mu_0 D)/(k + kappa_s + mu_0 D) with kappa_s(0) = k (dielectric or
// Drude substrate) or sqrt(k^2 + k_p^2) (plasma substrate).
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "solver/materials/material.h"
#include "solver/planar/planar.h"

namespace roundtrip {

inline constexpr double kElectronMass = 9.1093837015e-31;        // kg (CODATA 2018)
inline constexpr double kVacuumPermittivity = 8.8541878128e-12;  // F/m (CODATA 2018)

/// sigma(i xi) at rows of xi (rad/s; xi[0] = 0, increasing; sigma in S, > 0, not increasing).
/// Between rows 1/sigma is linear in xi (exact for a Drude sheet, 1/sigma = (xi + gamma)/D;
/// derived), beyond the last row sigma = sigma_N xi_N/xi (the Drude tail D/xi; standard).
struct SheetTable {
  std::vector<double> xi, sigma;
  std::string origin;  ///< file name
  double at(double xi) const;
};
/// Read a CSV: '#' comments, header "xi_eV" or "xi_rad/s", then "sigma_S" or "sigma_mS", rows
/// from xi = 0 (solver/materials/decreasing_table.h); InputError "file:line: column = value: ...".
SheetTable read_sheet_conductivity_csv(const std::filesystem::path& path);

struct SheetConductivity {
  double sigma0 = 0.0;                      ///< constant part, S (>= 0)
  double drude_weight = 0.0;                ///< D = n e^2/m*, S/s (>= 0)
  double damping = 0.0;                     ///< gamma, rad/s (>= 0)
  std::shared_ptr<const SheetTable> table;  ///< if set, sigma(i xi) from it (the rest unused)
  /// sigma(i xi) in S for xi > 0.
  double at(double xi) const {
    return table ? table->at(xi) : sigma0 + drude_weight / (xi + damping);
  }
  /// sigma(0) > 0 (a sheet that reflects static TM fields completely).
  bool conducts() const {
    return table ? table->sigma.front() > 0.0 : sigma0 > 0.0 || drude_weight > 0.0;
  }
  /// Drude weight of a carrier density n (1/m^2) and effective mass ratio m*/m_e.
  static double weight(double density, double mass_ratio);
  /// "Drude sheet, D = ... S/s, gamma = ... meV" and the like.
  std::string describe() const;
  /// Empty if valid, else a sentence.
  std::string validate() const;
};

/// The sheet on `substrate` (null: the medium on both sides, a free-standing sheet).
PlanarPtr make_sheet(SheetConductivity sheet, MaterialPtr substrate);

}  // namespace roundtrip
