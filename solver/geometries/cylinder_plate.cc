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
#include <functional>
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
  int plane_wave_nodes = 0;  // largest J of the plane-wave path (0: orders only)
};

}  // namespace

// ---------------------------------------------------------------------------------------------
// log det(1 + X) with its H-derivatives, X1 = dX/dH, X2 = d2X/dH2 (null when not asked).
// The value is formed from the factor's off-diagonal entries as sum log1p(y_i), y_i the small
// part of the i-th pivot (Cholesky: L_ii^2 = 1 + X_ii - sum_k<i L_ik^2; LU without row
// exchanges: U_ii = 1 + X_ii - sum_k<i L_ik U_ki), so log det keeps its relative precision when
// the round trip is weak (far distances, large k_z; derived) instead of losing it in 1 - 1e-12.
// Derivatives: d log det = Tr(A^-1 A'), d2 = Tr(A^-1 A'') - Tr((A^-1 A')^2), A = 1 + X.
namespace {

template <class What>
Spectral logdet_one_plus(const Eigen::MatrixXd& X, const Eigen::MatrixXd* X1,
                         const Eigen::MatrixXd* X2, bool symmetric, What&& what) {
  const int n = static_cast<int>(X.rows());
  Eigen::MatrixXd A = X;
  A.diagonal().array() += 1.0;
  Spectral out;
  if (symmetric) {
    Eigen::LLT<Eigen::MatrixXd> llt(A);
    if (llt.info() != Eigen::Success)
      throw std::runtime_error(what() + ": 1 - N is not positive definite");
    const Eigen::MatrixXd& L = llt.matrixLLT();
    for (int i = 0; i < n; ++i) {
      double y = -X(i, i);
      for (int k = 0; k < i; ++k) y += L(i, k) * L(i, k);
      out.value += std::log1p(-y);
    }
    if (X1) {
      const Eigen::MatrixXd M1 = llt.solve(*X1);
      out.d1 = M1.trace();
      if (X2) out.d2 = llt.solve(*X2).trace() - M1.cwiseProduct(M1.transpose()).sum();
    }
    if (!std::isfinite(out.value))
      throw std::runtime_error(what() + ": 1 - N is not positive definite");
    return out;
  }
  Eigen::PartialPivLU<Eigen::MatrixXd> lu(A);
  const Eigen::MatrixXd& LU = lu.matrixLU();
  const auto& perm = lu.permutationP().indices();
  bool identity = true;
  for (int i = 0; i < n && identity; ++i) identity = perm(i) == i;
  double sign = identity ? 1.0 : lu.permutationP().determinant();
  for (int i = 0; i < n; ++i) {
    double piv;
    if (identity) {
      double y = X(i, i);
      for (int k = 0; k < i; ++k) y -= LU(i, k) * LU(k, i);
      piv = 1.0 + y;
      if (piv > 0.0) {
        out.value += std::log1p(y);
        continue;
      }
    } else {
      piv = LU(i, i);
    }
    sign *= piv < 0.0 ? -1.0 : 1.0;
    out.value += std::log(std::abs(piv));
  }
  if (!(sign > 0.0) || !std::isfinite(out.value))
    throw std::runtime_error(what() + ": det(1 - T U) is not positive");
  if (X1) {
    const Eigen::MatrixXd M1 = lu.solve(*X1);
    out.d1 = M1.trace();
    if (X2) out.d2 = lu.solve(*X2).trace() - M1.cwiseProduct(M1.transpose()).sum();
  }
  return out;
}

// The plane-wave (Nystrom) round trip (derived). The plate's round trip is a superposition of
// plane waves, U_{m m'} = (1/2) \int dt e^{-z cosh t + (m + m') t} R(t) (z = 2pH, k_x = p sinh
// t; scalar channels: K_n(z) = (1/2) \int dt e^{-z cosh t + n t}, DLMF 10.32.9, with R = -1).
// The trapezoid rule t_j = j h, |j| <= J, weights w_j = (h/2) e^{-z cosh t_j}, writes it as
// U = F W R F^T with F_{m j} = sqrt(t_m) e^{m t_j}, so by Sylvester's determinant identity
//   det(1 + tau F W R F^T) = det(1 + W^1/2 R G W^1/2),  G(t_i + t_j) = sum_m t_m tau_m e^{m(t_i +
//   t_j)},
// a matrix over the 2J + 1 nodes (times 2 polarisations) instead of the 2M + 1 orders (the
// plane-wave representation of the round trip; compare Spreng, Ingold, Maia Neto, J. Chem. Phys.
// 153, 024115 (2020), for spheres). G depends only on s = t_i + t_j, i.e. on 4J + 1 values on
// the grid, each a sum over m formed from logarithms around its peak (t_m e^{m s} is
// log-concave in m: Turan-type inequalities of I_m and K_m), so nothing overflows at m ~ 1e4.
// The kernel is a band of width ~ (pH)^-1/2 around t_i = t_j with the diagonal ~ e^{-2pL cosh t}
// (uniform expansions, DLMF 10.41.3-4), so the step scales like sqrt(L/H) and J like sqrt(H/L),
// against M ~ H/L orders. Parity t -> -t (k_x -> -k_x) with s_E = 1, s_H = -1 splits the
// matrix as the m -> -m parity does in the order basis. H-derivatives act on the weights only:
// d/dH sqrt(w_i w_j) = sqrt(w_i w_j) (f_i + f_j)/2, f = -2p cosh t.
// The truncated m-sum is the order basis's own cut-off M, so both paths discretise the same
// matrix; the step is halved until two steps agree to kPwShare rel_tol (trapezoid error
// e^{-2 pi^2 sigma^2/h^2} for a Gaussian of width sigma: each halving squares it twice).
constexpr double kPwShare = 0.05;
// First step tried: h0 = kPwStepConst (z^2 + M^2)^-1/4, the Gaussian width of the narrowest
// peak e^{-z cosh t + n t} (n <= M; at small z the orders reach M through the slow decay
// (R/H)^{2m}, so M, not z, sets the width). 1.5: fewest nodes after the step check over R/L =
// 1 ... 1e3 and pL = 1e-6 ... 3 (tried 0.9, 1.5, 2.5).
constexpr double kPwStepConst = 1.5;
constexpr double kPwMaxStep = 0.3;     // strip pi/2 of the plate's branch points: e^{-pi^2/h}
constexpr double kPwTermCut = -46.0;   // terms below e^-46 of the peak are dropped
constexpr double kPwMaxRange = 120.0;  // largest t_max tried: z down to ~1e-50

class PlaneWaveKernel {
 public:
  // lt[m] = log t_m (m = 0..M); tau null for a scalar channel.
  PlaneWaveKernel(const std::vector<double>& lt, const std::vector<cylinder::Tau>* tau)
      : lt_(lt), tau_(tau), nc_(tau ? 2 : 1) {}
  int components() const { return nc_; }

