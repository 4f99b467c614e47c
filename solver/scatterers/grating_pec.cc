// Modal method of a perfectly conducting lamellar grating (formulas and conventions in
// grating_pec.h).
#include "solver/scatterers/grating_pec.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <vector>

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

PecScalarReflection pec_lamellar_scalar(const PecLamellar& g, double xi, double eps_m, int orders,
                                        double kx, double ky, int groove_modes, int lo, int hi) {
  if (!(g.period > 0.0) || !std::isfinite(g.period))
    throw std::invalid_argument(fmt::format("pec grating: period = {} m must be > 0", g.period));
  if (!(g.filling >= 0.0 && g.filling <= 1.0))
    throw std::invalid_argument(
        fmt::format("pec grating: filling = {} must lie in [0, 1]", g.filling));
  if (!(g.depth >= 0.0) || !std::isfinite(g.depth))
    throw std::invalid_argument(fmt::format("pec grating: depth = {} m must be >= 0", g.depth));
  if (!(xi >= 0.0) || !std::isfinite(xi))
    throw std::invalid_argument(fmt::format("pec grating: xi = {} rad/s must be >= 0", xi));
  if (!(eps_m >= 1.0) || !std::isfinite(eps_m))
    throw std::invalid_argument(fmt::format("pec grating: eps_m = {} must be >= 1", eps_m));
  if (orders < 0 || orders > 2000)
    throw std::invalid_argument(
        fmt::format("pec grating: orders = {} must lie in 0..2000", orders));
  const int m = 2 * orders + 1;
  if (hi < 0) hi = m - 1;
  if (lo < 0 || lo > hi || hi >= m)
    throw std::invalid_argument(
        fmt::format("pec grating: order block {}..{} outside 0..{}", lo, hi, m - 1));
  const int na = hi - lo + 1;
  // SI wave numbers (1/m) with eps~ = eps_m (xi/c)^2 in place of eps_m: the header's formulas in
  // units of c/xi scale to these exactly (Z V0 and R are dimensionless), and nothing overflows
  // as xi -> 0 (k/q0 would); xi = 0 is the same formulas with eps~ = 0 (Laplace).
  const double q0 = xi / kSpeedOfLight;
  const double et = eps_m * q0 * q0;
  const double G = 2.0 * kPi / g.period;
  PecScalarReflection out;
  out.k.resize(m);
  out.kappa.resize(m);
  for (int i = 0; i < m; ++i) {
    out.k[i] = kx + (i - orders) * G;
    out.kappa[i] = std::sqrt(out.k[i] * out.k[i] + ky * ky + et);
  }
  const VectorXd& kap = out.kappa;
  const double h = g.depth;
  if (g.filling >= 1.0 || h == 0.0) {  // the flat conductor at the ridge tops
    out.rd = -MatrixXd::Identity(na, na);
    out.rn = MatrixXd::Identity(na, na);
    return out;
  }
  if (g.filling <= 0.0) {  // the flat conductor h below the ridge tops
    out.rd = MatrixXd::Zero(na, na);
    out.rn = MatrixXd::Zero(na, na);
    for (int i = 0; i < na; ++i) {
      const double e = std::exp(-2.0 * kap[lo + i] * h);
      out.rd(i, i) = -e;
      out.rn(i, i) = e;
    }
    return out;
  }
  const int mg = groove_modes < 0 ? pec_groove_modes(orders, g.filling) : groove_modes;
  if (mg < 1 || mg > 4000)
    throw std::invalid_argument(
        fmt::format("pec grating: groove modes = {} must lie in 1..4000", mg));
  const double w = (1.0 - g.filling) * g.period;
  const double g2 = et + ky * ky;
  // Projections (header), without the common 1/Lambda: ax (cos modes m = 0..mg, the Neumann
  // scalar h_y), ay (sin modes m = 1..mg, the Dirichlet scalar E_y); each column scaled by the
  // square root of its (non-negative) diagonal weight below, so that Z = A A^T.
  VectorXd td(mg), tn(mg + 1);
  for (int mm = 0; mm <= mg; ++mm) {
    const double al = mm * kPi / w, q = std::sqrt(g2 + al * al);
    const double th = std::tanh(q * h);
    tn[mm] = q * th / (mm == 0 ? w : 0.5 * w);  // q = 0 (xi = 0, k_y = 0, m = 0): 0
    if (mm >= 1) td[mm - 1] = 2.0 * th / (w * q);
  }
  const double inv_sqrt_period = 1.0 / std::sqrt(g.period);
  MatrixXd ax(m, mg + 1), ay(m, mg);
  for (int mm = 0; mm <= mg; ++mm) {
    const double al = mm * kPi / w;
    const double sx = std::sqrt(tn[mm]) * inv_sqrt_period;
    const double sy = mm >= 1 ? std::sqrt(td[mm - 1]) * inv_sqrt_period : 0.0;
    const bool even = mm % 2 == 0;
    for (int i = 0; i < m; ++i) {
      const double sgn = ((i - orders) % 2 == 0) ? 1.0 : -1.0;
      const double sm = sinc(0.5 * (al - out.k[i]) * w), sp = sinc(0.5 * (al + out.k[i]) * w);
      const double s_plus = 0.5 * w * (sm + sp), s_minus = 0.5 * w * (sm - sp);
      ax(i, mm) = sx * sgn * (even ? s_plus : s_minus);
      if (mm >= 1) ay(i, mm - 1) = sy * sgn * (even ? s_minus : s_plus);
    }
  }
  // Orders with kappa_n = 0 (xi = 0, k_y = 0, k_n = 0 only): the constant potential of that
  // order. Both scalars' limits k -> 0 are taken exactly (derived): the order decouples (its
  // rows of ax, ay vanish like k), R_D = -1 (Dirichlet) and R_N = +1 (Neumann) on it.
  std::vector<int> zero;
  for (int i = 0; i < m; ++i)
    if (kap[i] == 0.0) zero.push_back(i);
  for (int i : zero) {
    ax.row(i).setZero();
    ay.row(i).setZero();
  }
  // Dirichlet (E_y): e = Z_D K (d - u), R_D = (1 + Z_D K)^-1 (Z_D K - 1) = -1 + 2 Z_D Y S^-1 Y
  // with Y = K^(1/2), S = 1 + Y Z_D Y (symmetric positive definite; Woodbury, derived).
  // Neumann (h_y): K (d - u) = Z_N (d + u), R_N = (K + Z_N)^-1 (K - Z_N) = 2 (K + Z_N)^-1 K - 1
  // (K + Z_N symmetric positive definite). Only the columns and rows lo..hi are formed.
  const VectorXd y = kap.cwiseSqrt();
  MatrixXd s = MatrixXd::Identity(m, m);
  s.selfadjointView<Eigen::Lower>().rankUpdate(y.asDiagonal() * ay);
  const Eigen::LLT<MatrixXd> s_llt(s);
  MatrixXd t = MatrixXd::Zero(m, m);
  t.selfadjointView<Eigen::Lower>().rankUpdate(ax);
  t.diagonal() += kap;
  for (int i : zero) t(i, i) = 1.0;
  const Eigen::LLT<MatrixXd> t_llt(t);
  if (s_llt.info() != Eigen::Success || t_llt.info() != Eigen::Success)
    throw std::runtime_error("pec grating: the matching matrix is not positive definite");
  MatrixXd ya = MatrixXd::Zero(m, na);
  MatrixXd ka = MatrixXd::Zero(m, na);
  for (int j = 0; j < na; ++j) {
    ya(lo + j, j) = y[lo + j];
    ka(lo + j, j) = kap[lo + j];
  }
  const MatrixXd sy = s_llt.solve(ya);  // S^-1 Y E_a
  // Rows lo..hi of Z_D Y = ay ay^T Y.
  const MatrixXd zy_rows = ay.middleRows(lo, na) * (ay.transpose() * y.asDiagonal());
  out.rd = 2.0 * zy_rows * sy;
  out.rd.diagonal().array() -= 1.0;
  out.rn = 2.0 * t_llt.solve(ka).middleRows(lo, na);
  out.rn.diagonal().array() -= 1.0;
  for (int i : zero)
    if (i >= lo && i <= hi) {
      out.rn.row(i - lo).setZero();
      out.rn.col(i - lo).setZero();
      out.rn(i - lo, i - lo) = 1.0;
    }
  return out;
}

