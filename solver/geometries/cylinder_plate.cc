// Cylinder above a plate, per unit length: round trip in the cylindrical-wave basis.
//
// Physics and conventions. Imaginary frequency xi, kappa = n_m(i xi) xi / c in the medium, axial
// wave number k_z, p = sqrt(k_z^2 + kappa^2); R radius, L gap, H = R + L axis-to-plate. For a
// perfectly conducting cylinder over a perfectly conducting plate the field splits at every
// k_z into TM (E_z, Dirichlet on both bodies) and TE (H_z, Neumann on both), and per (xi, k_z)
//   log det(1 - N),  N_mm' = t_m(pR) K_{m+m'}(2pH),  m, m' in Z,
// with t_m = I_m/K_m (Dirichlet) and t_m = -I'_m/K'_m (Neumann; both t > 0, so both channels
// attract) (Emig, Jaffe, Kardar, Scardicchio, PRL 96, 080403 (2006); Bordag, PRD 73, 125018
// (2006)). The energy per unit length is E/l = (hbar/2pi) \int_0^inf dxi s(xi) at T = 0 and
// k_B T sum'_n s(xi_n) at T > 0 with
//   s(xi) = \int_{-inf}^{inf} dk_z/(2 pi) sum_channels log det(1 - N)  (1/m),
// which at T = 0 in vacuum equals (hbar c / 4 pi) \int_0^inf dp p log det (polar coordinates in
// (xi/c, k_z); derived). xi = 0 is exact: p = |k_z| (perfect conductors are perfect at every
// frequency, no static subtlety).
//
// Numerics (derived):
// - Symmetry m -> -m: t_{-m} = t_m and K_{-n} = K_n, so N commutes with the reflection of m and
//   splits into an even block (m = 0..M, weights c_0 = 1/sqrt2, c_m = 1 otherwise) with entries
//   c_m c_m' t_m [K_{m+m'} + K_{|m-m'|}] and an odd block (m = 1..M) with t_m [K_{m+m'} -
//   K_{|m-m'|}]. Each block is symmetrised by sqrt(t_m) . sqrt(t_m') (same determinant), and
//   every entry is formed as exp(log sqrt t_m + log sqrt t_m' + log K_n) from logarithms of the
//   Bessel functions, so nothing overflows at large pR or large orders: log I_m from Boost's or
//   the large-argument I_0 (solver/special/bessel_i_log.h) and the downward ratio recurrence
//   I_{k+1}/I_k = 1/(2(k+1)/x + I_{k+2}/I_{k+1}) (DLMF 10.29.1, minimal solution, Gautschi,
//   SIAM Rev. 9, 24 (1967)); log K_n from K_0, K_1 (Boost below z = 600, the large-argument
//   series DLMF 10.40.2 above) and the upward recurrence K_{n+1} = K_{n-1} + (2n/z) K_n in ratio
//   form (K is dominant upwards: stable).
// - H-derivatives (d/dL = d/dH) act on K_n(2pH) only: d/dH K_n = 2p K'_n, K'_n = -(K_{n-1} +
//   K_{n+1})/2, d2/dH2 K_n = 4p^2 K''_n, K''_n = (K_{n-2} + 2K_n + K_{n+2})/4 (DLMF 10.29.2),
//   then d log det = -Tr[B N'], d2 = -Tr[B N''] - Tr[(B N')^2], B = (1 - N)^-1 (Cholesky).
// - Cut-off in m: the symmetrised diagonal t_m K_{2m}(2pH) decays in m (like
//   exp(-2pL sqrt(1 + m^2/(pR)^2)) for m, pR >> 1, from the uniform expansions DLMF 10.41.3-4);
//   M is the smallest order with the tail sum over |m| > M of the diagonal below
//   kMTailShare rel_tol of the whole trace, checked past the last order computed. The tail sum
//   is the first-order estimate of the truncation error (log det(1 - N) = -Tr N - ...).
// - k_z integral: k_z = u / (2L), u = exp(t - e^{-t}) (the map for integrands decaying like
//   e^{-u}; Takahasi & Mori 1974, the form of solver/frequency), trapezoid levels h = 1/2, 1/4,
//   ... until two levels agree to kKzShare rel_tol of the integral of |.| per component; the
//   right end marches until a node is below 1e-3 kKzShare rel_tol of the running sum. The left
//   end t = -4.5 (u ~ e^{-95}) cuts a part below 1e-40 of any integrand here.
#include "solver/geometries/cylinder_plate.h"