  // G(s), s >= 0, as exp(scale) * g[nc x nc] (row-major).
  void eval(double s, double& scale, double* g) const {
    const int M = static_cast<int>(lt_.size()) - 1;
    int m = std::clamp(hint_, 0, M);
    const auto e = [&](int k) { return lt_[k] + k * s; };
    while (m < M && e(m + 1) >= e(m)) ++m;
    while (m > 0 && e(m - 1) > e(m)) --m;
    hint_ = m;
    scale = e(m);
    for (int c = 0; c < nc_ * nc_; ++c) g[c] = 0.0;
    const auto add = [&](int k) {
      const double ek = e(k) - scale;
      if (ek < kPwTermCut) return false;
      const double w = std::exp(ek);
      if (k == 0) {
        if (nc_ == 1) {
          g[0] += w;
        } else {
          const auto& t = (*tau_)[0];
          g[0] += w * t[0];
          g[3] += w * t[3];  // cross entries vanish at m = 0 (Delta ~ m)
        }
        return true;
      }
      const double x = std::exp(-2.0 * k * s);  // e^{-ks} / e^{ks}
      const double even = w * (1.0 + x), odd = w * (1.0 - x);
      if (nc_ == 1) {
        g[0] += even;
      } else {
        const auto& t = (*tau_)[k];
        g[0] += even * t[0];
        g[1] += odd * t[1];
        g[2] += odd * t[2];
        g[3] += even * t[3];
      }
      return true;
    };
    for (int k = m; k <= M && add(k); ++k) {
    }
    for (int k = m - 1; k >= 0 && add(k); --k) {
    }
  }

