// Coated cylinder: the Material wrapper and the layered T-matrix (conventions, method and
// sources in cylinder_body.h).
#include "solver/scatterers/cylinder_body.h"

#include <fmt/format.h>

#include <Eigen/Dense>
#include <cmath>
#include <stdexcept>

#include "solver/constants.h"
#include "solver/planar/layered.h"

namespace roundtrip {

CoatedCylinder::CoatedCylinder(MaterialPtr core, std::vector<CylinderShell> shells)
    : core_(std::move(core)), shells_(std::move(shells)) {
  if (!core_) throw std::invalid_argument("coated cylinder: the core has no material");
  if (shells_.empty()) throw std::invalid_argument("coated cylinder: no shells");
  for (std::size_t i = 0; i < shells_.size(); ++i) {
    if (!shells_[i].material)
      throw std::invalid_argument(
          fmt::format("coated cylinder: shell {} (outermost = 1) has no material", i + 1));
    if (!(shells_[i].thickness > 0.0) || !std::isfinite(shells_[i].thickness))
      throw std::invalid_argument(fmt::format(
          "coated cylinder: shell {} (outermost = 1): thickness must be a positive length, got {} "
          "m",
          i + 1, shells_[i].thickness));
  }
}

std::string CoatedCylinder::name() const {
  std::string s;
  for (const CylinderShell& sh : shells_)
    s += fmt::format("{} ({:.6g} m) on ", sh.material->name(), sh.thickness);
  return s + core_->name();
}

std::string CoatedCylinder::description() const {
  std::string s = "coated cylinder, outermost first:";
  for (const CylinderShell& sh : shells_)
    s += fmt::format(" {:.6g} m of {} [{}];", sh.thickness, sh.material->name(),
                     sh.material->description());
  return s + fmt::format(" core {} [{}]", core_->name(), core_->description());
}

std::string CoatedCylinder::validate(double radius) const {
  double sum = 0.0;
  for (const CylinderShell& s : shells_) sum += s.thickness;
  if (!(sum < radius))
    return fmt::format(
        "shell thicknesses add up to {} m, which is not less than the cylinder radius {} m", sum,
        radius);
  return {};
}

MaterialPtr make_coated_cylinder(MaterialPtr core, std::vector<CylinderShell> shells) {
  if (shells.empty()) {
    if (!core) throw std::invalid_argument("cylinder: no material");
    return core;
  }
  return std::make_shared<CoatedCylinder>(std::move(core), std::move(shells));
}

PlanarPtr cylinder_pfa_partner(const MaterialPtr& cylinder) {
  const auto* c = dynamic_cast<const CoatedCylinder*>(cylinder.get());
  if (c == nullptr) return make_half_space(cylinder);
  std::vector<Layer> films;
  for (const CylinderShell& s : c->shells()) films.push_back({s.material, s.thickness});
  return make_layered(films, c->core());
}

namespace cylinder {
namespace {

// At most 2 x 2 (fixed capacity: no heap, no threaded products).
using Mat = Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, 0, 2, 2>;

/// log I, log K, I'/I, K'/K at x for m = 0..M.
struct BesselAt {
  std::vector<double> li, lk, hi, hk;
  BesselAt(double x, int M) {
    log_i_range(x, M, li);
    log_k_range(x, M, lk);
    i_log_derivative(x, M, hi);
    k_log_derivative(x, M, hk);
  }
};

/// One region, core first: its material and outer radius in units of R.
struct Region {
  const Material* material;
  double outer;
};

std::vector<Region> regions_of(const CoatedCylinder& b, double R) {
  const std::size_t n = b.shells().size();
  std::vector<Region> r(n + 1);
  double outer = R;  // from the outside in, so that thin outer shells keep their thickness
  for (std::size_t i = 0; i < n; ++i) {
    r[n - i] = {b.shells()[i].material.get(), outer / R};
    outer -= b.shells()[i].thickness;
  }
  r[0] = {b.core().get(), outer / R};
  r[n].outer = 1.0;
  return r;
}

/// Carries the state (P, D) = (Psi, Psi') of a region with wavenumber p (units 1/R) from the
/// inner radius (Bessel data a) to the outer one (b), order m (cylinder_body.h). The result is
/// rescaled (the state is a subspace).
void transfer(Mat& P, Mat& D, double p, const BesselAt& a, const BesselAt& b, int m) {
  const double hia = a.hi[m], hka = a.hk[m], hib = b.hi[m], hkb = b.hk[m];
  const double log_q = (b.lk[m] - a.lk[m]) - (b.li[m] - a.li[m]);
  const Mat beta = (p * hia * P - D) / (p * (hia - hka));
  const Mat alpha = P - beta;
  const double q = std::exp(log_q), one_minus_q = -std::expm1(log_q);
  P -= one_minus_q * beta;
  D = p * (hib * alpha + (q * hkb) * beta);
  const double s = std::max(P.cwiseAbs().maxCoeff(), D.cwiseAbs().maxCoeff() / p);
  if (s > 0.0) {
    P /= s;
    D /= s;
  }
}

void whole_pec(const BesselAt& out, int M, std::vector<Tau>& tau) {
  for (int m = 0; m <= M; ++m) tau[m] = {1.0, 0.0, 0.0, out.hi[m] / out.hk[m]};
}

bool is_pec_at(const Material& mat, double xi) {
  return mat.is_perfect_conductor() || !std::isfinite(mat.epsilon(xi));
}

// Finite xi (units: lengths in R).
void dynamic_t(const std::vector<Region>& reg, double eps_m, double k0, double kz, double p_m,
               const BesselAt& out, int M, double xi, std::vector<Tau>& tau) {
  const int N = static_cast<int>(reg.size());
  std::vector<double> eps(N), p(N);
  int pec = -1;
  for (int j = 0; j < N; ++j) {
    if (is_pec_at(*reg[j].material, xi)) {
      pec = j;
      eps[j] = p[j] = 0.0;
      continue;
    }
    eps[j] = reg[j].material->epsilon(xi);
    p[j] = std::sqrt(kz * kz + eps[j] * k0 * k0);
  }
  if (pec == N - 1) return whole_pec(out, M, tau);
  // Bessel data of each region at its inner and outer radius.
  std::vector<BesselAt> inner, outer;
  for (int j = pec + 1; j < N; ++j) {
    outer.emplace_back(p[j] * reg[j].outer, M);
    inner.emplace_back(p[j] * (j > 0 ? reg[j - 1].outer : reg[j].outer), M);
  }
  for (int m = 0; m <= M; ++m) {
    Mat P(2, 2), D(2, 2);
    const int j0 = pec + 1;
    if (pec >= 0) {
      P << 0, 0, 0, 1;
      D << 1, 0, 0, 0;
      transfer(P, D, p[j0], inner[0], outer[0], m);
    } else {
      P.setIdentity();
      D = p[0] * outer[0].hi[m] * Mat::Identity(2, 2);
    }
    for (int j = j0; j < N; ++j) {
      // Interface at reg[j].outer into region j + 1 (or the medium).
      const double e1 = eps[j], e2 = j + 1 < N ? eps[j + 1] : eps_m;
      const double p1 = p[j], p2 = j + 1 < N ? p[j + 1] : p_m;
      const double c = kz * m / reg[j].outer;
      const double r2 = (p2 / p1) * (p2 / p1);
      const double x = c * (e2 - e1) * k0 / (p1 * p1);
      const Eigen::RowVector2d rowE = (e1 / e2) * r2 * D.row(0) + (x / e2) * P.row(1);
      const Eigen::RowVector2d rowH = r2 * D.row(1) - x * P.row(0);
      D.row(0) = rowE;
      D.row(1) = rowH;
      if (j + 1 < N) transfer(P, D, p[j + 1], inner[j + 1 - j0], outer[j + 1 - j0], m);
    }
    const Mat A = D - p_m * out.hi[m] * P, B = D - p_m * out.hk[m] * P;
    const Eigen::Matrix2d t = A * B.inverse();
    tau[m] = {t(0, 0), t(0, 1), t(1, 0), t(1, 1)};
  }
}

// xi = 0, electric part (tau_EE): electrostatics, p = k_z everywhere.
void static_e(const std::vector<Region>& reg, double eps_m, double kz, const BesselAt& out, int M,
              std::vector<Tau>& tau) {
  const int N = static_cast<int>(reg.size());
  int cond = -1;
  for (int j = 0; j < N; ++j)
    if (reg[j].material->static_limit().is_conductor()) cond = j;
  if (cond == N - 1) {
    for (int m = 0; m <= M; ++m) tau[m][0] = 1.0;
    return;
  }
  std::vector<BesselAt> inner, outer;
  for (int j = cond + 1; j < N; ++j) {
    outer.emplace_back(kz * reg[j].outer, M);
    inner.emplace_back(kz * (j > 0 ? reg[j - 1].outer : reg[j].outer), M);
  }
  const auto eps_of = [&](int j) {
    return j < N ? reg[j].material->static_limit().static_eps : eps_m;
  };
  for (int m = 0; m <= M; ++m) {
    Mat P(1, 1), D(1, 1);
    const int j0 = cond + 1;
    if (cond >= 0) {
      P(0, 0) = 0.0;
      D(0, 0) = 1.0;
      transfer(P, D, kz, inner[0], outer[0], m);
    } else {
      P(0, 0) = 1.0;
      D(0, 0) = kz * outer[0].hi[m];
    }
    for (int j = j0; j < N; ++j) {
      D *= eps_of(j) / eps_of(j + 1);  // psi and eps psi' continuous
      if (j + 1 < N) transfer(P, D, kz, inner[j + 1 - j0], outer[j + 1 - j0], m);
    }
    tau[m][0] = (D(0, 0) - kz * out.hi[m] * P(0, 0)) / (D(0, 0) - kz * out.hk[m] * P(0, 0));
  }
}

// xi = 0, magnetic part (tau_HH): magnetostatics with London screening in plasma regions.
void static_h(const std::vector<Region>& reg, double kz, double R, const BesselAt& out, int M,
              std::vector<Tau>& tau) {
  const int N = static_cast<int>(reg.size());
  int pec = -1;
  bool screening = false;
  std::vector<double> s(N, 0.0), p(N, kz);
  for (int j = 0; j < N; ++j) {
    const StaticLimit lim = reg[j].material->static_limit();
    if (lim.kind == StaticClass::kPerfectConductor) pec = j;
    if (lim.kind == StaticClass::kPlasmaConductor) {
      screening = true;
      s[j] = lim.plasma_wavenumber_sq * R * R;
      p[j] = std::sqrt(kz * kz + s[j]);
    }
  }
  if (pec < 0 && !screening) return;  // exactly zero
  const double kz2 = kz * kz;
  std::vector<BesselAt> inner, outer;
  for (int j = pec + 1; j < N; ++j) {
    outer.emplace_back(p[j] * reg[j].outer, M);
    inner.emplace_back(p[j] * (j > 0 ? reg[j - 1].outer : reg[j].outer), M);
  }
  for (int m = 0; m <= M; ++m) {
    // Plasma regions: rows (h, e), two columns; others: row h, one column.
    const int j0 = pec + 1;
    const bool pl0 = s[j0] > 0.0;
    Mat P = Mat::Identity(pl0 ? 2 : 1, pl0 ? 2 : 1), D;
    if (pec >= 0) {
      if (pl0) {
        P << 1, 0, 0, 0;
        D.resize(2, 2);
        D << 0, 0, 0, 1;
      } else {
        D = Mat::Zero(1, 1);
      }
      transfer(P, D, p[j0], inner[0], outer[0], m);
    } else {
      D = p[0] * outer[0].hi[m] * P;
    }
    for (int j = j0; j < N; ++j) {
      const double c = kz * m / reg[j].outer;
      const double s1 = s[j], s2 = j + 1 < N ? s[j + 1] : 0.0;
      const double p1 = p[j], p2 = j + 1 < N ? p[j + 1] : kz;
      if (s1 > 0.0 && s2 > 0.0) {  // plasma to plasma: h, e and the two combinations
        const Eigen::RowVector2d rh =
            (p2 * p2 / (p1 * p1)) * D.row(0) + (c * (s1 - s2) / (p1 * p1)) * P.row(1);
        const Eigen::RowVector2d re = (p2 * p2 * s1 / (p1 * p1 * s2)) * D.row(1) +
                                      (c * (s2 - s1) / (p1 * p1 * s2)) * P.row(0);
        D.row(0) = rh;
        D.row(1) = re;
      } else if (s1 > 0.0) {  // plasma to non-screening: the column with s e' = c h s/k_z^2
        const double g0 = D(1, 0) - c * P(0, 0) / kz2, g1 = D(1, 1) - c * P(0, 1) / kz2;
        const double gs = std::max(std::abs(g0), std::abs(g1));
        const double v0 = gs > 0.0 ? g1 / gs : 1.0, v1 = gs > 0.0 ? -g0 / gs : 0.0;
        const double h = v0 * P(0, 0) + v1 * P(0, 1);
        const double hp =
            (v0 * (s1 * c * P(1, 0) + kz2 * D(0, 0)) + v1 * (s1 * c * P(1, 1) + kz2 * D(0, 1))) /
            (p1 * p1);
        P.resize(1, 1);
        D.resize(1, 1);
        P(0, 0) = h;
        D(0, 0) = hp;
      } else if (s2 > 0.0) {  // non-screening to plasma: e is free
        const double h = P(0, 0), hp = D(0, 0);
        P.resize(2, 2);
        D.resize(2, 2);
        P << h, 0, 0, 1;
        D << p2 * p2 * hp / kz2, -s2 * c / kz2, c * h / kz2, 0;
      }  // non-screening to non-screening: h, h' continuous
      if (j + 1 < N) transfer(P, D, p[j + 1], inner[j + 1 - j0], outer[j + 1 - j0], m);
    }
    tau[m][3] = (D(0, 0) - kz * out.hi[m] * P(0, 0)) / (D(0, 0) - kz * out.hk[m] * P(0, 0));
  }
}

}  // namespace

void coated_cylinder_t(const CoatedCylinder& body, const Material& medium, double radius, double xi,
                       double kz, int m_max, std::vector<double>& log_t, std::vector<Tau>& tau) {
  const bool stat = !(xi > 0.0);
  const StaticLimit sm = medium.static_limit();
  if (sm.kind != StaticClass::kDielectric)
    throw std::invalid_argument("coated_cylinder_t: the medium must be a dielectric");
  if (const std::string why = body.validate(radius); !why.empty())
    throw std::invalid_argument("coated_cylinder_t: " + why);
  const double eps_m = stat ? sm.static_eps : medium.epsilon(xi);
  // p R formed as in cylinder_t (the same log_t, bit for bit); below, lengths in units of R.
  const double k0_si = stat ? 0.0 : xi / kSpeedOfLight;
  const double p = std::sqrt(kz * kz + eps_m * k0_si * k0_si) * radius;
  if (!(p > 0.0)) throw std::invalid_argument("coated_cylinder_t: p = 0 (xi = 0 and k_z = 0)");
  const double k0 = k0_si * radius, kzr = kz * radius;
  const BesselAt out(p, m_max);
  log_t.resize(m_max + 1);
  for (int m = 0; m <= m_max; ++m) log_t[m] = out.li[m] - out.lk[m];
  tau.assign(m_max + 1, Tau{0.0, 0.0, 0.0, 0.0});
  const std::vector<Region> reg = regions_of(body, radius);
  if (reg.back().material->is_perfect_conductor()) return whole_pec(out, m_max, tau);
  if (!stat) return dynamic_t(reg, eps_m, k0, kzr, p, out, m_max, xi, tau);
  static_e(reg, eps_m, kzr, out, m_max, tau);
  static_h(reg, kzr, radius, out, m_max, tau);
}

}  // namespace cylinder
}  // namespace roundtrip