#include <fmt/format.h>

#include <Eigen/Dense>
#include <algorithm>
#include <boost/math/special_functions/bessel.hpp>
#include <cmath>
#include <limits>
#include <stdexcept>
#include <vector>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/axial_integral.h"
#include "solver/geometries/plate_plate.h"
#include "solver/guards.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"
#include "solver/scatterers/cylinder_body.h"
#include "solver/scatterers/cylinder_t.h"

namespace roundtrip {
namespace {

// Share of rel_tol given to the m cut-off and to the k_z integral per frequency (the rest is
// the frequency rule's); each is checked by the convergence tests (tests/cylinders).
constexpr double kMTailShare = 0.02;
constexpr double kKzShare = 0.1;
constexpr int kMaxOrder = 200000;  // a guard: far beyond any accepted R/L (cost refuses first)

double log_add(double a, double b) {
  const double m = std::max(a, b);
  if (m == -std::numeric_limits<double>::infinity()) return m;
  return m + std::log1p(std::exp(std::min(a, b) - m));
}

using cylinder::log_i_range;
using cylinder::log_k_range;

// Half the log of t_m, m = 0..m_max, for one channel at x = pR.
void log_sqrt_t(FieldKind channel, double x, int m_max, std::vector<double>& out,
                std::vector<double>& li, std::vector<double>& lk) {
  log_i_range(x, m_max + 1, li);
  log_k_range(x, m_max + 1, lk);
  out.resize(m_max + 1);
  for (int m = 0; m <= m_max; ++m) {
    double lt;
    if (channel == FieldKind::kDirichlet) {
      lt = li[m] - lk[m];
    } else if (m == 0) {  // -I'_0/K'_0 = I_1/K_1
      lt = li[1] - lk[1];
    } else {  // -I'_m/K'_m = (I_{m-1} + I_{m+1})/(K_{m-1} + K_{m+1})
      lt = log_add(li[m - 1], li[m + 1]) - log_add(lk[m - 1], lk[m + 1]);
    }
    out[m] = 0.5 * lt;
  }
}

struct KzSum {
  Spectral total;
  int m_max = 0;
  int nodes = 0;
};

}  // namespace

Spectral cylinder_plate_logdet(FieldKind channel, double p, double radius, double axis_height,
                               DerivativeOrder order, double rel_tol, int m_fixed, int* m_used) {
  if (channel == FieldKind::kElectromagnetic)
    throw std::invalid_argument("cylinder_plate_logdet: one scalar channel at a time");
  const double x = p * radius, y = 2.0 * p * axis_height;
  std::vector<double> a, li, lk, ky;
  // Orders: a fixed M, or grow until the diagonal tail is below kMTailShare rel_tol of the trace.
  int M = m_fixed > 0 ? m_fixed : 16;
  for (;;) {
    log_sqrt_t(channel, x, M, a, li, lk);
    log_k_range(y, 2 * M + 2, ky);
    if (m_fixed > 0) break;
    std::vector<double> diag(M + 1);
    double trace = 0.0;
    for (int m = 0; m <= M; ++m) {
      diag[m] = (m == 0 ? 1.0 : 2.0) * std::exp(2.0 * a[m] + ky[2 * m]);
      trace += diag[m];
    }
    const double target = kMTailShare * rel_tol * trace;
    // The last orders must already be below the target (decay reached) ...
    if (diag[M] + diag[M - 1] < 1e-2 * target || trace == 0.0) {
      double tail = 0.0;
      int cut = M;
      while (cut > 1 && tail + diag[cut] <= target) tail += diag[cut--];
      M = std::max(cut, 2);
      log_sqrt_t(channel, x, M, a, li, lk);
      log_k_range(y, 2 * M + 2, ky);
      break;
    }
    if (M >= kMaxOrder)
      throw std::runtime_error(fmt::format(
          "cylinder-plate: no m cut-off below {} at p = {:.6g} 1/m (R = {:.6g} m, H = {:.6g} m)",
          kMaxOrder, p, radius, axis_height));
    M = std::min(2 * M, kMaxOrder);
  }
  if (m_used) *m_used = M;

  const int ord = static_cast<int>(order);
  // K-derivative ratios K'_n/K_n, K''_n/K_n at argument y (n = 0..2M), with K_{-n} = K_n.
  const auto lkn = [&](int n) { return ky[std::abs(n)]; };
  Spectral out;
  for (int parity = 0; parity < 2; ++parity) {
    const int m0 = parity == 0 ? 0 : 1;
    const int dim = M - m0 + 1;
    if (dim <= 0) continue;
    Eigen::MatrixXd A(dim, dim), A1, A2;
    if (ord >= 1) A1.resize(dim, dim);
    if (ord >= 2) A2.resize(dim, dim);
    const double sign = parity == 0 ? 1.0 : -1.0;
    for (int i = 0; i < dim; ++i) {
      const int m = m0 + i;
      for (int j = 0; j <= i; ++j) {
        const int mp = m0 + j;
        double w = a[m] + a[mp];
        if (parity == 0)
          w += (m == 0 ? -0.5 * std::log(2.0) : 0.0) + (mp == 0 ? -0.5 * std::log(2.0) : 0.0);
        double v = 0.0, v1 = 0.0, v2 = 0.0;
        for (int term = 0; term < 2; ++term) {
          const int n = term == 0 ? m + mp : std::abs(m - mp);
          const double s = term == 0 ? 1.0 : sign;
          const double e = s * std::exp(w + ky[n]);
          v += e;
          if (ord >= 1)
            v1 += e * 2.0 * p * -0.5 * (std::exp(lkn(n - 1) - ky[n]) + std::exp(ky[n + 1] - ky[n]));
          if (ord >= 2)
            v2 += e * 4.0 * p * p * 0.25 *
                  (std::exp(lkn(n - 2) - ky[n]) + 2.0 + std::exp(ky[n + 2] - ky[n]));
        }
        A(i, j) = A(j, i) = -v;
        if (ord >= 1) A1(i, j) = A1(j, i) = v1;
        if (ord >= 2) A2(i, j) = A2(j, i) = v2;
      }
      A(i, i) += 1.0;
    }
    Eigen::LLT<Eigen::MatrixXd> llt(A);
    if (llt.info() != Eigen::Success)
      throw std::runtime_error(fmt::format(
          "cylinder-plate: 1 - N is not positive definite at p = {:.6g} 1/m (R = {:.6g} m, "
          "H = {:.6g} m, m_max = {})",
          p, radius, axis_height, M));
    const Eigen::MatrixXd& L = llt.matrixLLT();
    for (int i = 0; i < dim; ++i) out.value += 2.0 * std::log(L(i, i));
    if (ord >= 1) {
      const Eigen::MatrixXd X = llt.solve(A1);  // B N'
      out.d1 -= X.trace();
      if (ord >= 2) {
        const Eigen::MatrixXd Y = llt.solve(A2);
        out.d2 -= Y.trace() + (X.cwiseProduct(X.transpose())).sum();
      }
    }
  }
  return out;
}

// The vector round trip (real materials). Conventions: cylinder_t.h for T_m in the basis
// (E_z, eta_0 H_z). The plate: an outgoing wave K_|m|(p rho) e^{i m phi} below the axis is
// (1/2) \int dk_x/q e^{i k_x x + q y} [-i(k_x + q)/p]^m (from K_0's plane-wave form and the
// raising operator d_x + i d_y; derived), q = sqrt(k_x^2 + p^2), k_x = p sinh t; a plane wave
// e^{i k_x x - q y} is sum_m I_m(p rho) [i(k_x + q)/p]^m e^{i m phi} (generating function, DLMF
// 10.35.1). After the diagonal similarity i^m the plate round trip is, per polarisation pair,
//   U^{ab}_{m m'} = (1/2) \int dt e^{-2pH cosh t + (m + m') t} R_ab(t),
// with the plate's reflection in the longitudinal basis (derived from the plate's TE/TM
// amplitudes of a plane wave with k = sqrt(k_x^2 + k_z^2), r_TE, r_TM of planar.h):
//   R_EE = (kappa^2 k_x^2 r_TE - k_z^2 q^2 r_TM)/(p^2 k^2),
//   R_HH = (kappa^2 k_x^2 r_TM - k_z^2 q^2 r_TE)/(p^2 k^2),
//   R_EH = -k_x k_z k_0 q (r_TE + r_TM)/(p^2 k^2),  R_HE = eps_m k_x k_z k_0 q (r_TE + r_TM)/(p^2
//   k^2)
// (a perfect conductor gives diag(-1, 1): Dirichlet E_z, Neumann H_z, as in the scalar path;
// at xi = 0 diag(-r_TM, -r_TE)). |R_ab| <= 1 entrywise for |r| <= 1.
// Quadrature: R has poles at k^2 = 0, i.e. k_x = +-i k_z, so t is mapped by k_x = a sinh v,
// a = max(k_z, 1e-9 p) (the poles, the branch points of q and of r(k) sit at Im v = pi/2; below
// a = 1e-9 p the unresolved pole carries a relative weight ~k_z/p < 1e-9), trapezoid in v with
// step h <= 0.3 (error ~e^{-pi^2/h} < 1e-14) and h <= 0.7 (z^2 + n_max^2)^{-1/4} (the Gaussian
// width of the narrowest peak e^{-z cosh t + n t}). Each U_n is formed as K_n(z) times the
// quadrature ratio sum(w R)/sum(w), and sum(w)/(2 K_n(z)) - 1 is the check of the rule (halved
// until below kVecQuadratureCheck for every n).
namespace {
constexpr double kVecQuadratureCheck = 1e-11;
constexpr double kNegligibleExponent = -46.0;  // e^-46 ~ 1e-20 of the largest weight
}  // namespace

Spectral cylinder_plate_vector_logdet(const Material& cyl, const PlanarAtFrequency& plate,
                                      const Material& medium, double xi, double kz, double radius,
                                      double axis_height, DerivativeOrder order, double rel_tol,
                                      int m_fixed, int* m_used) {
  const bool stat = !(xi > 0.0);
  const double eps_m = stat ? medium.static_limit().static_eps : medium.epsilon(xi);
  const double k0 = stat ? 0.0 : xi / kSpeedOfLight;
  const double kappa2 = eps_m * k0 * k0;
  const double p = std::sqrt(kz * kz + kappa2);
  const double z = 2.0 * p * axis_height;
  std::vector<double> lt, ky;
  std::vector<cylinder::Tau> tau;
  const auto norm = [](const cylinder::Tau& t) {
    return std::max(std::abs(t[0]) + std::abs(t[1]), std::abs(t[2]) + std::abs(t[3]));
  };
  // Orders: as the scalar path, on the bound |diag| <= t_m K_2m(z) max row sum |tau_m|.
  int M = m_fixed > 0 ? m_fixed : 16;
  for (;;) {
    cylinder::cylinder_t(cyl, medium, radius, xi, kz, M, lt, tau);
    log_k_range(z, 2 * M + 2, ky);
    if (m_fixed > 0) break;
    std::vector<double> diag(M + 1);
    double trace = 0.0;
    for (int m = 0; m <= M; ++m) {
      diag[m] = (m == 0 ? 1.0 : 2.0) * std::exp(lt[m] + ky[2 * m]) * norm(tau[m]);
      trace += diag[m];
    }
    const double target = kMTailShare * rel_tol * trace;
    if (diag[M] + diag[M - 1] < 1e-2 * target || trace == 0.0) {
      double tail = 0.0;
      int cut = M;
      while (cut > 1 && tail + diag[cut] <= target) tail += diag[cut--];
      M = std::max(cut, 2);
      cylinder::cylinder_t(cyl, medium, radius, xi, kz, M, lt, tau);
      log_k_range(z, 2 * M + 2, ky);
      break;
    }
    if (M >= kMaxOrder)
      throw std::runtime_error(fmt::format(
          "cylinder-plate: no m cut-off below {} at p = {:.6g} 1/m (R = {:.6g} m, H = {:.6g} m)",
          kMaxOrder, p, radius, axis_height));
    M = std::min(2 * M, kMaxOrder);
  }
  if (m_used) *m_used = M;
  const int ord = static_cast<int>(order);
  const int N = 2 * M;  // n = m + m' in [-N, N]

  // Plate round trip U^{ab}_n / K_n(z) = <R_ab>_n and its H-derivative factors.
  const double a = std::max(kz, 1e-9 * p);
  double t_max = std::asinh(N / z);
  {
    const auto g = [&](double t) { return -z * std::cosh(t) + N * t; };
    const double g0 = g(t_max);
    double d = 0.05;
    while (g(t_max + d) > g0 + kNegligibleExponent) d *= 1.3;
    t_max += d;
  }
  const double v_max = std::asinh(p * std::sinh(t_max) / a);
  double h = std::min(0.3, 0.7 * std::pow(z * z + double(N) * N, -0.25));
  // acc[n + N][c]: c = 0 weight, 1..4 R (EE, EH, HE, HH), 5..8 R (-2p cosh t), 9..12 R 4p^2cosh^2
  std::vector<std::array<double, 13>> acc;
  for (int attempt = 0;; ++attempt) {
    acc.assign(2 * N + 1, {});
    const int J = static_cast<int>(std::ceil(v_max / h));
    for (int j = -J; j <= J; ++j) {
      if ((j & 63) == 0) throw_if_cancelled();
      const double v = j * h;
      const double kx = a * std::sinh(v);
      const double q = std::hypot(kx, p);
      const double ch = q / p, t = std::asinh(kx / p);
      const double k2 = kx * kx + kz * kz;
      const Reflection r = plate.reflect(std::sqrt(k2));
      const double den = p * p * k2;
      const double R[4] = {(kappa2 * kx * kx * r.te - kz * kz * q * q * r.tm) / den,
                           -kx * kz * k0 * q * (r.te + r.tm) / den,
                           eps_m * kx * kz * k0 * q * (r.te + r.tm) / den,
                           (kappa2 * kx * kx * r.tm - kz * kz * q * q * r.te) / den};
      const double base = std::log(0.5 * h * a * std::cosh(v) / q) - z * ch;
      const double f1 = -2.0 * p * ch, f2 = 4.0 * p * p * ch * ch;
      const auto add = [&](int n) {
        const double e = base + n * t - ky[std::abs(n)];
        if (e < kNegligibleExponent) return false;
        const double w = std::exp(e);
        auto& s = acc[n + N];
        s[0] += w;
        for (int c = 0; c < 4; ++c) {
          s[1 + c] += w * R[c];
          if (ord >= 1) s[5 + c] += w * R[c] * f1;
          if (ord >= 2) s[9 + c] += w * R[c] * f2;
        }
        return true;
      };
      // The exponent is concave in n (log K_n is convex): scan out from its peak n ~ z sinh t.
      const int peak = std::clamp(static_cast<int>(std::lround(z * std::sinh(t))), -N, N);
      for (int n = peak; n <= N && add(n); ++n) {
      }
      for (int n = peak - 1; n >= -N && add(n); --n) {
      }
    }
    double worst = 0.0;
    for (const auto& s : acc) worst = std::max(worst, std::abs(s[0] - 1.0));
    if (worst <= kVecQuadratureCheck) break;
    if (attempt >= 4)
      throw std::runtime_error(fmt::format(
          "cylinder-plate: plate round-trip quadrature misses its check ({:.3g}) at p = {:.6g} "
          "1/m, k_z = {:.6g} 1/m",
          worst, p, kz));
    h *= 0.5;
  }

  // 1 - T U = 1 + tau V, V^{ab}_{mm'} = sqrt(t_m t_m') K_{m+m'}(z) <R_ab>_{m+m'}. The parity
  // P: (E_m, H_m) -> (E_-m, -H_-m) commutes with it (tau_-m and <R>_-n flip only their cross
  // entries), so it splits into the blocks P = sigma = +-1 on the basis (x_m + sigma s_a
  // x_-m)/sqrt2 (m > 0; s_E = 1, s_H = -1) and x_0 where sigma s_a = 1 (derived); block entries
  //   delta + f_mm' [(tau V)(m, m') + sigma s_b (tau V)(m, -m')],  f = 2 c_m c_m',
  // c_0 = 1/2, c_m = 1/sqrt2. Each block has dimension 2M + 1.
  Spectral out;
  for (int sigma : {1, -1}) {
    std::vector<std::pair<int, int>> idx;  // (m, pol)
    for (int m = 0; m <= M; ++m)
      for (int al = 0; al < 2; ++al) {
        const int s_al = al == 0 ? 1 : -1;
        if (m == 0 && sigma * s_al != 1) continue;
        idx.push_back({m, al});
      }
    const int dim = static_cast<int>(idx.size());
    Eigen::MatrixXd A = Eigen::MatrixXd::Identity(dim, dim), A1, A2;
    if (ord >= 1) A1 = Eigen::MatrixXd::Zero(dim, dim);
    if (ord >= 2) A2 = Eigen::MatrixXd::Zero(dim, dim);
    for (int i = 0; i < dim; ++i) {
      const auto [m, al] = idx[i];
      const cylinder::Tau& tm = tau[m];
      for (int k = 0; k < dim; ++k) {
        const auto [mp, be] = idx[k];
        const double f = 2.0 * (m == 0 ? 0.5 : M_SQRT1_2) * (mp == 0 ? 0.5 : M_SQRT1_2);
        const double s_be = be == 0 ? 1.0 : -1.0;
        double v0 = 0.0, v1 = 0.0, v2 = 0.0;
        for (int term = 0; term < 2; ++term) {
          const int n = term == 0 ? m + mp : m - mp;
          const double w = term == 0 ? 1.0 : sigma * s_be;
          const auto& s = acc[n + N];
          const double scale = w * f * std::exp(0.5 * (lt[m] + lt[mp]) + ky[std::abs(n)]) / s[0];
          for (int ga = 0; ga < 2; ++ga) {
            const double tg = tm[2 * al + ga] * scale;
            v0 += tg * s[1 + 2 * ga + be];
            if (ord >= 1) v1 += tg * s[5 + 2 * ga + be];
            if (ord >= 2) v2 += tg * s[9 + 2 * ga + be];
          }
        }
        A(i, k) += v0;
        if (ord >= 1) A1(i, k) = v1;
        if (ord >= 2) A2(i, k) = v2;
      }
    }
    Eigen::PartialPivLU<Eigen::MatrixXd> lu(A);
    const Eigen::MatrixXd& LU = lu.matrixLU();
    double sign = lu.permutationP().determinant();
    double value = 0.0;
    for (int i = 0; i < dim; ++i) {
      sign *= LU(i, i) < 0.0 ? -1.0 : 1.0;
      value += std::log(std::abs(LU(i, i)));
    }
    if (!(sign > 0.0) || !std::isfinite(value))
      throw std::runtime_error(fmt::format(
          "cylinder-plate: det(1 - T U) is not positive at xi = {:.6g} rad/s, k_z = {:.6g} 1/m "
          "(R = {:.6g} m, H = {:.6g} m, m_max = {}, parity {})",
          xi, kz, radius, axis_height, M, sigma));
    out.value += value;
    if (ord >= 1) {
      const Eigen::MatrixXd X = lu.solve(A1);
      out.d1 += X.trace();
      if (ord >= 2) out.d2 += lu.solve(A2).trace() - (X.cwiseProduct(X.transpose())).sum();
    }
  }
  return out;
}

namespace {

using cylinder::de_integrate;

class CylinderPlate final : public Geometry {
 public:
  explicit CylinderPlate(CylinderPlateOptions o) : o_(std::move(o)) {
    if (!o_.medium) o_.medium = make_vacuum();
    pec_plates_ =
        std::make_unique<PlatePlate>(make_half_space(make_perfect_conductor()),
                                     make_half_space(make_perfect_conductor()), o_.medium);
    vector_ = o_.field == FieldKind::kElectromagnetic &&
              !(o_.cylinder->is_perfect_conductor() && o_.plate->is_perfect_conductor());
    if (o_.field == FieldKind::kElectromagnetic)
      pfa_plates_ =
          std::make_unique<PlatePlate>(cylinder_pfa_partner(o_.cylinder), o_.plate, o_.medium);
  }

