// Modal method of a perfectly conducting lamellar grating (formulas and conventions in
// grating_pec.h).
#include "solver/scatterers/grating_pec.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "solver/constants.h"

namespace roundtrip {
namespace {

using Eigen::MatrixXd;
using Eigen::VectorXd;

double sinc(double u) { return std::abs(u) < 1e-8 ? 1.0 - u * u / 6.0 : std::sin(u) / u; }

}  // namespace

int pec_groove_modes(int orders, double filling) {
  return std::max(1, static_cast<int>(std::lround(2.0 * orders * (1.0 - filling))));
}

Eigen::MatrixXd pec_lamellar_reflection(const PecLamellar& g, double xi, double eps_m, int orders,
                                        double kx, double ky, int groove_modes) {
  if (!(g.period > 0.0) || !std::isfinite(g.period))
    throw std::invalid_argument(fmt::format("pec grating: period = {} m must be > 0", g.period));
  if (!(g.filling >= 0.0 && g.filling <= 1.0))
    throw std::invalid_argument(
        fmt::format("pec grating: filling = {} must lie in [0, 1]", g.filling));
  if (!(g.depth >= 0.0) || !std::isfinite(g.depth))
    throw std::invalid_argument(fmt::format("pec grating: depth = {} m must be >= 0", g.depth));
  if (!(xi > 0.0) || !std::isfinite(xi))
    throw std::invalid_argument(fmt::format(
        "pec grating: xi = {} rad/s: only xi > 0 is built (the static term of a perfectly "
        "conducting grating is not)",
        xi));
  if (!(eps_m >= 1.0) || !std::isfinite(eps_m))
    throw std::invalid_argument(fmt::format("pec grating: eps_m = {} must be >= 1", eps_m));
  if (orders < 0 || orders > 2000)
    throw std::invalid_argument(
        fmt::format("pec grating: orders = {} must lie in 0..2000", orders));
  // SI wave numbers (1/m) with eps~ = eps_m (xi/c)^2 in place of eps_m: the header's formulas in
  // units of c/xi scale to these exactly (Z V0 and R are dimensionless), and nothing overflows
  // as xi -> 0 (k/q0 would).
  const int m = 2 * orders + 1;
  const double q0 = xi / kSpeedOfLight;
  const double et = eps_m * q0 * q0;
  const double G = 2.0 * kPi / g.period;
  VectorXd k(m), kap(m);
  for (int i = 0; i < m; ++i) {
    k[i] = kx + (i - orders) * G;
    kap[i] = std::sqrt(k[i] * k[i] + ky * ky + et);
  }
  const double h = g.depth;
  if (g.filling >= 1.0 || h == 0.0) return -MatrixXd::Identity(2 * m, 2 * m);
  if (g.filling <= 0.0) {  // the flat conductor h below the ridge tops
    MatrixXd r = MatrixXd::Zero(2 * m, 2 * m);
    for (int i = 0; i < m; ++i) r(i, i) = r(m + i, m + i) = -std::exp(-2.0 * kap[i] * h);
    return r;
  }
  const int mg = groove_modes < 0 ? pec_groove_modes(orders, g.filling) : groove_modes;
  if (mg < 1 || mg > 4000)
    throw std::invalid_argument(
        fmt::format("pec grating: groove modes = {} must lie in 1..4000", mg));
  const double w = (1.0 - g.filling) * g.period;
  const double g2 = et + ky * ky;
  // Projections (header), without the common 1/Lambda: ax (cos modes m = 0..mg, the Neumann
  // scalar h_y), ay (sin modes m = 1..mg, the Dirichlet scalar E_y).
  MatrixXd ax(m, mg + 1), ay(m, mg);
  for (int mm = 0; mm <= mg; ++mm) {
    const double al = mm * kPi / w;
    for (int i = 0; i < m; ++i) {
      const double sgn = ((i - orders) % 2 == 0) ? 1.0 : -1.0;
      const double sm = sinc(0.5 * (al - k[i]) * w), sp = sinc(0.5 * (al + k[i]) * w);
      const double s_plus = 0.5 * w * (sm + sp), s_minus = 0.5 * w * (sm - sp);
      const bool even = mm % 2 == 0;
      ax(i, mm) = sgn * (even ? s_plus : s_minus);
      if (mm >= 1) ay(i, mm - 1) = sgn * (even ? s_minus : s_plus);
    }
  }
  // Dirichlet (E_y): e = Z_D kappa (d - u), Z_D = ay diag(2 tanh(q h)/(w q)) ay^T / Lambda,
  // R_D = (1 + Z_D K)^-1 (Z_D K - 1). Neumann (h_y): K (d - u) = Z_N (d + u),
  // Z_N = ax diag(q tanh(q h)/rho) ax^T / Lambda (rho_0 = w, rho_m = w/2),
  // R_N = (K + Z_N)^-1 (K - Z_N). Both well conditioned at every xi > 0 (q >= gamma > 0).
  VectorXd td(mg), tn(mg + 1);
  for (int mm = 0; mm <= mg; ++mm) {
    const double al = mm * kPi / w, q = std::sqrt(g2 + al * al);
    const double th = std::tanh(q * h);
    tn[mm] = q * th / (mm == 0 ? w : 0.5 * w);
    if (mm >= 1) td[mm - 1] = 2.0 * th / (w * q);
  }
  const MatrixXd zd = ay * td.asDiagonal() * ay.transpose() / g.period;
  const MatrixXd zn = ax * tn.asDiagonal() * ax.transpose() / g.period;
  MatrixXd zk = zd * kap.asDiagonal();
  MatrixXd lhs = zk, rhs = zk;
  lhs.diagonal().array() += 1.0;
  rhs.diagonal().array() -= 1.0;
  const MatrixXd rd = lhs.partialPivLu().solve(rhs);
  lhs = zn;
  rhs = -zn;
  lhs.diagonal() += kap;
  rhs.diagonal() += kap;
  const MatrixXd rn = lhs.partialPivLu().solve(rhs);
  // To the tangential-E basis: per order n a down-going wave with E_y = a, h_y = b has
  // E_x = (k_y k_n a - kappa_n b)/gamma^2, an up-going one E_x = (k_y k_n a + kappa_n b)/gamma^2
  // (header's E_x formula), so R = T_u diag(R_D, R_N) T_d^-1 with, per pair (n, n'):
  //   R_xx = -(kappa_n/kappa_n') R_N,  R_xy = (k_y/gamma^2)(k_n R_D + kappa_n k_n' R_N/kappa_n'),
  //   R_yx = 0,  R_yy = R_D   (derived; a flat conductor, R_D = -1, R_N = 1, gives R = -1).
  MatrixXd r = MatrixXd::Zero(2 * m, 2 * m);
  for (int i = 0; i < m; ++i)
    for (int j = 0; j < m; ++j) {
      r(i, j) = -kap[i] / kap[j] * rn(i, j);
      r(i, m + j) = ky / g2 * (k[i] * rd(i, j) + kap[i] * k[j] / kap[j] * rn(i, j));
      r(m + i, m + j) = rd(i, j);
    }
  return r;
}

}  // namespace roundtrip