 private:
  const std::vector<double>& lt_;
  const std::vector<cylinder::Tau>* tau_;
  int nc_;
  mutable int hint_ = 0;
};

// R(t) at node t (nc x nc row-major), for t >= 0.
using PlateAt = std::function<void(double t, double* r)>;

struct PwSetup {
  double z = 0.0, p = 0.0;  // z = 2pH
  DerivativeOrder order = DerivativeOrder::kEnergy;
  double t_max = 0.0;
  int m_max = 0;  // the order cut-off M of the kernel's m-sum
};

// log det(1 + W^1/2 R G W^1/2) on the grid t_j = j h, |j| <= J.
template <class What>
Spectral plane_wave_logdet(const PlaneWaveKernel& kernel, const PlateAt& plate, const PwSetup& su,
                           double h, int J, What&& what) {
  const int nc = kernel.components(), ord = static_cast<int>(su.order);
  std::vector<double> lsw(J + 1), f1(J + 1), R((J + 1) * nc * nc);
  for (int j = 0; j <= J; ++j) {
    const double ch = std::cosh(j * h);
    lsw[j] = 0.5 * (std::log(0.5 * h) - su.z * ch);
    f1[j] = -2.0 * su.p * ch;
    plate(j * h, &R[j * nc * nc]);
  }
  std::vector<double> gs(2 * J + 1), gm((2 * J + 1) * nc * nc);
  for (int k = 0; k <= 2 * J; ++k) {
    if ((k & 31) == 0) throw_if_cancelled();
    kernel.eval(k * h, gs[k], &gm[k * nc * nc]);
  }
  const auto sgn = [](int c) { return c == 0 ? 1.0 : -1.0; };
  // E((j, c), (jp, b)) for j >= 0, any jp: sqrt(w_j w_jp) sum_d R_j^{cd} G^{db}(t_j + t_jp).
  const auto entry = [&](int j, int c, int jp, int b) {
    const int k = j + jp;
    const int ka = std::abs(k);
    double v = 0.0;
    for (int d = 0; d < nc; ++d) {
      double g = gm[ka * nc * nc + d * nc + b];
      if (k < 0) g *= sgn(d) * sgn(b);  // G^{db}(-s) = s_d s_b G^{db}(s)
      v += R[j * nc * nc + c * nc + d] * g;
    }
    return v * std::exp(lsw[j] + lsw[std::abs(jp)] + gs[ka]);
  };
  Spectral out;
  for (int sigma : {1, -1}) {
    std::vector<std::pair<int, int>> idx;
    for (int j = 0; j <= J; ++j)
      for (int c = 0; c < nc; ++c)
        if (j > 0 || sigma * sgn(c) == 1) idx.push_back({j, c});
    const int dim = static_cast<int>(idx.size());
    if (dim == 0) continue;
    Eigen::MatrixXd X(dim, dim), X1, X2;
    if (ord >= 1) X1.resize(dim, dim);
    if (ord >= 2) X2.resize(dim, dim);
    for (int i = 0; i < dim; ++i) {
      const auto [j, c] = idx[i];
      for (int l = 0; l < dim; ++l) {
        const auto [jp, b] = idx[l];
        const double f = 2.0 * (j == 0 ? 0.5 : M_SQRT1_2) * (jp == 0 ? 0.5 : M_SQRT1_2);
        const double v = f * (entry(j, c, jp, b) + sigma * sgn(b) * entry(j, c, -jp, b));
        X(i, l) = v;
        const double g1 = 0.5 * (f1[j] + f1[jp]);
        if (ord >= 1) X1(i, l) = g1 * v;
        if (ord >= 2) X2(i, l) = g1 * g1 * v;
      }
    }
    out += logdet_one_plus(X, ord >= 1 ? &X1 : nullptr, ord >= 2 ? &X2 : nullptr, nc == 1, what);
  }
  return out;
}

// The node range: the diagonal w_j |G(2 t_j)| (times cosh^ord t for the derivatives) marched
// out in steps h until below 1e-3 kMTailShare rel_tol of its peak, past the peak; infinite when
// not reached by kPwMaxRange (z = 2pH << 1, where the order basis is small anyway).
double plane_wave_range(const PlaneWaveKernel& kernel, const PwSetup& su, double h,
                        double rel_tol) {
  const int nc = kernel.components();
  const double cut = std::log(1e-3 * kMTailShare * rel_tol);
  double peak = -std::numeric_limits<double>::infinity();
  double g[4];
  for (int j = 0;; ++j) {
    const double t = j * h;
    double sc;
    kernel.eval(2.0 * t, sc, g);
    double mag = 0.0;
    for (int c = 0; c < nc; ++c) mag += std::abs(g[c * nc + c]);
    const double l = sc + std::log(mag) - su.z * std::cosh(t) +
                     static_cast<int>(su.order) * std::log(std::cosh(t));
    peak = std::max(peak, l);
    if (j > 0 && l < peak + cut && l < peak) return t;
    if (t > kPwMaxRange) return std::numeric_limits<double>::infinity();
  }
}

double plane_wave_first_step(double z, int M) {
  return std::min(kPwMaxStep, kPwStepConst * std::pow(z * z + double(M) * M, -0.25));
}

template <class What>
Spectral plane_wave_converged(const PlaneWaveKernel& kernel, const PlateAt& plate,
                              const PwSetup& su, double rel_tol, int* j_used, What&& what) {
  if (!std::isfinite(su.t_max))
    throw std::runtime_error(what() + ": no plane-wave range below t = 120 (use the order basis)");
  double h = plane_wave_first_step(su.z, su.m_max);
  const auto run = [&](double hh) {
    const int J = std::max(2, static_cast<int>(std::ceil(su.t_max / hh)));
    return plane_wave_logdet(kernel, plate, su, hh, J, what);
  };
  const double tol = kPwShare * rel_tol;
  const int ord = static_cast<int>(su.order);
  const auto agree = [&](const Spectral& a, const Spectral& b) {
    if (std::abs(a.value - b.value) > tol * std::abs(b.value)) return false;
    if (ord >= 1 && std::abs(a.d1 - b.d1) > tol * std::abs(b.d1)) return false;
    if (ord >= 2 && std::abs(a.d2 - b.d2) > tol * std::abs(b.d2)) return false;
    return true;
  };
  Spectral coarse = run(2.0 * h), fine = run(h);
  for (int attempt = 0; !agree(coarse, fine); ++attempt) {
    if (attempt >= 5) throw std::runtime_error(what() + ": the plane-wave step does not converge");
    coarse = fine;
    h *= 0.5;
    fine = run(h);
  }
  if (j_used) *j_used = std::max(2, static_cast<int>(std::ceil(su.t_max / h)));
  return fine;
}

// The automatic choice: the plane-wave path when its matrices (about J + 1 nodes per parity
// block and component against M + 1 orders; the step check adds an eighth) are cheaper.
bool plane_waves_cheaper(RoundTripBasis basis, int M, double t_max, double z) {
  if (basis == RoundTripBasis::kOrders) return false;
  if (basis == RoundTripBasis::kPlaneWaves) return true;
  if (!std::isfinite(t_max)) return false;
  const double J = std::ceil(t_max / plane_wave_first_step(z, M));
  return 1.25 * (J + 1.0) < M + 1.0;
}

}  // namespace