  Spectral at_frequency(double xi, double gap, DerivativeOrder order) const override {
    return kz_sum(xi, gap, order, o_.rel_tol).total;
  }
  Spectral at_frequency_within(double xi, double gap, DerivativeOrder order,
                               double rel_tol) const override {
    return kz_sum(xi, gap, order, std::max(rel_tol, o_.rel_tol)).total;
  }

  ResultScale scale() const override { return ResultScale::kPerLength; }
  double frequency_scale(double gap) const override {
    return kSpeedOfLight / (2.0 * medium_index() * gap);
  }
  std::string kind() const override { return "cylinder-plate"; }
  std::string describe() const override {
    if (o_.field != FieldKind::kElectromagnetic)
      return fmt::format("{} cylinder (R = {:.6g} m) over a {} plate, scalar field",
                         to_string(o_.field), o_.radius, to_string(o_.field));
    return fmt::format("{} cylinder (R = {:.6g} m) over {} in {}, per unit length",
                       o_.cylinder->name(), o_.radius, o_.plate->describe(), o_.medium->name());
  }

  std::optional<PfaValues> pfa(double gap, const FrequencyRuleOptions& opts) const override {
    // E/l = 2 sqrt(2R) \int_0^inf du E_pp(L + u^2) (Derjaguin 1934 along the circle's profile
    // h = L + x^2/(2R), x = sqrt(2R) u; derived), per frequency with the same rule, so a medium
    // (and the temperature) enters as in the exact result. Scalar channels: half of EM.
    const double sl = std::sqrt(gap);
    const PlatePlate& plates = pfa_plates_ ? *pfa_plates_ : *pec_plates_;
    const FrequencySum sum = sum_over_frequencies(
        [&](double xi) {
          return de_integrate(
                     [&](double v) {
                       return plates.at_frequency(xi, gap * (1.0 + v * v),
                                                  DerivativeOrder::kGradient);
                     },
                     1e-10, nullptr, nullptr, 2) *
                 sl;
        },
        pec_plates_->frequency_scale(gap), opts);
    const double c =
        2.0 * std::sqrt(2.0 * o_.radius) * (o_.field == FieldKind::kElectromagnetic ? 1.0 : 0.5);
    return PfaValues{c * sum.total.value, -c * sum.total.d1, -c * sum.total.d2};
  }
  std::optional<double> pfa_length() const override { return o_.radius; }

