// Two parallel cylinders, per unit length: round trip in the cylindrical-wave basis.
//
// Physics and conventions. Imaginary frequency xi, kappa = n_m(i xi) xi / c in the medium, axial
// wave number k_z, p = sqrt(k_z^2 + kappa^2); cylinder 1 (radius R1) on the axis, cylinder 2
// (radius R2) at distance d = R1 + R2 + L along x. Scattering formula (Emig, Jaffe, Kardar,
// Scardicchio, PRL 96, 080403 (2006); Rahi, Emig, Graham, Jaffe, Kardar, PRD 80, 085021 (2009)):
//   s(xi) = \int_{-inf}^{inf} dk_z/(2 pi) log det(1 - T1 U21 T2 U12)   (1/m),
// E/l = (hbar/2pi) \int_0^inf dxi s at T = 0, k_B T sum'_n s(xi_n) at T > 0 (the frequency rules
// of solver/frequency; the n = 0 term exact through the static T-matrices of cylinder_t.h).
//
// Translation (derived here from Graf's addition theorem at m = 0, K_0(p|r - r'|) =
// sum_k I_k(p rho_<) K_k(p rho_>) e^{ik(phi - phi')} (Abramowitz & Stegun 9.1.79 in its modified
// form, DLMF 10.44.6), and the ladder operators D+- = (d_x +- i d_y)/p, which map
// K_m e^{im phi} -> -K_{m+-1} e^{i(m+-1)phi} and I_m e^{im phi} -> I_{m+-1} e^{i(m+-1)phi}
// (DLMF 10.29.2)): an outgoing wave of cylinder 2 seen from cylinder 1 is
//   K_m'(p rho_2) e^{i m' phi_2} = sum_m (-1)^m' K_{m-m'}(p d) I_m(p rho_1) e^{i m phi_1},
// and one of cylinder 1 seen from cylinder 2 (which sees cylinder 1 at phi = pi) has
// (-1)^m K_{m-m'}(p d). In the round trip the signs (-1)^m' meet twice and cancel:
//   N_mm'' = T1_m sum_m' K_{m-m'}(pd) T2_m' K_{m'-m''}(pd).
// E_z and eta_0 H_z are scalars under a translation along x, so the vector round trip uses the
// same K-matrix on each component (no E/H mixing in U); TE/TM mix only inside T (k_z != 0).
// Perfect conductors: T_m = -I_m/K_m (Dirichlet, TM) and -I'_m/K'_m (Neumann, TE); the product of
// two T's is t1_m t2_m' with t_m = I_m/K_m and t_m = -I'_m/K'_m > 0, so both channels attract.
// A distance derivative d/dL = d/dd acts on K_n(pd) only: d/dd K_n = -p (K_{n-1} + K_{n+1})/2,
// d2/dd2 K_n = p^2 (K_{n-2} + 2 K_n + K_{n+2})/4 (DLMF 10.29.2).
//
// Numerics (derived):
// - Scalar path: A = t1^{1/2} U t2^{1/2} (det(1 - t1 U t2 U) = det(1 - A A^T), U symmetric),
//   1 - A A^T symmetric positive definite (Cholesky). m -> -m commutes with A: even block
//   (m = 0..M, c_0 = 1/sqrt2, c_m = 1) c_m c_m' sqrt(t1_m t2_m') [K_{|m-m'|} + K_{m+m'}], odd
//   block (m = 1..M) sqrt(t1_m t2_m') [K_{|m-m'|} - K_{m+m'}]. Entries from logarithms (log I,
//   log K of cylinder_t.h); they are bounded: sqrt(t1_m t2_m') K_{m+m'}(pd) ~ binom(m+m', m)
//   (R1/d)^m (R2/d)^m' < ((R1 + R2)/d)^{m+m'} for large orders (DLMF 10.30.1-2).
// - Vector path: T_m = -(I_m/K_m) tau_m (cylinder_t.h); with S = diag(I_m/K_m) (commuting with
//   tau) det(1 - T1 U T2 U) = det(1 - tau1 V tau2 V^T), V = S1^{1/2} U S2^{1/2}. The parity
//   P: (E_m, H_m) -> (E_-m, -H_-m) commutes with tau and with U, so the matrix splits into the
//   blocks sigma = +-1 of cylinder_plate.cc (dimension 2M + 1 each): V^sigma_{(m,a),(m',b)} =
//   delta_ab f_mm' sqrt(s1_m s2_m') [K_{|m-m'|} + sigma s_b K_{m+m'}], f = 2 c_m c_m', c_0 = 1/2,
//   c_m = 1/sqrt2, s_E = 1, s_H = -1; tau^sigma keeps the 2 x 2 blocks of tau_m (m = 0: the one
//   polarisation with sigma s_a = 1). Dense LU, det > 0 checked.
// - Cut-off in m: the first-order term Tr N = sum_{m,m'} w(m, m'), w = t1_m |tau1_m| K_{m-m'}^2
//   t2_m' |tau2_m'| (|tau| the largest row sum; 1 for the scalar path), is binned by
//   k = max(|m|, |m'|); M is the smallest order whose tail sum over k > M is below kMTailShare
//   rel_tol of the whole, after the last two bins computed are below 1e-2 of that target (else
//   M doubles). The tail is the first-order estimate of the truncation error.
// - Far apart (||N||_F < 1e-3) the value is the series -sum Tr(N^k)/k (log_det_series): 1 - N
//   would round N away (the derivatives, traces against (1 - N)^-1, are not affected).
// - k_z integral: u = 2 L k_z on the DE trapezoid of axial_integral.h, to kKzShare rel_tol.
#include "solver/geometries/cylinder_cylinder.h"