Spectral cylinder_plate_logdet(FieldKind channel, double p, double radius, double axis_height,
                               DerivativeOrder order, double rel_tol, int m_fixed, int* m_used,
                               RoundTripBasis basis, int* nodes_used) {
  if (channel == FieldKind::kElectromagnetic)
    throw std::invalid_argument("cylinder_plate_logdet: one scalar channel at a time");
  const double x = p * radius, y = 2.0 * p * axis_height;
  std::vector<double> a, li, lk, ky;
  // Orders: a fixed M, or grow until the diagonal tail is below kMTailShare rel_tol of the trace.
  int M = m_fixed > 0 ? m_fixed : 16;
  for (;;) {
    log_sqrt_t(channel, x, M, a, li, lk);
    if (m_fixed > 0) break;
    log_k_range(y, 2 * M + 2, ky);
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
      break;
    }
    if (M >= kMaxOrder)
      throw std::runtime_error(fmt::format(
          "cylinder-plate: no m cut-off below {} at p = {:.6g} 1/m (R = {:.6g} m, H = {:.6g} m)",
          kMaxOrder, p, radius, axis_height));
    M = std::min(2 * M, kMaxOrder);
  }
  if (m_used) *m_used = M;
  if (nodes_used) *nodes_used = 0;
  const auto what = [&] {
    return fmt::format(
        "cylinder-plate ({}) at p = {:.6g} 1/m (R = {:.6g} m, H = {:.6g} m, m_max = {})",
        to_string(channel), p, radius, axis_height, M);
  };

  if (basis != RoundTripBasis::kOrders) {
    std::vector<double> lt(M + 1);
    for (int m = 0; m <= M; ++m) lt[m] = 2.0 * a[m];
    const PlaneWaveKernel kernel(lt, nullptr);
    PwSetup su{y, p, order, 0.0, M};
    su.t_max = plane_wave_range(kernel, su, plane_wave_first_step(y, M), rel_tol);
    if (plane_waves_cheaper(basis, M, su.t_max, y))
      return plane_wave_converged(
          kernel, [](double, double* r) { r[0] = -1.0; }, su, rel_tol, nodes_used, what);
  }

  log_k_range(y, 2 * M + 2, ky);
  const int ord = static_cast<int>(order);
  // K-derivative ratios K'_n/K_n, K''_n/K_n at argument y (n = 0..2M), with K_{-n} = K_n.
  const auto lkn = [&](int n) { return ky[std::abs(n)]; };
  Spectral out;
  for (int parity = 0; parity < 2; ++parity) {
    const int m0 = parity == 0 ? 0 : 1;
    const int dim = M - m0 + 1;
    if (dim <= 0) continue;
    // X = -N (symmetrised), X1 = -dN/dH, X2 = -d2N/dH2.
    Eigen::MatrixXd X(dim, dim), X1, X2;
    if (ord >= 1) X1.resize(dim, dim);
    if (ord >= 2) X2.resize(dim, dim);
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
        X(i, j) = X(j, i) = -v;
        if (ord >= 1) X1(i, j) = X1(j, i) = -v1;
        if (ord >= 2) X2(i, j) = X2(j, i) = -v2;
      }
    }
    out += logdet_one_plus(X, ord >= 1 ? &X1 : nullptr, ord >= 2 ? &X2 : nullptr, true, what);
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
                                      int m_fixed, int* m_used, RoundTripBasis basis,
                                      int* nodes_used) {
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
  if (nodes_used) *nodes_used = 0;
  const auto what = [&] {
    return fmt::format(
        "cylinder-plate at xi = {:.6g} rad/s, k_z = {:.6g} 1/m (R = {:.6g} m, H = {:.6g} m, "
        "m_max = {})",
        xi, kz, radius, axis_height, M);
  };
  if (basis != RoundTripBasis::kOrders) {
    const PlaneWaveKernel kernel(lt, &tau);
    PwSetup su{z, p, order, 0.0, M};
    su.t_max = plane_wave_range(kernel, su, plane_wave_first_step(z, M), rel_tol);
    if (plane_waves_cheaper(basis, M, su.t_max, z)) {
      // R(t) in the longitudinal basis (formulas above) at k_x = p sinh t; at k = 0 (k_z = 0,
      // t = 0) its limit diag(r_TE, r_TM) (the pole at k^2 = 0 is removable: r_TE + r_TM = 0
      // at normal incidence, so the step needs no map).
      const auto at = [&](double t, double* R) {
        const double kx = p * std::sinh(t), q = p * std::cosh(t);
        const double k2 = kx * kx + kz * kz;
        const Reflection r = plate.reflect(std::sqrt(k2));
        if (!(k2 > 0.0)) {
          R[0] = r.te;
          R[1] = R[2] = 0.0;
          R[3] = r.tm;
          return;
        }
        const double den = p * p * k2;
        R[0] = (kappa2 * kx * kx * r.te - kz * kz * q * q * r.tm) / den;
        R[1] = -kx * kz * k0 * q * (r.te + r.tm) / den;
        R[2] = eps_m * kx * kz * k0 * q * (r.te + r.tm) / den;
        R[3] = (kappa2 * kx * kx * r.tm - kz * kz * q * q * r.te) / den;
      };
      return plane_wave_converged(kernel, at, su, rel_tol, nodes_used, what);
    }
  }
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
      // k = 0 (only at k_z = 0, k_x = 0): the limit diag(r_TE, r_TM).
      const double R[4] = {
          k2 > 0.0 ? (kappa2 * kx * kx * r.te - kz * kz * q * q * r.tm) / den : r.te,
          k2 > 0.0 ? -kx * kz * k0 * q * (r.te + r.tm) / den : 0.0,
          k2 > 0.0 ? eps_m * kx * kz * k0 * q * (r.te + r.tm) / den : 0.0,
          k2 > 0.0 ? (kappa2 * kx * kx * r.tm - kz * kz * q * q * r.te) / den : r.tm};
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
    Eigen::MatrixXd A = Eigen::MatrixXd::Zero(dim, dim), A1, A2;
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
    out += logdet_one_plus(A, ord >= 1 ? &A1 : nullptr, ord >= 2 ? &A2 : nullptr, false, what);
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
    return counted(kz_sum(xi, gap, order, o_.rel_tol));
  }
  Spectral at_frequency_within(double xi, double gap, DerivativeOrder order,
                               double rel_tol) const override {
    return counted(kz_sum(xi, gap, order, std::max(rel_tol, o_.rel_tol)));
  }

  // Every path of at_frequency_within is one de_integrate over k_z (kz_sum).
  blocks::BlockSum block_sum() const override { return blocks::BlockSum::kAxial; }
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
    // About 40 k_z nodes per channel (80 for the vector path), two parity blocks each: the
    // order basis has blocks of M + 1 (scalar) or 2M + 1 (vector), the plane-wave path blocks
    // of J + 1 or 2J + 1 with J its node count at p = 1/(2L) (Neumann channel; the step check
    // adds an eighth). Cholesky n^3/3 (LU 2n^3/3) and the derivative solves 2 n^3 each.
    int m = 0, j = 0;
    (void)cylinder_plate_logdet(
        o_.field == FieldKind::kDirichlet ? FieldKind::kDirichlet : FieldKind::kNeumann,
        1.0 / (2.0 * gap), o_.radius, o_.radius + gap, DerivativeOrder::kEnergy, o_.rel_tol,
        o_.m_max, &m, o_.basis, &j);
    const double M = (j > 0 ? j : m) + 1.0, extra = j > 0 ? 1.125 : 1.0;
    const double channels = o_.field == FieldKind::kElectromagnetic ? 2.0 : 1.0;
    const int ord = static_cast<int>(order);
    FrequencyCost c;
    if (vector_) {
      const double n = 2.0 * M + 1.0;
      c.blocks = 80.0;
      c.block_flops.assign(80, extra * n * n * n * (2.0 / 3.0 + 2.0 * ord));
      c.memory_bytes = 3.0 * 8.0 * n * n + 13.0 * 8.0 * (4.0 * M + 1.0);
      return c;
    }
    c.blocks = 40.0 * channels;
    c.block_flops.assign(static_cast<std::size_t>(c.blocks),
                         extra * 2.0 * M * M * M * (1.0 / 3.0 + 2.0 * ord));
    c.memory_bytes = 3.0 * 8.0 * (M + 1.0) * (M + 1.0) + 64.0 * M;
    return c;
  }

 private:
  Spectral counted(const KzSum& s) const {
    if (auto* c = o_.counters.get()) {
      c->kz_nodes += s.nodes;
      for (int v = c->m_max; v < s.m_max && !c->m_max.compare_exchange_weak(v, s.m_max);) {
      }
      for (int v = c->plane_wave_nodes;
           v < s.plane_wave_nodes &&
           !c->plane_wave_nodes.compare_exchange_weak(v, s.plane_wave_nodes);) {
      }
    }
    return s.total;
  }
  double medium_index() const {
    const StaticLimit sm = o_.medium->static_limit();
    return sm.kind == StaticClass::kDielectric ? std::sqrt(sm.static_eps) : 1.0;
  }

  // Below u = 2L k_z = kz_floor the integrand is taken at kz_floor (derived): log det and its
  // derivatives change there at most like log ln(1/u) (the Dirichlet/TM channel at p -> 0,
  // t_0 ~ 1/ln(1/pR)), so the part of the integral changed is below ~30 kz_floor of the
  // integral of |.|, i.e. 1e-3 kKzShare rel_tol; it keeps p = 0 (xi = 0) from asking for the
  // ~R/L ln(1/rel_tol) orders of the slow image decay (R/H)^{2m} at k_z -> 0.
  static double kz_floor(double rel_tol) { return 1e-3 * kKzShare * rel_tol / 30.0; }

  KzSum kz_sum(double xi, double gap, DerivativeOrder order, double rel_tol) const {
    const double kappa = xi > 0.0 ? std::sqrt(o_.medium->epsilon(xi)) * xi / kSpeedOfLight : 0.0;
    const double H = o_.radius + gap;
    if (vector_) {
      const auto plate = o_.plate->at(xi, *o_.medium);
      KzSum out;
      const auto f = [&](double u) {
        u = std::max(u, kz_floor(rel_tol));
        int m = 0, j = 0;
        const Spectral s =
            cylinder_plate_vector_logdet(*o_.cylinder, *plate, *o_.medium, xi, u / (2.0 * gap),
                                         o_.radius, H, order, rel_tol, o_.m_max, &m, o_.basis, &j);
        out.m_max = std::max(out.m_max, m);
        out.plane_wave_nodes = std::max(out.plane_wave_nodes, j);
        return s;
      };
      out.total =
          de_integrate(f, kKzShare * rel_tol, &out.nodes, nullptr, 1, 1.0 / (2.0 * kPi * gap));
      return out;
    }
    std::vector<FieldKind> channels;
    if (o_.field != FieldKind::kNeumann) channels.push_back(FieldKind::kDirichlet);
    if (o_.field != FieldKind::kDirichlet) channels.push_back(FieldKind::kNeumann);
    KzSum out;
    const auto f = [&](double u) {
      const double kz = std::max(u, kz_floor(rel_tol)) / (2.0 * gap);
      const double p = std::hypot(kz, kappa);
      Spectral s;
      for (FieldKind ch : channels) {
        int m = 0, j = 0;
        s += cylinder_plate_logdet(ch, p, o_.radius, H, order, rel_tol, o_.m_max, &m, o_.basis, &j);
        out.m_max = std::max(out.m_max, m);
        out.plane_wave_nodes = std::max(out.plane_wave_nodes, j);
      }
      return s;
    };
    // s = (1/pi) \int_0^inf dk_z (...) = (1/(2 pi L)) \int du (...).
    out.total =
        de_integrate(f, kKzShare * rel_tol, &out.nodes, nullptr, 1, 1.0 / (2.0 * kPi * gap));
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