  std::map<std::string, double> truncation(double gap) const override {
    // The cut-off at the typical momentum p = 1/(2L) of the dominant frequencies, Neumann
    // channel (it needs the most orders).
    int m = 0;
    (void)cylinder_plate_logdet(
        o_.field == FieldKind::kDirichlet ? FieldKind::kDirichlet : FieldKind::kNeumann,
        1.0 / (2.0 * gap), o_.radius, o_.radius + gap, DerivativeOrder::kEnergy, o_.rel_tol,
        o_.m_max, &m);
    return {{"m_max", double(m)}};
  }

  FrequencyCost cost(double gap, DerivativeOrder order, double /*rel_tol*/) const override {
    // About 40 k_z nodes, two parity blocks of M/2... M per channel, Cholesky M^3/3 and the
    // derivative solves 2 M^3 each.
    const double M = truncation(gap).at("m_max") + 1.0;
    const double channels = o_.field == FieldKind::kElectromagnetic ? 2.0 : 1.0;
    const double per = 2.0 * M * M * M * (1.0 / 3.0 + 2.0 * static_cast<int>(order));
    FrequencyCost c;
    if (vector_) {
      // Vector path: two parity blocks of 2M + 1 per k_z node, LU (2/3) n^3 and the derivative
      // solves 2 n^3 each.
      const double n = 2.0 * M + 1.0;
      c.blocks = 80.0;
      c.block_flops.assign(80, n * n * n * (2.0 / 3.0 + 2.0 * static_cast<int>(order)));
      c.memory_bytes = 3.0 * 8.0 * n * n + 13.0 * 8.0 * (4.0 * M + 1.0);
      return c;
    }
    c.blocks = 40.0 * channels;
    c.block_flops.assign(static_cast<std::size_t>(c.blocks), per);
    c.memory_bytes = 3.0 * 8.0 * (M + 1.0) * (M + 1.0) + 64.0 * M;
    return c;
  }