#include <fmt/format.h>

#include <Eigen/Dense>
#include <algorithm>
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

// Shares of rel_tol for the m cut-off and the k_z integral (as cylinder_plate.cc; checked by
// tests/cylinders/cylinder_cylinder_test.cc).
constexpr double kMTailShare = 0.02;
constexpr double kKzShare = 0.1;
constexpr int kMaxOrder = 20000;  // a guard; the plan's cost refuses long before

double log_add(double a, double b) {
  const double m = std::max(a, b);
  if (m == -std::numeric_limits<double>::infinity()) return m;
  return m + std::log1p(std::exp(std::min(a, b) - m));
}

using cylinder::log_i_range;
using cylinder::log_k_range;

// log t_m, m = 0..m_max, of a perfectly conducting cylinder in one scalar channel at x = pR.
void log_t_pec(FieldKind channel, double x, int m_max, std::vector<double>& out) {
  std::vector<double> li, lk;
  log_i_range(x, m_max + 1, li);
  log_k_range(x, m_max + 1, lk);
  out.resize(m_max + 1);
  for (int m = 0; m <= m_max; ++m) {
    if (channel == FieldKind::kDirichlet)
      out[m] = li[m] - lk[m];
    else if (m == 0)  // -I'_0/K'_0 = I_1/K_1
      out[m] = li[1] - lk[1];
    else  // -I'_m/K'_m = (I_{m-1} + I_{m+1})/(K_{m-1} + K_{m+1})
      out[m] = log_add(li[m - 1], li[m + 1]) - log_add(lk[m - 1], lk[m + 1]);
  }
}

// The m cut-off from the binned first-order weights (see the top of this file). w1, w2: log of
// t_m |tau_m| for m = 0..M; lk: log K_n(pd), n = 0..2M. Returns the cut-off, or -1 if the last
// bins are not yet negligible (M must grow).
int order_cut(const std::vector<double>& w1, const std::vector<double>& w2,
              const std::vector<double>& lk, int M, double rel_tol) {
  // Exponents first (cheap), then exp only within e^-60 of the largest (1e-26 of it: below any
  // accepted rel_tol times the trace, which is at least the largest pair).
  double top = -std::numeric_limits<double>::infinity();
  for (int m = -M; m <= M; ++m)
    for (int mp = -M; mp <= M; ++mp)
      top = std::max(top, w1[std::abs(m)] + w2[std::abs(mp)] + 2.0 * lk[std::abs(m - mp)]);
  std::vector<double> bin(M + 1, 0.0);
  double total = 0.0;
  for (int m = -M; m <= M; ++m)
    for (int mp = -M; mp <= M; ++mp) {
      const double e = w1[std::abs(m)] + w2[std::abs(mp)] + 2.0 * lk[std::abs(m - mp)] - top;
      if (e < -60.0) continue;
      const double w = std::exp(e);
      bin[std::max(std::abs(m), std::abs(mp))] += w;
      total += w;
    }
  const double target = kMTailShare * rel_tol * total;
  if (!(bin[M] + bin[M - 1] < 1e-2 * target) && total != 0.0) return -1;
  double tail = 0.0;
  int cut = M;
  while (cut > 1 && tail + bin[cut] <= target) tail += bin[cut--];
  return std::max(cut, 2);
}

