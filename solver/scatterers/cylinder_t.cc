// Cylinder T-matrix at imaginary frequency (conventions and sources in cylinder_t.h).
#include "solver/scatterers/cylinder_t.h"

#include <boost/math/special_functions/bessel.hpp>
#include <cmath>
#include <limits>
#include <stdexcept>

#include "solver/constants.h"
#include "solver/scatterers/cylinder_body.h"
#include "solver/special/bessel_i_log.h"

namespace roundtrip::cylinder {
namespace {

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

// r[m] = I_{m+1}(x)/I_m(x), m = 0..m_max (downward recurrence from 6 sqrt(x) + 20 above).
void i_ratios(double x, int m_max, std::vector<double>& r) {
  r.resize(m_max + 1);
  const int top = m_max + static_cast<int>(6.0 * std::sqrt(x)) + 20;
  double rk = 0.0;
  for (int k = top; k >= 0; --k) {
    rk = 1.0 / (2.0 * (k + 1) / x + rk);
    if (k <= m_max) r[k] = rk;
  }
}

}  // namespace

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

void log_i_range(double x, int m_max, std::vector<double>& out) {
  std::vector<double> r;
  i_ratios(x, m_max, r);
  out.resize(m_max + 1);
  out[0] = special::log_bessel_i0(x);
  for (int m = 0; m < m_max; ++m) out[m + 1] = out[m] + std::log(r[m]);
}

void i_log_derivative(double x, int m_max, std::vector<double>& out) {
  out.resize(m_max + 1);
  if (x > 1e7) {
    // Debye: d/dx log I_nu(x) = sqrt(nu^2 + x^2)/x - x/(2(nu^2 + x^2)) + O(x^-2) (from DLMF
    // 10.41.3 differentiated; the next term is below 1e-14 here).
    for (int m = 0; m <= m_max; ++m) {
      const double s = std::hypot(double(m), x);
      out[m] = s / x - x / (2.0 * s * s);
    }
    return;
  }
  std::vector<double> r;
  i_ratios(x, m_max, r);
  for (int m = 0; m <= m_max; ++m) out[m] = r[m] + m / x;  // I'_m = I_{m+1} + (m/x) I_m
}

void k_log_derivative(double x, int m_max, std::vector<double>& out) {
  // K'_0 = -K_1; K'_m = -K_{m-1} - (m/x) K_m (DLMF 10.29.2): no cancellation.
  std::vector<double> lk;
  log_k_range(x, m_max + 1, lk);
  out.resize(m_max + 1);
  out[0] = -std::exp(lk[1] - lk[0]);
  for (int m = 1; m <= m_max; ++m) out[m] = -std::exp(lk[m - 1] - lk[m]) - m / x;
}

void cylinder_t(const Material& material, const Material& medium, double R, double xi, double kz,
                int m_max, std::vector<double>& log_t, std::vector<Tau>& tau) {
  if (const auto* coated = dynamic_cast<const CoatedCylinder*>(&material))
    return coated_cylinder_t(*coated, medium, R, xi, kz, m_max, log_t, tau);
  const bool stat = !(xi > 0.0);
  const StaticLimit sm = medium.static_limit();
  if (sm.kind != StaticClass::kDielectric)
    throw std::invalid_argument("cylinder_t: the medium must be a dielectric");
  const double eps_m = stat ? sm.static_eps : medium.epsilon(xi);
  const double k0 = stat ? 0.0 : xi / kSpeedOfLight;
  const double p = std::sqrt(kz * kz + eps_m * k0 * k0);
  if (!(p > 0.0)) throw std::invalid_argument("cylinder_t: p = 0 (xi = 0 and k_z = 0)");
  const double x = p * R;
  std::vector<double> li, lk, iI, kK;
  log_i_range(x, m_max, li);
  log_k_range(x, m_max, lk);
  i_log_derivative(x, m_max, iI);
  k_log_derivative(x, m_max, kK);
  log_t.resize(m_max + 1);
  tau.assign(m_max + 1, Tau{0.0, 0.0, 0.0, 0.0});
  for (int m = 0; m <= m_max; ++m) log_t[m] = li[m] - lk[m];

  const StaticLimit sc = material.static_limit();
  if (sc.kind == StaticClass::kPerfectConductor) {
    for (int m = 0; m <= m_max; ++m) tau[m] = {1.0, 0.0, 0.0, iI[m] / kK[m]};
    return;
  }
  if (stat) {
    std::vector<double> i1;
    double kp2 = 0.0, p1 = p;
    if (sc.kind == StaticClass::kPlasmaConductor) {
      kp2 = sc.plasma_wavenumber_sq;
      p1 = std::sqrt(kz * kz + kp2);
      i_log_derivative(p1 * R, m_max, i1);
    }
    for (int m = 0; m <= m_max; ++m) {
      double te = 1.0;  // conductors: Dirichlet
      if (sc.kind == StaticClass::kDielectric) {
        const double e1 = sc.static_eps;
        te = (eps_m - e1) * iI[m] / (eps_m * kK[m] - e1 * iI[m]);
      }
      double th = 0.0;  // dielectric, Drude: transparent to the static magnetic field
      if (sc.kind == StaticClass::kPlasmaConductor) {
        const double d1 = i1[m] / p1;
        const double delta = (kz * m / R) * (1.0 / (p * p) - 1.0 / (p1 * p1));
        th = (delta * delta - kp2 * d1 * (iI[m] / p - d1)) /
             (delta * delta - kp2 * d1 * (kK[m] / p - d1));
      }
      tau[m] = {te, 0.0, 0.0, th};
    }
    return;
  }
  const double eps1 = material.epsilon(xi);
  if (!std::isfinite(eps1)) {  // the eps -> inf limit (perfect conductor)
    for (int m = 0; m <= m_max; ++m) tau[m] = {1.0, 0.0, 0.0, iI[m] / kK[m]};
    return;
  }
  const double p1 = std::sqrt(kz * kz + eps1 * k0 * k0);
  std::vector<double> i1;
  i_log_derivative(p1 * R, m_max, i1);
  // 1/p^2 - 1/p1^2 = (eps1 - eps_m) k0^2 / (p^2 p1^2), formed without cancellation.
  const double inv_diff = (eps1 - eps_m) * k0 * k0 / (p * p * p1 * p1);
  for (int m = 0; m <= m_max; ++m) {
    const double d1 = i1[m] / p1;
    const double delta = (kz * m / R) * inv_diff;
    const double aIE = k0 * (eps_m * iI[m] / p - eps1 * d1), aIH = k0 * (iI[m] / p - d1);
    const double aKE = k0 * (eps_m * kK[m] / p - eps1 * d1), aKH = k0 * (kK[m] / p - d1);
    // tau = [[aKE, delta], [-delta, aKH]]^-1 [[aIE, delta], [-delta, aIH]].
    const double det = aKE * aKH + delta * delta;
    const double ee = (aKH * aIE + delta * delta) / det;
    const double eh = (aKH * delta - delta * aIH) / det;
    const double he = (delta * aIE - aKE * delta) / det;
    const double hh = (delta * delta + aKE * aIH) / det;
    tau[m] = {ee, eh, he, hh};
  }
}

}  // namespace roundtrip::cylinder