 private:
  double medium_index() const {
    const StaticLimit sm = o_.medium->static_limit();
    return sm.kind == StaticClass::kDielectric ? std::sqrt(sm.static_eps) : 1.0;
  }

  KzSum kz_sum(double xi, double gap, DerivativeOrder order, double rel_tol) const {
    const double kappa = xi > 0.0 ? std::sqrt(o_.medium->epsilon(xi)) * xi / kSpeedOfLight : 0.0;
    const double H = o_.radius + gap;
    if (vector_) {
      const auto plate = o_.plate->at(xi, *o_.medium);
      KzSum out;
      const auto f = [&](double u) {
        int m = 0;
        const Spectral s =
            cylinder_plate_vector_logdet(*o_.cylinder, *plate, *o_.medium, xi, u / (2.0 * gap),
                                         o_.radius, H, order, rel_tol, o_.m_max, &m);
        out.m_max = std::max(out.m_max, m);
        return s;
      };
      out.total =
          de_integrate(f, kKzShare * rel_tol, &out.nodes, nullptr) * (1.0 / (2.0 * kPi * gap));
      return out;
    }
    std::vector<FieldKind> channels;
    if (o_.field != FieldKind::kNeumann) channels.push_back(FieldKind::kDirichlet);
    if (o_.field != FieldKind::kDirichlet) channels.push_back(FieldKind::kNeumann);
    KzSum out;
    const auto f = [&](double u) {
      const double kz = u / (2.0 * gap);
      const double p = std::hypot(kz, kappa);
      Spectral s;
      for (FieldKind ch : channels) {
        int m = 0;
        s += cylinder_plate_logdet(ch, p, o_.radius, H, order, rel_tol, o_.m_max, &m);
        out.m_max = std::max(out.m_max, m);
      }
      return s;
    };
    // s = (1/pi) \int_0^inf dk_z (...) = (1/(2 pi L)) \int du (...).
    out.total =
        de_integrate(f, kKzShare * rel_tol, &out.nodes, nullptr) * (1.0 / (2.0 * kPi * gap));
    return out;
  }