// d-derivative factors of K_n(z)/K_n(z) at z = pd: first p K'_n/K_n, second p^2 K''_n/K_n.
double k_d1(const std::vector<double>& lk, int n, double p) {
  return -0.5 * p * (std::exp(lk[std::abs(n - 1)] - lk[n]) + std::exp(lk[n + 1] - lk[n]));
}
double k_d2(const std::vector<double>& lk, int n, double p) {
  return 0.25 * p * p * (std::exp(lk[std::abs(n - 2)] - lk[n]) + 2.0 + std::exp(lk[n + 2] - lk[n]));
}

// log det(1 - N) = -sum_k Tr(N^k)/k for a small round trip (||N||_F < kSeriesNorm): forming
// 1 - N rounds N away once ||N|| ~ 1e-16 (at large distances the two-cylinder round trip is
// ~(R1 R2/d^2)^2 and would come out as 0 or noise); the series keeps its relative precision.
// Terms until the next is below 1e-17 of the sum (at most 6 terms at the threshold).
constexpr double kSeriesNorm = 1e-3;
double log_det_series(const Eigen::MatrixXd& N) {
  Eigen::MatrixXd P = N;
  double sum = 0.0;
  for (int k = 1; k <= 40; ++k) {
    const double term = P.trace() / k;
    sum -= term;
    if (std::abs(term) <= 1e-17 * std::abs(sum)) break;
    P = P * N;
  }
  return sum;
}

}  // namespace

Spectral cylinder_pair_logdet(FieldKind channel, double p, double R1, double R2, double d,
                              DerivativeOrder order, double rel_tol, int m_fixed, int* m_used) {
  if (channel == FieldKind::kElectromagnetic)
    throw std::invalid_argument("cylinder_pair_logdet: one scalar channel at a time");
  std::vector<double> lt1, lt2, lk;
  int M = m_fixed > 0 ? m_fixed : 16;
  for (;;) {
    log_t_pec(channel, p * R1, M, lt1);
    log_t_pec(channel, p * R2, M, lt2);
    log_k_range(p * d, 2 * M + 2, lk);
    if (m_fixed > 0) break;
    const int cut = order_cut(lt1, lt2, lk, M, rel_tol);
    if (cut >= 0) {
      M = cut;
      break;
    }
    if (M >= kMaxOrder)
      throw std::runtime_error(fmt::format(
          "cylinder-cylinder: no m cut-off below {} at p = {:.6g} 1/m (R1 = {:.6g} m, R2 = "
          "{:.6g} m, d = {:.6g} m)",
          kMaxOrder, p, R1, R2, d));
    M = std::min(2 * M, kMaxOrder);
  }
  if (m_used) *m_used = M;
  const int ord = static_cast<int>(order);
  Spectral out;
  for (int parity = 0; parity < 2; ++parity) {
    const int m0 = parity;
    const int dim = M - m0 + 1;
    const double sign = parity == 0 ? 1.0 : -1.0;
    Eigen::MatrixXd A(dim, dim), A1, A2;
    if (ord >= 1) A1.resize(dim, dim);
    if (ord >= 2) A2.resize(dim, dim);
    for (int i = 0; i < dim; ++i) {
      const int m = m0 + i;
      for (int j = 0; j < dim; ++j) {
        const int mp = m0 + j;
        double w = 0.5 * (lt1[m] + lt2[mp]);
        if (parity == 0) w -= 0.5 * std::log(2.0) * ((m == 0) + (mp == 0));
        double v = 0.0, v1 = 0.0, v2 = 0.0;
        for (int term = 0; term < 2; ++term) {
          const int n = term == 0 ? std::abs(m - mp) : m + mp;
          const double e = (term == 0 ? 1.0 : sign) * std::exp(w + lk[n]);
          v += e;
          if (ord >= 1) v1 += e * k_d1(lk, n, p);
          if (ord >= 2) v2 += e * k_d2(lk, n, p);
        }
        A(i, j) = v;
        if (ord >= 1) A1(i, j) = v1;
        if (ord >= 2) A2(i, j) = v2;
      }
    }
    const Eigen::MatrixXd N = A * A.transpose();  // t1 U t2 U, symmetrised
    const Eigen::MatrixXd G = Eigen::MatrixXd::Identity(dim, dim) - N;
    Eigen::LLT<Eigen::MatrixXd> llt(G);
    if (llt.info() != Eigen::Success)
      throw std::runtime_error(fmt::format(
          "cylinder-cylinder: 1 - N is not positive definite at p = {:.6g} 1/m (R1 = {:.6g} m, "
          "R2 = {:.6g} m, d = {:.6g} m, m_max = {})",
          p, R1, R2, d, M));
    if (N.norm() < kSeriesNorm) {
      out.value += log_det_series(N);
    } else {
      const Eigen::MatrixXd& L = llt.matrixLLT();
      for (int i = 0; i < dim; ++i) out.value += 2.0 * std::log(L(i, i));
    }
    if (ord >= 1) {
      const Eigen::MatrixXd P1 = A1 * A.transpose();
      const Eigen::MatrixXd G1 = -(P1 + P1.transpose());
      const Eigen::MatrixXd X = llt.solve(G1);
      out.d1 += X.trace();
      if (ord >= 2) {
        const Eigen::MatrixXd P2 = A2 * A.transpose();
        const Eigen::MatrixXd G2 = -(P2 + P2.transpose() + 2.0 * A1 * A1.transpose());
        out.d2 += llt.solve(G2).trace() - (X.cwiseProduct(X.transpose())).sum();
      }
    }
  }
  return out;
}