Eigen::MatrixXd pec_lamellar_reflection(const PecLamellar& g, double xi, double eps_m, int orders,
                                        double kx, double ky, int groove_modes, int lo, int hi) {
  const PecScalarReflection sc =
      pec_lamellar_scalar(g, xi, eps_m, orders, kx, ky, groove_modes, lo, hi);
  const int na = static_cast<int>(sc.rd.rows());
  const int a0 = lo < 0 ? 0 : lo;
  MatrixXd r = MatrixXd::Zero(2 * na, 2 * na);
  if (xi == 0.0) {  // the static basis (phi, psi) (header)
    r.topLeftCorner(na, na) = sc.rd;
    r.bottomRightCorner(na, na) = sc.rn;
    return r;
  }
  // To the tangential-E basis: per order n a down-going wave with E_y = a, h_y = b has
  // E_x = (k_y k_n a - kappa_n b)/gamma^2, an up-going one E_x = (k_y k_n a + kappa_n b)/gamma^2
  // (header's E_x formula), so R = T_u diag(R_D, R_N) T_d^-1 with, per pair (n, n'):
  //   R_xx = -(kappa_n/kappa_n') R_N,  R_xy = (k_y/gamma^2)(k_n R_D + kappa_n k_n' R_N/kappa_n'),
  //   R_yx = 0,  R_yy = R_D   (derived; a flat conductor, R_D = -1, R_N = 1, gives R = -1).
  const double q0 = xi / kSpeedOfLight;
  const double g2 = eps_m * q0 * q0 + ky * ky;
  const VectorXd& k = sc.k;
  const VectorXd& kap = sc.kappa;
  for (int i = 0; i < na; ++i)
    for (int j = 0; j < na; ++j) {
      const int a = a0 + i, b = a0 + j;
      r(i, j) = -kap[a] / kap[b] * sc.rn(i, j);
      r(i, na + j) = ky / g2 * (k[a] * sc.rd(i, j) + kap[a] * k[b] / kap[b] * sc.rn(i, j));
      r(na + i, na + j) = sc.rd(i, j);
    }
  return r;
}

Eigen::MatrixXd conductor_lamellar_static(const PecLamellar& g, double eps_m, int orders, double kx,
                                          double ky, int lo, int hi) {
  // The Dirichlet half of the static pair (header): the potential vanishes on the grounded
  // conductor; eps_m does not enter the Laplace problem of the gap (checked >= 1 only).
  return pec_lamellar_scalar(g, 0.0, eps_m, orders, kx, ky, -1, lo, hi).rd;
}

}  // namespace roundtrip