  CylinderPlateOptions o_;
  std::unique_ptr<PlatePlate> pec_plates_;
  std::unique_ptr<PlatePlate> pfa_plates_;  // half-space of the cylinder's material and the plate
  bool vector_ = false;                     // real materials: the TE/TM-mixing path
};

}  // namespace

PfaValues cylinder_plate_pfa_pec(double radius, double gap) {
  // E/l = -pi^3 hbar c sqrt(R) / (960 sqrt(2) L^(5/2)) (Bordag 2006); F = -dE/dL, F' = dF/dL.
  const double c = -std::pow(kPi, 3) * kHbarC * std::sqrt(radius) / (960.0 * std::sqrt(2.0));
  const double e = c * std::pow(gap, -2.5);
  return {e, 2.5 * e / gap, -8.75 * e / (gap * gap)};
}

std::string CylinderPlateOptions::validate() const {
  if (!std::isfinite(radius) || !(radius > 0.0))
    return fmt::format("radius = {} m: must be finite and > 0", radius);
  if (!std::isfinite(rel_tol) || !(rel_tol > 0.0) || !(rel_tol < 0.1))
    return fmt::format("rel_tol = {}: must be in (0, 0.1)", rel_tol);
  if (m_max < 0) return fmt::format("m_max = {}: must be >= 0 (0 = automatic)", m_max);
  if (medium && medium->static_limit().kind != StaticClass::kDielectric)
    return fmt::format("medium = \"{}\": the medium must be a dielectric", medium->name());
  if (field == FieldKind::kElectromagnetic) {
    if (!cylinder) return "the electromagnetic field needs the cylinder's material";
    if (!plate) return "the electromagnetic field needs the plate";
  }
  return {};
}

std::shared_ptr<Geometry> make_cylinder_plate(const CylinderPlateOptions& options) {
  if (const std::string p = options.validate(); !p.empty()) throw std::invalid_argument(p);
  return std::make_shared<CylinderPlate>(options);
}

}  // namespace roundtrip
