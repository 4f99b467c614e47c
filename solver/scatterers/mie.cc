#include "solver/scatterers/mie.h"

#include <cmath>
#include <limits>
#include <stdexcept>

#include "solver/special/bessel.h"

namespace roundtrip {

std::string to_string(FieldKind f) {
  switch (f) {
    case FieldKind::kElectromagnetic:
      return "electromagnetic";
    case FieldKind::kDirichlet:
      return "dirichlet";
    case FieldKind::kNeumann:
      return "neumann";
  }
  return "unknown";
}

FieldKind field_kind_from_string(const std::string& s) {
  if (s == "electromagnetic") return FieldKind::kElectromagnetic;
  if (s == "dirichlet") return FieldKind::kDirichlet;
  if (s == "neumann") return FieldKind::kNeumann;
  throw std::invalid_argument(
      "field must be \"electromagnetic\", \"dirichlet\" or \"neumann\", not \"" + s + "\"");
}

namespace {
constexpr double kNegInf = -std::numeric_limits<double>::infinity();

void store(double log_ratio, double factor, double& log_abs, int& sign) {
  // T = -(i_l/k_l) * factor
  if (factor == 0.0) {
    log_abs = kNegInf;
    sign = 0;
    return;
  }
  log_abs = log_ratio + std::log(std::abs(factor));
  sign = factor > 0 ? -1 : 1;
}
}  // namespace

MieLog mie_imaginary(FieldKind field, bool perfect_conductor, double x, double n, int lmax) {
  // A refractive index above kPerfectConductorIndex is a perfect conductor to rounding: the
  // finite-n amplitudes differ from the limit by O(1/n) relative (Bohren & Huffman 1983, ch. 4,
  // n -> infinity; derived), below 1e-15 here, while their evaluation subtracts terms of size n
  // and lost 0.17 % of the energy at eps ~ 1e40 (n ~ 1e20).
  constexpr double kPerfectConductorIndex = 1e15;
  if (field == FieldKind::kElectromagnetic && !perfect_conductor && n > kPerfectConductorIndex)
    perfect_conductor = true;
  MieLog t;
  t.log_abs_te.assign(lmax + 1, kNegInf);
  t.log_abs_tm.assign(lmax + 1, kNegInf);
  t.sign_te.assign(lmax + 1, 0);
  t.sign_tm.assign(lmax + 1, 0);
  const auto bx = special::spherical_bessel_log(x, lmax + 1);
  for (int l = 0; l <= lmax; ++l) {
    const double log_ratio = bx.log_i[l] - bx.log_k[l];  // log(i_l(x)/k_l(x))
    switch (field) {
      case FieldKind::kDirichlet:
        store(log_ratio, 1.0, t.log_abs_te[l], t.sign_te[l]);
        break;
      case FieldKind::kNeumann:
        store(log_ratio, bx.dlog_i(l) / bx.dlog_k(l), t.log_abs_te[l], t.sign_te[l]);
        break;
      case FieldKind::kElectromagnetic:
        break;
    }
  }
  if (field != FieldKind::kElectromagnetic) return t;

  // a = psi'(x)/psi(x) = (l+1)/x + r_l(x), b = zeta'(x)/zeta(x) = (l+1)/x - rho_l(x), with
  // r_l = i_{l+1}/i_l and rho_l = k_{l+1}/k_l.
  if (perfect_conductor) {
    for (int l = 1; l <= lmax; ++l) {
      const double log_ratio = bx.log_i[l] - bx.log_k[l];
      const double a = (l + 1) / x + bx.ratio_i[l];
      const double b = (l + 1) / x - bx.ratio_k[l];
      store(log_ratio, 1.0, t.log_abs_te[l], t.sign_te[l]);
      store(log_ratio, a / b, t.log_abs_tm[l], t.sign_tm[l]);
    }
    return t;
  }
  const double y = n * x;
  const auto by = special::spherical_bessel_log(y, lmax + 1);
  for (int l = 1; l <= lmax; ++l) {
    const double log_ratio = bx.log_i[l] - bx.log_k[l];
    const double rx = bx.ratio_i[l], rhox = bx.ratio_k[l], ry = by.ratio_i[l];
    const double lp1 = l + 1.0;
    // TE: (nA - a)/(nA - b) with A = psi'(y)/psi(y); nA - a = n r_l(y) - r_l(x) exactly.
    const double nA = lp1 / x + n * ry;
    const double te = (n * ry - rx) / (nA - (lp1 / x - rhox));
    // TM: (n a - A)/(n b - A).
    const double A = lp1 / y + ry;
    const double tm_num = lp1 * (n - 1.0 / n) / x + n * rx - ry;
    const double tm_den = n * (lp1 / x - rhox) - A;
    store(log_ratio, te, t.log_abs_te[l], t.sign_te[l]);
    store(log_ratio, tm_num / tm_den, t.log_abs_tm[l], t.sign_tm[l]);
  }
  return t;
}

StaticSphere static_sphere(FieldKind field, const StaticLimit& sphere, double medium_static_eps,
                           double radius, int lmax) {
  StaticSphere s;
  s.g2_te.assign(lmax + 1, 0.0);
  s.g2_tm.assign(lmax + 1, 0.0);
  for (int l = 0; l <= lmax; ++l) {
    const double ll = l;
    switch (field) {
      case FieldKind::kDirichlet:
        s.g2_te[l] = 1.0;
        break;
      case FieldKind::kNeumann:
        s.g2_te[l] = ll / (ll + 1.0);
        break;
      case FieldKind::kElectromagnetic:
        if (l == 0) break;
        switch (sphere.kind) {
          case StaticClass::kDielectric: {
            const double eps = sphere.static_eps / medium_static_eps;
            s.g2_tm[l] = ll * (eps - 1.0) / (ll * eps + ll + 1.0);
            break;
          }
          case StaticClass::kDrudeConductor:
            s.g2_tm[l] = 1.0;
            break;
          case StaticClass::kPlasmaConductor:
            s.g2_tm[l] = 1.0;
            break;
          case StaticClass::kPerfectConductor:
            s.g2_tm[l] = 1.0;
            s.g2_te[l] = ll / (ll + 1.0);
            break;
        }
        break;
    }
  }
  if (field == FieldKind::kElectromagnetic && sphere.kind == StaticClass::kPlasmaConductor) {
    const double y0 = radius * std::sqrt(sphere.plasma_wavenumber_sq);
    const auto b = special::spherical_bessel_log(y0, lmax + 1);
    // i_{l+1}/i_{l-1} = r_l r_{l-1}
    for (int l = 1; l <= lmax; ++l) s.g2_te[l] = (l / (l + 1.0)) * b.ratio_i[l] * b.ratio_i[l - 1];
  }
  return s;
}

}  // namespace roundtrip