Spectral cylinder_pair_vector_logdet(const Material& cyl1, const Material& cyl2,
                                     const Material& medium, double xi, double kz, double R1,
                                     double R2, double d, DerivativeOrder order, double rel_tol,
                                     int m_fixed, int* m_used) {
  const bool stat = !(xi > 0.0);
  const double eps_m = stat ? medium.static_limit().static_eps : medium.epsilon(xi);
  const double k0 = stat ? 0.0 : xi / kSpeedOfLight;
  const double p = std::sqrt(kz * kz + eps_m * k0 * k0);
  std::vector<double> lt1, lt2, lk, w1, w2;
  std::vector<cylinder::Tau> tau1, tau2;
  const auto norm = [](const cylinder::Tau& t) {
    return std::max(std::abs(t[0]) + std::abs(t[1]), std::abs(t[2]) + std::abs(t[3]));
  };
  int M = m_fixed > 0 ? m_fixed : 16;
  for (;;) {
    cylinder::cylinder_t(cyl1, medium, R1, xi, kz, M, lt1, tau1);
    cylinder::cylinder_t(cyl2, medium, R2, xi, kz, M, lt2, tau2);
    log_k_range(p * d, 2 * M + 2, lk);
    if (m_fixed > 0) break;
    w1.resize(M + 1);
    w2.resize(M + 1);
    for (int m = 0; m <= M; ++m) {
      w1[m] = lt1[m] + std::log(norm(tau1[m]));
      w2[m] = lt2[m] + std::log(norm(tau2[m]));
    }
    const int cut = order_cut(w1, w2, lk, M, rel_tol);
    if (cut >= 0) {
      M = cut;
      break;
    }
    if (M >= kMaxOrder)
      throw std::runtime_error(fmt::format(
          "cylinder-cylinder: no m cut-off below {} at xi = {:.6g} rad/s, k_z = {:.6g} 1/m",
          kMaxOrder, xi, kz));
    M = std::min(2 * M, kMaxOrder);
  }
  if (m_used) *m_used = M;
  const int ord = static_cast<int>(order);
  Spectral out;
  for (int sigma : {1, -1}) {
    std::vector<std::pair<int, int>> idx;  // (m, pol): pol 0 = E, 1 = H
    for (int m = 0; m <= M; ++m)
      for (int al = 0; al < 2; ++al) {
        const int s_al = al == 0 ? 1 : -1;
        if (m == 0 && sigma * s_al != 1) continue;
        idx.push_back({m, al});
      }
    const int dim = static_cast<int>(idx.size());
    Eigen::MatrixXd V = Eigen::MatrixXd::Zero(dim, dim), T1 = V, T2 = V, V1, V2;
    if (ord >= 1) V1 = V;
    if (ord >= 2) V2 = V;
    for (int i = 0; i < dim; ++i) {
      const auto [m, al] = idx[i];
      for (int k = 0; k < dim; ++k) {
        const auto [mp, be] = idx[k];
        if (mp == m) {
          T1(i, k) = tau1[m][2 * al + be];
          T2(i, k) = tau2[m][2 * al + be];
        }
        if (al != be) continue;
        const double f = 2.0 * (m == 0 ? 0.5 : M_SQRT1_2) * (mp == 0 ? 0.5 : M_SQRT1_2);
        const double s_be = be == 0 ? 1.0 : -1.0;
        const double w = 0.5 * (lt1[m] + lt2[mp]);
        double v = 0.0, v1 = 0.0, v2 = 0.0;
        for (int term = 0; term < 2; ++term) {
          const int n = term == 0 ? std::abs(m - mp) : m + mp;
          const double e = (term == 0 ? 1.0 : sigma * s_be) * f * std::exp(w + lk[n]);
          v += e;
          if (ord >= 1) v1 += e * k_d1(lk, n, p);
          if (ord >= 2) v2 += e * k_d2(lk, n, p);
        }
        V(i, k) = v;
        if (ord >= 1) V1(i, k) = v1;
        if (ord >= 2) V2(i, k) = v2;
      }
    }
    const Eigen::MatrixXd T2Vt = T2 * V.transpose();
    const Eigen::MatrixXd Q = T1 * (V * T2Vt);
    Eigen::MatrixXd G = Eigen::MatrixXd::Identity(dim, dim) - Q;
    Eigen::PartialPivLU<Eigen::MatrixXd> lu(G);
    const Eigen::MatrixXd& LU = lu.matrixLU();
    double sign = lu.permutationP().determinant();
    double value = 0.0;
    for (int i = 0; i < dim; ++i) {
      sign *= LU(i, i) < 0.0 ? -1.0 : 1.0;
      value += std::log(std::abs(LU(i, i)));
    }
    if (!(sign > 0.0) || !std::isfinite(value))
      throw std::runtime_error(fmt::format(
          "cylinder-cylinder: det(1 - T1 U T2 U) is not positive at xi = {:.6g} rad/s, k_z = "
          "{:.6g} 1/m (R1 = {:.6g} m, R2 = {:.6g} m, d = {:.6g} m, m_max = {}, parity {})",
          xi, kz, R1, R2, d, M, sigma));
    out.value += Q.norm() < kSeriesNorm ? log_det_series(Q) : value;
    if (ord >= 1) {
      const Eigen::MatrixXd T2V1t = T2 * V1.transpose();
      const Eigen::MatrixXd Q1 = T1 * (V1 * T2Vt + V * T2V1t);
      const Eigen::MatrixXd X = lu.solve(Q1);
      out.d1 -= X.trace();
      if (ord >= 2) {
        const Eigen::MatrixXd Q2 = T1 * (V2 * T2Vt + 2.0 * V1 * T2V1t + V * (T2 * V2.transpose()));
        out.d2 -= lu.solve(Q2).trace() + (X.cwiseProduct(X.transpose())).sum();
      }
    }
  }
  return out;
}

