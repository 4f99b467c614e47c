#include "solver/scatterers/layered_mie.h"

#include <cassert>
#include <cmath>
#include <limits>

#include "solver/special/bessel.h"

namespace roundtrip {
namespace {

constexpr double kNegInf = -std::numeric_limits<double>::infinity();
constexpr double kInf = std::numeric_limits<double>::infinity();

/// The reduced log-derivative H at the inner radius of a region carried to its outer radius
/// (layered_mie.h). h_a = +inf stands for f(r_a) = 0 (perfect conductor below, TE).
double transfer(double h_a, double hi_a, double hk_a, double hi_b, double hk_b, double log_q) {
  double gamma, one_plus_gamma;
  if (std::isinf(h_a)) {
    gamma = -1.0;
    one_plus_gamma = 0.0;
  } else {
    const double d = h_a - hk_a;  // > 0
    gamma = (hi_a - h_a) / d;
    one_plus_gamma = (hi_a - hk_a) / d;
  }
  const double q = std::exp(log_q);
  const double gq = gamma * q;
  const double den = gamma < 0.0 ? one_plus_gamma - gamma * (-std::expm1(log_q)) : 1.0 + gq;
  return (hi_b + gq * hk_b) / den;
}

/// TM interface from permittivity ratio e = eps'/eps (em1 = e - 1 computed without cancellation).
double tm_jump(double h, double e, double em1, int l) { return em1 * (l + 1.0) + e * h; }

void store(double log_ratio, double factor, double& log_abs, int& sign) {
  // T = -(i_l/k_l) * factor, as in mie.cc
  if (factor == 0.0) {
    log_abs = kNegInf;
    sign = 0;
    return;
  }
  log_abs = log_ratio + std::log(std::abs(factor));
  sign = factor > 0 ? -1 : 1;
}

}  // namespace

MieLog mie_layered_imaginary(double x, const std::vector<MieRegion>& regions, int lmax) {
  assert(x > 0.0 && !regions.empty() && lmax >= 0);
  const int N = static_cast<int>(regions.size());
  int pec = -1;
  for (int j = 0; j < N; ++j)
    if (regions[j].perfect_conductor) pec = j;
  if (pec == N - 1) return mie_imaginary(FieldKind::kElectromagnetic, true, x, 1.0, lmax);

  MieLog t;
  t.log_abs_te.assign(lmax + 1, kNegInf);
  t.log_abs_tm.assign(lmax + 1, kNegInf);
  t.sign_te.assign(lmax + 1, 0);
  t.sign_tm.assign(lmax + 1, 0);
  if (lmax < 1) return t;

  // State: H^TE, H^TM in region j at its inner radius (after the interface below it).
  std::vector<double> hte(lmax + 1, 0.0), htm(lmax + 1, 0.0);
  int start;
  if (pec >= 0) {
    start = pec + 1;
    for (int l = 1; l <= lmax; ++l) {
      hte[l] = kInf;        // f = 0 on the conductor
      htm[l] = -(l + 1.0);  // (r f)' = 0 on the conductor
    }
  } else {
    start = 0;
  }
  for (int j = start; j < N; ++j) {
    const MieRegion& g = regions[j];
    const double zb = g.n * x * g.outer;
    const auto bb = special::spherical_bessel_log(zb, lmax);
    if (j == 0) {
      for (int l = 1; l <= lmax; ++l) hte[l] = htm[l] = zb * bb.ratio_i[l];
    } else {
      const double za = g.n * x * regions[j - 1].outer;
      const auto ba = special::spherical_bessel_log(za, lmax);
      for (int l = 1; l <= lmax; ++l) {
        const double hi_a = za * ba.ratio_i[l], hk_a = -za * ba.ratio_k[l];
        const double hi_b = zb * bb.ratio_i[l], hk_b = -zb * bb.ratio_k[l];
        const double log_q = (bb.log_k[l] - ba.log_k[l]) - (bb.log_i[l] - ba.log_i[l]);
        hte[l] = transfer(hte[l], hi_a, hk_a, hi_b, hk_b, log_q);
        htm[l] = transfer(htm[l], hi_a, hk_a, hi_b, hk_b, log_q);
      }
    }
    // Interface to the next region (or the medium, n = 1).
    const double n_next = j + 1 < N ? regions[j + 1].n : 1.0;
    const double e = (n_next / g.n) * (n_next / g.n);
    const double em1 = (n_next - g.n) * (n_next + g.n) / (g.n * g.n);
    for (int l = 1; l <= lmax; ++l) htm[l] = tm_jump(htm[l], e, em1, l);
  }

  const auto bx = special::spherical_bessel_log(x, lmax);
  for (int l = 1; l <= lmax; ++l) {
    const double log_ratio = bx.log_i[l] - bx.log_k[l];
    const double hi = x * bx.ratio_i[l], hk = -x * bx.ratio_k[l];
    const double fte = std::isinf(hte[l]) ? 1.0 : (hte[l] - hi) / (hte[l] - hk);
    const double ftm = (htm[l] - hi) / (htm[l] - hk);
    store(log_ratio, fte, t.log_abs_te[l], t.sign_te[l]);
    store(log_ratio, ftm, t.log_abs_tm[l], t.sign_tm[l]);
  }
  return t;
}

StaticSphere static_layered(const std::vector<StaticRegion>& regions, double medium_static_eps,
                            int lmax) {
  assert(!regions.empty() && lmax >= 0);
  const int N = static_cast<int>(regions.size());
  StaticSphere s;
  s.g2_te.assign(lmax + 1, 0.0);
  s.g2_tm.assign(lmax + 1, 0.0);
  if (lmax < 1) return s;

  // Static permittivity of region j (the medium for j = N); only used for dielectrics.
  auto eps_of = [&](int j) { return j < N ? regions[j].limit.static_eps : medium_static_eps; };
  auto inner = [&](int j) { return j > 0 ? regions[j - 1].outer : 0.0; };

  // TM: Laplace's equation; conductors are equipotentials.
  int cond = -1;
  for (int j = 0; j < N; ++j)
    if (regions[j].limit.is_conductor()) cond = j;
  if (cond == N - 1) {
    for (int l = 1; l <= lmax; ++l) s.g2_tm[l] = 1.0;
  } else {
    std::vector<double> h(lmax + 1, 0.0);
    if (cond >= 0)
      for (int l = 1; l <= lmax; ++l) h[l] = -(l + 1.0);
    for (int j = std::max(cond + 1, 0); j < N; ++j) {
      if (j > 0) {
        const double log_rho = std::log(inner(j) / regions[j].outer);
        for (int l = 1; l <= lmax; ++l) {
          const double hk = -(2.0 * l + 1.0);
          h[l] = transfer(h[l], 0.0, hk, 0.0, hk, (2.0 * l + 1.0) * log_rho);
        }
      }
      const double e = eps_of(j + 1) / eps_of(j), em1 = (eps_of(j + 1) - eps_of(j)) / eps_of(j);
      for (int l = 1; l <= lmax; ++l) h[l] = tm_jump(h[l], e, em1, l);
    }
    for (int l = 1; l <= lmax; ++l) {
      const double tau = -h[l] / (2.0 * l + 1.0 + h[l]);
      s.g2_tm[l] = tau * l / (l + 1.0);
    }
  }

  // TE: magnetostatics with London screening in plasma regions (layered_mie.h).
  int pec = -1;
  bool screening = false;
  for (int j = 0; j < N; ++j) {
    if (regions[j].limit.kind == StaticClass::kPerfectConductor) pec = j;
    if (regions[j].limit.kind == StaticClass::kPlasmaConductor) screening = true;
  }
  if (pec < 0 && !screening) return s;  // exactly zero
  std::vector<double> h(lmax + 1, 0.0);
  if (pec >= 0)
    for (int l = 1; l <= lmax; ++l) h[l] = kInf;
  for (int j = pec + 1; j < N; ++j) {
    const StaticLimit& lim = regions[j].limit;
    const double rb = regions[j].outer, ra = inner(j);
    if (lim.kind == StaticClass::kPlasmaConductor) {
      const double kp = std::sqrt(lim.plasma_wavenumber_sq);
      const double zb = kp * rb;
      const auto bb = special::spherical_bessel_log(zb, lmax);
      if (j == 0) {
        for (int l = 1; l <= lmax; ++l) h[l] = zb * bb.ratio_i[l];
        continue;
      }
      const double za = kp * ra;
      const auto ba = special::spherical_bessel_log(za, lmax);
      for (int l = 1; l <= lmax; ++l) {
        const double log_q = (bb.log_k[l] - ba.log_k[l]) - (bb.log_i[l] - ba.log_i[l]);
        h[l] = transfer(h[l], za * ba.ratio_i[l], -za * ba.ratio_k[l], zb * bb.ratio_i[l],
                        -zb * bb.ratio_k[l], log_q);
      }
    } else if (j > 0) {
      const double log_rho = std::log(ra / rb);
      for (int l = 1; l <= lmax; ++l) {
        const double hk = -(2.0 * l + 1.0);
        h[l] = transfer(h[l], 0.0, hk, 0.0, hk, (2.0 * l + 1.0) * log_rho);
      }
    }
  }
  for (int l = 1; l <= lmax; ++l)
    s.g2_te[l] = std::isinf(h[l]) ? l / (l + 1.0) : l * h[l] / ((l + 1.0) * (2.0 * l + 1.0 + h[l]));
  return s;
}

}  // namespace roundtrip
