#pragma once
// Leading correction to the PFA from a separation sweep.
//   Q / Q_PFA = 1 + theta x + theta2 x^2 + ...,   x = L / R,   Q in {E, F, F'}
// (Bimonte, Emig, Jaffe, Kardar, EPL 97, 50001 (2012); Teo, Bordag, Nikolaev, PRD 84, 125037
// (2011); for a power-law E_pp the force and gradient coefficients are theta/2 and theta/3 of
// the energy one). y = (Q/Q_PFA - 1)/x is regressed on x by least squares: y = theta + theta2 x,
// the same model for any number of points (>= 3). The higher orders are not a pure power
// series (x^{3/2}, x^2 ln x terms), so the quoted uncertainty combines the statistical standard
// error of the intercept, the numerical error of the ratios (rel_tol / x), and the change of
// theta between this model and y = theta + theta2 x + theta3 x^2 or y = theta + a sqrt(x) + b x
// (a systematic estimate), in quadrature. Above kThetaMeaningful |theta| the fit says so (note).
#include <string>
#include <vector>

namespace roundtrip {

struct ThetaFit {
  bool valid = false;
  double theta = 0.0;
  double theta2 = 0.0;       ///< next coefficient of the chosen model
  double uncertainty = 0.0;  ///< one-sigma-like combined estimate (see header)
  int points = 0;
  double x_min = 0.0, x_max = 0.0;
  std::string model;    ///< e.g. "1 + theta x + theta2 x^2"
  std::string message;  ///< why not valid
  std::string note;     ///< e.g. too few gaps for a meaningful theta; empty if none
};

/// Relative uncertainty above which a theta fit is called not meaningful (note): 20 % (a
/// judgement: the coefficient's sign and size are then all one learns).
inline constexpr double kThetaMeaningful = 0.2;

/// x = L/R (> 0), ratio = Q/Q_PFA; rel_tol is the relative accuracy of each ratio.
ThetaFit fit_theta(const std::vector<double>& x, const std::vector<double>& ratio, double rel_tol);

}  // namespace roundtrip