namespace {

using cylinder::de_integrate;

class CylinderCylinder final : public Geometry {
 public:
  explicit CylinderCylinder(CylinderCylinderOptions o) : o_(std::move(o)) {
    if (!o_.medium) o_.medium = make_vacuum();
    pec_plates_ =
        std::make_unique<PlatePlate>(make_half_space(make_perfect_conductor()),
                                     make_half_space(make_perfect_conductor()), o_.medium);
    vector_ = o_.field == FieldKind::kElectromagnetic &&
              !(o_.cylinder1->is_perfect_conductor() && o_.cylinder2->is_perfect_conductor());
    if (o_.field == FieldKind::kElectromagnetic)
      pfa_plates_ = std::make_unique<PlatePlate>(cylinder_pfa_partner(o_.cylinder1),
                                                 cylinder_pfa_partner(o_.cylinder2), o_.medium);
  }

  Spectral at_frequency(double xi, double gap, DerivativeOrder order) const override {
    return kz_sum(xi, gap, order, o_.rel_tol);
  }
  Spectral at_frequency_within(double xi, double gap, DerivativeOrder order,
                               double rel_tol) const override {
    return kz_sum(xi, gap, order, std::max(rel_tol, o_.rel_tol));
  }

  // Every path of at_frequency_within is one de_integrate over k_z (kz_sum).
  blocks::BlockSum block_sum() const override { return blocks::BlockSum::kAxial; }
  ResultScale scale() const override { return ResultScale::kPerLength; }
  double frequency_scale(double gap) const override {
    return kSpeedOfLight / (2.0 * medium_index() * gap);
  }
  std::string kind() const override { return "cylinder-cylinder"; }
  std::string describe() const override {
    if (o_.field != FieldKind::kElectromagnetic)
      return fmt::format("two {} cylinders (R1 = {:.6g} m, R2 = {:.6g} m), scalar field",
                         to_string(o_.field), o_.radius1, o_.radius2);
    return fmt::format(
        "{} cylinder (R1 = {:.6g} m) and {} cylinder (R2 = {:.6g} m) in {}, per "
        "unit length",
        o_.cylinder1->name(), o_.radius1, o_.cylinder2->name(), o_.radius2, o_.medium->name());
  }

