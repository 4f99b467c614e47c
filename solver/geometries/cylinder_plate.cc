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
#include "solver/geometries/plate_plate.h"
#include "solver/guards.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"
#include "solver/special/bessel_i_log.h"

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

// log K_0(z), log K_1(z), z > 0.
void log_k01(double z, double& k0, double& k1) {
  if (z < 600.0) {
    k0 = std::log(boost::math::cyl_bessel_k(0, z));
    k1 = std::log(boost::math::cyl_bessel_k(1, z));
    return;
  }
  // DLMF 10.40.2: K_nu(z) ~ sqrt(pi/2z) e^-z sum_k a_k(nu)/z^k, a_k = prod_{j<=k}(4nu^2 -
  // (2j-1)^2)/(k! 8^k); at z >= 600 twelve terms are far below rounding.
  const auto series = [z](double nu) {
    double term = 1.0, sum = 1.0;
    for (int k = 1; k <= 12; ++k) {
      term *= (4.0 * nu * nu - (2.0 * k - 1.0) * (2.0 * k - 1.0)) / (k * 8.0 * z);
      sum += term;
    }
    return sum;
  };
  const double base = 0.5 * std::log(kPi / (2.0 * z)) - z;
  k0 = base + std::log(series(0.0));
  k1 = base + std::log(series(1.0));
}

// out[n] = log K_n(z), n = 0..n_max.
void log_k_range(double z, int n_max, std::vector<double>& out) {
  out.resize(n_max + 1);
  double k0, k1;
  log_k01(z, k0, k1);
  out[0] = k0;
  if (n_max >= 1) out[1] = k1;
  double ratio = std::exp(k1 - k0);  // K_1/K_0
  for (int n = 1; n < n_max; ++n) {
    ratio = 1.0 / ratio + 2.0 * n / z;  // K_{n+1}/K_n
    out[n + 1] = out[n] + std::log(ratio);
  }
}

// out[m] = log I_m(x), m = 0..m_max.
void log_i_range(double x, int m_max, std::vector<double>& out) {
  out.resize(m_max + 1);
  const int top = m_max + static_cast<int>(6.0 * std::sqrt(x)) + 20;
  std::vector<double> r(m_max + 1);
  double rk = 0.0;  // I_{k+1}/I_k, from above
  for (int k = top; k >= 0; --k) {
    rk = 1.0 / (2.0 * (k + 1) / x + rk);
    if (k <= m_max) r[k] = rk;
  }
  out[0] = special::log_bessel_i0(x);
  for (int m = 0; m < m_max; ++m) out[m + 1] = out[m] + std::log(r[m]);
}

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

namespace {

// Vector-valued DE trapezoid over u in (0, inf) of f(u) (decaying like e^{-u} or faster, or
// algebraically like u^-3 and faster): u = exp(t - e^{-t}), h = 1/2, 1/4, ... until two levels
// agree to tol (per component, relative to the integral of |.|). Returns the integral; `nodes`
// counts the evaluations, `error` receives the last change of the value component.
template <class F>
Spectral de_integrate(F&& f, double tol, int* nodes, double* error, int min_level = 1) {
  constexpr double t_left = -4.5;
  const auto u_of = [](double t) { return std::exp(t - std::exp(-t)); };
  const auto du_of = [&](double t) { return u_of(t) * (1.0 + std::exp(-t)); };
  struct Node {
    double t;
    Spectral w;  // f(u) du/dt
  };
  std::vector<Node> pts;
  Spectral absint;
  int count = 0;
  const auto eval = [&](double t) {
    throw_if_cancelled();
    ++count;
    Spectral v = f(u_of(t)) * du_of(t);
    return v;
  };
  // Level h = 1/2: march right until two nodes past u = 1 are negligible.
  double h = 0.5;
  Spectral sum;
  int small = 0;
  double t_right = t_left;
  for (double t = t_left;; t += h) {
    const Spectral v = eval(t);
    pts.push_back({t, v});
    sum += v;
    absint.value += std::abs(v.value);
    absint.d1 += std::abs(v.d1);
    absint.d2 += std::abs(v.d2);
    t_right = t;
    const bool negligible = std::abs(v.value) <= 1e-3 * tol * absint.value &&
                            std::abs(v.d1) <= 1e-3 * tol * absint.d1 &&
                            std::abs(v.d2) <= 1e-3 * tol * absint.d2;
    small = (u_of(t) > 1.0 && negligible) ? small + 1 : 0;
    if (small >= 2 || t > 8.0) break;
  }
  Spectral integral = sum * h;
  Spectral change;
  for (int level = 1; level <= 8; ++level) {
    const double hn = h / 2.0;
    Spectral added;
    for (double t = t_left + hn; t < t_right; t += h) added += eval(t);
    Spectral next = integral * 0.5;
    next += added * hn;
    change = {next.value - integral.value, next.d1 - integral.d1, next.d2 - integral.d2};
    integral = next;
    h = hn;
    // The integral of |.| from the h = 1/2 nodes.
    const Spectral scale = absint * 0.5;
    if (level >= min_level && std::abs(change.value) <= tol * scale.value &&
        std::abs(change.d1) <= tol * scale.d1 && std::abs(change.d2) <= tol * scale.d2)
      break;
  }
  if (nodes) *nodes = count;
  if (error) *error = std::abs(change.value);
  return integral;
}

class CylinderPlate final : public Geometry {
 public:
  explicit CylinderPlate(CylinderPlateOptions o) : o_(std::move(o)) {
    if (!o_.medium) o_.medium = make_vacuum();
    pec_plates_ =
        std::make_unique<PlatePlate>(make_half_space(make_perfect_conductor()),
                                     make_half_space(make_perfect_conductor()), o_.medium);
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
    const FrequencySum sum = sum_over_frequencies(
        [&](double xi) {
          return de_integrate(
                     [&](double v) {
                       return pec_plates_->at_frequency(xi, gap * (1.0 + v * v),
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
    if (!cylinder->is_perfect_conductor())
      return fmt::format(
          "cylinder.material = \"{}\": cylinder materials other than perfect-conductor are not "
          "built yet",
          cylinder->name());
    if (!plate || !plate->is_perfect_conductor())
      return fmt::format(
          "plate = \"{}\": plates other than a perfect-conductor half-space are not built yet for "
          "cylinders",
          plate ? plate->describe() : std::string("none"));
  }
  return {};
}

std::shared_ptr<Geometry> make_cylinder_plate(const CylinderPlateOptions& options) {
  if (const std::string p = options.validate(); !p.empty()) throw std::invalid_argument(p);
  return std::make_shared<CylinderPlate>(options);
}

}  // namespace roundtrip