  std::optional<PfaValues> pfa(double gap, const FrequencyRuleOptions& opts) const override {
    // Derjaguin along the profile: the local gap between the two circles is h(x) = L +
    // x^2/(2 R1) + x^2/(2 R2) + O(x^4) = L + x^2/(2 R_eff), R_eff = R1 R2/(R1 + R2), so with
    // x = sqrt(2 R_eff L) v, E/l = 2 sqrt(2 R_eff L) \int_0^inf dv E_pp(L (1 + v^2)) per
    // frequency (derived; the cylinder-plate form of cylinder_plate.cc with R -> R_eff), the
    // plates being half-spaces of the two cylinders' materials. Scalar channels: half of EM.
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
        2.0 * std::sqrt(2.0 * r_eff()) * (o_.field == FieldKind::kElectromagnetic ? 1.0 : 0.5);
    return PfaValues{c * sum.total.value, -c * sum.total.d1, -c * sum.total.d2};
  }
  std::optional<double> pfa_length() const override { return r_eff(); }

  std::map<std::string, double> truncation(double gap) const override {
    // The cut-off at the typical momentum p = 1/(2L), Neumann channel (the most orders).
    int m = 0;
    (void)cylinder_pair_logdet(
        o_.field == FieldKind::kDirichlet ? FieldKind::kDirichlet : FieldKind::kNeumann,
        1.0 / (2.0 * gap), o_.radius1, o_.radius2, o_.radius1 + o_.radius2 + gap,
        DerivativeOrder::kEnergy, o_.rel_tol, o_.m_max, &m);
    return {{"m_max", double(m)}};
  }

  FrequencyCost cost(double gap, DerivativeOrder order, double /*rel_tol*/) const override {
    // ~40 k_z nodes; scalar: two parity blocks of ~M per channel, the product A A^T (2 M^3),
    // Cholesky M^3/3 and per derivative order two products and a solve (~4 M^3); vector: two
    // blocks of n = 2M + 1, three products (6 n^3), LU (2/3 n^3), per order ~6 n^3.
    const double M = truncation(gap).at("m_max") + 1.0;
    const int ord = static_cast<int>(order);
    FrequencyCost c;
    if (vector_) {
      const double n = 2.0 * M + 1.0;
      c.blocks = 80.0;
      c.block_flops.assign(80, n * n * n * (6.0 + 2.0 / 3.0 + 6.0 * ord));
      c.memory_bytes = 8.0 * 8.0 * n * n;
      return c;
    }
    const double channels = o_.field == FieldKind::kElectromagnetic ? 2.0 : 1.0;
    c.blocks = 80.0 * channels;
    c.block_flops.assign(static_cast<std::size_t>(c.blocks),
                         M * M * M * (2.0 + 1.0 / 3.0 + 4.0 * ord));
    c.memory_bytes = 6.0 * 8.0 * M * M;
    return c;
  }

 private:
  double r_eff() const { return o_.radius1 * o_.radius2 / (o_.radius1 + o_.radius2); }
  double medium_index() const {
    const StaticLimit sm = o_.medium->static_limit();
    return sm.kind == StaticClass::kDielectric ? std::sqrt(sm.static_eps) : 1.0;
  }

  Spectral kz_sum(double xi, double gap, DerivativeOrder order, double rel_tol) const {
    const double kappa = xi > 0.0 ? std::sqrt(o_.medium->epsilon(xi)) * xi / kSpeedOfLight : 0.0;
    const double d = o_.radius1 + o_.radius2 + gap;
    // s = (1/pi) \int_0^inf dk_z (...) = (1/(2 pi L)) \int du (...), u = 2 L k_z.
    const double jac = 1.0 / (2.0 * kPi * gap);
    if (vector_) {
      const auto f = [&](double u) {
        return cylinder_pair_vector_logdet(*o_.cylinder1, *o_.cylinder2, *o_.medium, xi,
                                           u / (2.0 * gap), o_.radius1, o_.radius2, d, order,
                                           rel_tol, o_.m_max);
      };
      return de_integrate(f, kKzShare * rel_tol, nullptr, nullptr, 1, jac);
    }
    std::vector<FieldKind> channels;
    if (o_.field != FieldKind::kNeumann) channels.push_back(FieldKind::kDirichlet);
    if (o_.field != FieldKind::kDirichlet) channels.push_back(FieldKind::kNeumann);
    const auto f = [&](double u) {
      const double p = std::hypot(u / (2.0 * gap), kappa);
      Spectral s;
      for (FieldKind ch : channels)
        s += cylinder_pair_logdet(ch, p, o_.radius1, o_.radius2, d, order, rel_tol, o_.m_max);
      return s;
    };
    return de_integrate(f, kKzShare * rel_tol, nullptr, nullptr, 1, jac);
  }

  CylinderCylinderOptions o_;
  std::unique_ptr<PlatePlate> pec_plates_;
  std::unique_ptr<PlatePlate> pfa_plates_;
  bool vector_ = false;
};

}  // namespace

PfaValues cylinder_cylinder_pfa_pec(double radius1, double radius2, double gap) {
  // E/l = \int dx E_pp(L + x^2/(2 R_eff)), E_pp(h) = -pi^2 hbar c/(720 h^3) (Casimir 1948), and
  // \int_{-inf}^{inf} dx (L + x^2/(2R))^{-3} = (3 pi/8) sqrt(2R) L^{-5/2}, so
  // E/l = -pi^3 hbar c sqrt(2 R_eff)/(1920 L^{5/2}) (derived; R_eff -> R is Bordag's cylinder-plate
  // -pi^3 hbar c sqrt(R)/(960 sqrt2 L^{5/2}), PRD 73, 125018 (2006)).
  const double r_eff = radius1 * radius2 / (radius1 + radius2);
  const double c = -std::pow(kPi, 3) * kHbarC * std::sqrt(2.0 * r_eff) / 1920.0;
  const double e = c * std::pow(gap, -2.5);
  return {e, 2.5 * e / gap, -8.75 * e / (gap * gap)};
}

std::string CylinderCylinderOptions::validate() const {
  if (!std::isfinite(radius1) || !(radius1 > 0.0))
    return fmt::format("cylinder.radius = {} m: must be finite and > 0", radius1);
  if (!std::isfinite(radius2) || !(radius2 > 0.0))
    return fmt::format("cylinder2.radius = {} m: must be finite and > 0", radius2);
  if (!std::isfinite(rel_tol) || !(rel_tol > 0.0) || !(rel_tol < 0.1))
    return fmt::format("rel_tol = {}: must be in (0, 0.1)", rel_tol);
  if (m_max < 0) return fmt::format("m_max = {}: must be >= 0 (0 = automatic)", m_max);
  if (medium && medium->static_limit().kind != StaticClass::kDielectric)
    return fmt::format("medium = \"{}\": the medium must be a dielectric", medium->name());
  if (field == FieldKind::kElectromagnetic && (!cylinder1 || !cylinder2))
    return "the electromagnetic field needs both cylinders' materials";
  return {};
}

std::shared_ptr<Geometry> make_cylinder_cylinder(const CylinderCylinderOptions& options) {
  if (const std::string p = options.validate(); !p.empty()) throw std::invalid_argument(p);
  return std::make_shared<CylinderCylinder>(options);
}

}  // namespace roundtrip
