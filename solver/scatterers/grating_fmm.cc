// Fourier modal method for a lamellar grating at imaginary frequency (conventions and sources in
// grating_fmm.h).
#include "solver/scatterers/grating_fmm.h"

#include <fmt/format.h>

#include <Eigen/Eigenvalues>
#include <algorithm>
#include <boost/math/special_functions/sin_pi.hpp>
#include <cmath>
#include <stdexcept>
#include <utility>
#include <vector>

#include "solver/constants.h"
#include "solver/scatterers/grating_coating.h"
#include "solver/scatterers/grating_pec.h"

namespace roundtrip {
namespace {

using Eigen::MatrixXd;

// The largest eps the FMM uses at xi > 0 (the constructor).
constexpr double kEpsCap = 1e9;
using Eigen::VectorXd;

// Modes of one region: e = W (up + down), h = V (down - up) (amplitudes of up-going modes
// e^{-lambda z}, down-going e^{+lambda z}); lambda in the region's length unit.
struct Modes {
  MatrixXd w, v;
  VectorXd lambda;
};

// Admittance recursion (derived; continuity of tangential e and h): Y maps e to h of the field
// below an interface that holds no incoming wave from below. A layer of thickness d (in the
// modes' length unit) on top of admittance Y has, at its top,
//   R_b = (V + Y W)^-1 (V - Y W),  R = X R_b X,  X = e^{-lambda d},
//   Y' = V (1 - R) [W (1 + R)]^-1;
// only decaying exponentials appear.
MatrixXd admittance_through(const Modes& md, double d, const MatrixXd& y) {
  const VectorXd x = (-md.lambda * d).array().exp();
  const MatrixXd yw = y * md.w;
  MatrixXd rb = (md.v + yw).partialPivLu().solve(md.v - yw);
  const MatrixXd r = x.asDiagonal() * rb * x.asDiagonal();
  const MatrixXd id = MatrixXd::Identity(r.rows(), r.cols());
  const MatrixXd f = md.w * (id + r);
  const MatrixXd g = md.v * (id - r);
  return f.transpose().partialPivLu().solve(g.transpose()).transpose();
}

// Reflection into the top medium (W = 1, admittance v0) from admittance y below: u = R d with
// R = (V0 + Y)^-1 (V0 - Y) (derived as above).
MatrixXd reflection_from(const MatrixXd& v0, const MatrixXd& y) {
  return (v0 + y).partialPivLu().solve(v0 - y);
}

// Dynamic homogeneous region of permittivity eps (units of c/xi): W = 1, lambda = kappa (twice),
// V = Q~ Lambda^-1 (Ee = Ai = eps; the h~ = (-h_y, h_x) representation of reflect).
Modes homogeneous_dynamic(const VectorXd& k, double ky, double eps) {
  const int m = static_cast<int>(k.size());
  Modes md;
  md.w = MatrixXd::Identity(2 * m, 2 * m);
  md.lambda.resize(2 * m);
  md.v = MatrixXd::Zero(2 * m, 2 * m);
  for (int n = 0; n < m; ++n) {
    const double kap = std::sqrt(k[n] * k[n] + ky * ky + eps);
    md.lambda[n] = md.lambda[m + n] = kap;
    // Q~ = [[ky^2 + eps, -ky k], [-ky k, k^2 + eps]] / kappa (h~ = (-h_y, h_x), see reflect)
    md.v(n, n) = (ky * ky + eps) / kap;
    md.v(n, m + n) = -ky * k[n] / kap;
    md.v(m + n, n) = -ky * k[n] / kap;
    md.v(m + n, m + n) = (k[n] * k[n] + eps) / kap;
  }
  return md;
}

Modes homogeneous_static(const VectorXd& k, double ky, double eps) {
  const int m = static_cast<int>(k.size());
  Modes md;
  md.w = MatrixXd::Identity(m, m);
  md.lambda.resize(m);
  md.v = MatrixXd::Zero(m, m);
  for (int n = 0; n < m; ++n) {
    md.lambda[n] = std::sqrt(k[n] * k[n] + ky * ky);
    md.v(n, n) = -eps * md.lambda[n];  // D_z = -eps d_z phi: up-going gives -V a (header)
  }
  return md;
}

double epsilon_at(const Material& m, double xi, const char* what) {
  if (m.is_perfect_conductor())
    throw std::invalid_argument(fmt::format(
        "grating: {} '{}' is a perfect conductor; perfectly conducting gratings need their own "
        "modal method, which is not built",
        what, m.name()));
  if (xi > 0.0) return m.epsilon(xi);
  const StaticLimit s = m.static_limit();
  if (s.is_conductor())
    throw std::invalid_argument(fmt::format(
        "grating: {} '{}' conducts at xi = 0; the static (n = 0) term of a conducting grating "
        "is not built (use temperature = \"0 K\", which needs no xi = 0 term)",
        what, m.name()));
  return s.static_eps;
}

}  // namespace

std::string LamellarGrating::describe() const {
  const std::string r = ridge ? ridge->name() : "?", sub = substrate ? substrate->name() : "?";
  switch (profile) {
    case GratingProfile::kSinusoidal:
      return fmt::format("sinusoidal grating of {} (period {:g} m, amplitude {:g} m) on {}", r,
                         period, amplitude, sub);
    case GratingProfile::kTriangular:
      return fmt::format("triangular grating of {} (period {:g} m, depth {:g} m) on {}", r, period,
                         depth, sub);
    case GratingProfile::kTable:
      return fmt::format(
          "table-profile grating of {} (period {:g} m, {} points, depth {:g} m) on {}", r, period,
          table.size(), depth, sub);
    case GratingProfile::kLamellar:
      break;
  }
  return fmt::format("lamellar grating of {} (period {:g} m, filling {:g}, depth {:g} m) on {}", r,
                     period, filling, depth, sub);
}

double LamellarGrating::height() const {
  return profile == GratingProfile::kSinusoidal ? 2.0 * amplitude : depth;
}

double LamellarGrating::height_at(double x) const {
  // Reduce to u = |x|/Lambda in [0, 1/2].
  double u = std::abs(std::remainder(x / period, 1.0));
  switch (profile) {
    case GratingProfile::kLamellar:
      return u < 0.5 * filling ? depth : 0.0;
    case GratingProfile::kSinusoidal:
      return amplitude * (1.0 + std::cos(2.0 * kPi * u));
    case GratingProfile::kTriangular:
      return depth * (1.0 - 2.0 * u);
    case GratingProfile::kTable: {
      const double xa = u * period;
      for (std::size_t i = 1; i < table.size(); ++i) {
        const auto& [x0, h0] = table[i - 1];
        const auto& [x1, h1] = table[i];
        if (xa <= x1) return x1 > x0 ? h0 + (h1 - h0) * (xa - x0) / (x1 - x0) : h1;
      }
      return table.back().second;
    }
  }
  return 0.0;
}

std::vector<std::pair<double, double>> LamellarGrating::ridge_set(double z) const {
  std::vector<std::pair<double, double>> s;
  const auto sym = [&](double half) {
    if (half > 0.0) s.emplace_back(-std::min(half, 0.5), std::min(half, 0.5));
  };
  switch (profile) {
    case GratingProfile::kLamellar:
      if (z < depth) sym(0.5 * filling);
      return s;
    case GratingProfile::kSinusoidal:  // A (1 + cos 2 pi u) > z  <=>  |u| < acos(z/A - 1)/(2 pi)
      if (z < 2.0 * amplitude)
        sym(std::acos(std::clamp(z / amplitude - 1.0, -1.0, 1.0)) / (2 * kPi));
      return s;
    case GratingProfile::kTriangular:  // H (1 - 2|u|) > z  <=>  |u| < (1 - z/H)/2
      if (z < depth) sym(0.5 * (1.0 - z / depth));
      return s;
    case GratingProfile::kTable: {
      // Linear pieces: the part of each segment above z, merged where they touch.
      for (std::size_t i = 1; i < table.size(); ++i) {
        const auto& [x0, h0] = table[i - 1];
        const auto& [x1, h1] = table[i];
        double a = x0, b = x1;
        if (h0 <= z && h1 <= z) continue;
        if (h0 <= z) a = x0 + (x1 - x0) * (z - h0) / (h1 - h0);
        if (h1 <= z) b = x0 + (x1 - x0) * (z - h0) / (h1 - h0);
        a /= period;
        b /= period;
        if (!s.empty() && a <= s.back().second + 1e-15)
          s.back().second = b;
        else if (b > a)
          s.emplace_back(a, b);
      }
      return s;
    }
  }
  return s;
}

std::vector<std::pair<double, std::vector<std::pair<double, double>>>> LamellarGrating::layers()
    const {
  std::vector<std::pair<double, std::vector<std::pair<double, double>>>> out;
  if (profile == GratingProfile::kLamellar) {
    if (depth > 0.0) out.push_back({depth, ridge_set(0.0)});
    return out;
  }
  const double H = height();
  if (!(H > 0.0)) return out;
  if (slices < 1)
    throw std::invalid_argument(
        "grating: the staircase slice count of a non-lamellar profile "
        "must be set (>= 1)");
  // Area-preserving staircase: each slice's interval ends are the means of the profile's
  // level-set ends over the slice (midpoint rule with kSamples sub-levels), so the staircase
  // holds the profile's material per slice (its mean height is exact up to the sub-sampling;
  // a plain mid-height level set misses it by O(S^-1.5) where the ends move like a square
  // root, at the crest and trough of a sinusoid). Where the number of intervals changes
  // inside a slice, the mid-height level set.
  constexpr int kSamples = 64;
  const double t = H / slices;
  for (int j = slices - 1; j >= 0; --j) {
    auto mid = ridge_set((j + 0.5) * t);
    std::vector<std::pair<double, double>> mean(mid.size(), {0.0, 0.0});
    bool same = true;
    for (int k = 0; k < kSamples && same; ++k) {
      const auto r = ridge_set((j + (k + 0.5) / kSamples) * t);
      if (r.size() != mid.size()) {
        same = false;
        break;
      }
      for (std::size_t i = 0; i < r.size(); ++i) {
        mean[i].first += r[i].first / kSamples;
        mean[i].second += r[i].second / kSamples;
      }
    }
    out.push_back({t, same ? mean : mid});
  }
  return out;
}

GratingAtFrequency::GratingAtFrequency(const LamellarGrating& g, double xi, const Material& medium,
                                       int orders)
    : g_(g), xi_(xi), n_(orders), m_(2 * orders + 1) {
  if (!(g.period > 0.0) || !std::isfinite(g.period))
    throw std::invalid_argument(fmt::format("grating: period = {} m must be > 0", g.period));
  if (!(g.filling >= 0.0 && g.filling <= 1.0))
    throw std::invalid_argument(fmt::format("grating: filling = {} must lie in [0, 1]", g.filling));
  if (!(g.depth >= 0.0) || !std::isfinite(g.depth))
    throw std::invalid_argument(fmt::format("grating: depth = {} m must be >= 0", g.depth));
  if (!g.ridge || !g.substrate)
    throw std::invalid_argument("grating: ridge and substrate materials must be given");
  if (orders < 0 || orders > 2000)
    throw std::invalid_argument(fmt::format("grating: orders = {} must lie in 0..2000", orders));
  if (!(xi >= 0.0) || !std::isfinite(xi))
    throw std::invalid_argument(fmt::format("grating: xi = {} rad/s must be >= 0", xi));
  const bool pec_r = g.ridge->is_perfect_conductor(), pec_s = g.substrate->is_perfect_conductor();
  if (pec_r || pec_s) {
    // Perfect conductors: their own modal method (grating_pec.h), lamellar and all-PEC only.
    if (!(pec_r && pec_s))
      throw std::invalid_argument(fmt::format(
          "grating: ridge '{}' and substrate '{}': a perfect conductor is built only for ridges "
          "and substrate both perfectly conducting (grating_pec.h), not mixed with another "
          "material",
          g.ridge->name(), g.substrate->name()));
    if (g.profile != GratingProfile::kLamellar)
      throw std::invalid_argument(
          "grating: a perfectly conducting grating is built for the lamellar profile only (its "
          "modal method needs rectangular grooves)");
    if (g.coated())
      throw std::invalid_argument(
          "grating: a coating on a perfectly conducting grating is not built (its modal method "
          "has empty grooves)");
    pec_ = true;  // xi = 0 included: the static basis (phi, psi) of grating_pec.h
    eps_m_ = epsilon_at(medium, xi, "gap medium");
    q0_ = xi / kSpeedOfLight;
    return;
  }
  if (xi == 0.0) {
    // The n = 0 term of a conducting grating: ridges and substrate Drude-like conductors (one
    // connected equipotential, no static TE reflection) form the Dirichlet problem of the
    // potential, conductor_lamellar_static (grating_pec.h), in the potential basis of the
    // dielectric static path. Every other static conductor is not built.
    const StaticClass kr = g.ridge->static_limit().kind, ks = g.substrate->static_limit().kind;
    const bool cr = kr != StaticClass::kDielectric, cs = ks != StaticClass::kDielectric;
    const bool cc = g.coated() && g.coating->static_limit().is_conductor();
    if (cr || cs || cc) {
      if (kr == StaticClass::kPlasmaConductor || ks == StaticClass::kPlasmaConductor ||
          (cc && g.coating->static_limit().kind == StaticClass::kPlasmaConductor))
        throw std::invalid_argument(fmt::format(
            "grating: ridge '{}' / substrate '{}'{}: a plasma-model metal screens a static "
            "magnetic field (nonzero static TE reflection); the n = 0 term of a plasma-model "
            "grating is not built (use a Drude metal, or temperature = \"0 K\")",
            g.ridge->name(), g.substrate->name(),
            g.coated() ? fmt::format(" / coating '{}'", g.coating->name()) : std::string()));
      if (!(kr == StaticClass::kDrudeConductor && ks == StaticClass::kDrudeConductor) ||
          g.coated() || g.profile != GratingProfile::kLamellar)
        throw std::invalid_argument(fmt::format(
            "grating: ridge '{}' on substrate '{}'{}: the static (n = 0) term of a conducting "
            "grating is built only for lamellar Drude ridges on a Drude substrate without a "
            "coating (an equipotential conductor, grating_pec.h); this mix is not built (use "
            "temperature = \"0 K\", which needs no xi = 0 term)",
            g.ridge->name(), g.substrate->name(),
            g.coated() ? fmt::format(" coated with '{}'", g.coating->name()) : std::string()));
      conductor_static_ = true;
      eps_m_ = epsilon_at(medium, xi, "gap medium");
      return;
    }
  }
  eps_m_ = epsilon_at(medium, xi, "gap medium");
  eps_r_ = epsilon_at(*g.ridge, xi, "ridge material");
  eps_s_ = epsilon_at(*g.substrate, xi, "substrate");
  q0_ = xi / kSpeedOfLight;
  q_ = q0_ * g.period / (2.0 * kPi);
  // At xi > 0 every eps is capped at kEpsCap (one consistent medium of eps = 1e9 in both
  // polarisations): Li's inverse rule inverts [[1/eps]], whose metal part 1/eps falls below the
  // vacuum part's rounding as eps -> 1e16 (Drude gold at xi ~ 1e3 rad/s, reached by the T = 0
  // rule's left probes: negative gamma^2). Beyond the cap a TM reflection changes by O(1/eps)
  // (Fresnel r_TM = 1 - O(1/eps)) and the TE reflection, nonzero only for k < q0 sqrt(eps)
  // (q0^2 eps = (omega_p/c)^2 xi/(xi + gamma) for Drude), loses a region that is already
  // below 0.07/L for gold at L = 200 nm; gold reaches the cap below xi = 3.5e9 rad/s, which
  // weighs < 1e-5 of E at T = 0 (derived; README "Gratings").
  if (xi > 0.0) {
    eps_m_ = std::min(eps_m_, kEpsCap);
    eps_r_ = std::min(eps_r_, kEpsCap);
    eps_s_ = std::min(eps_s_, kEpsCap);
  }
  // Piecewise-constant eps per layer: gap medium, ridge and coating segments (grating_coating.h).
  eps_c_ = g.coated() ? epsilon_at(*g.coating, xi, "coating") : eps_m_;
  if (xi > 0.0) eps_c_ = std::min(eps_c_, kEpsCap);
  for (const GratingLayer& gl : grating_layers(g)) {
    Layer l;
    l.thickness = gl.thickness;
    l.ee = segment_toeplitz(eps_m_, eps_r_, eps_c_, gl.segments, m_);
    l.ai = segment_toeplitz(1.0 / eps_m_, 1.0 / eps_r_, 1.0 / eps_c_, gl.segments, m_).inverse();
    l.ai = 0.5 * (l.ai + l.ai.transpose()).eval();
    l.ee_llt.compute(l.ee);
    const Eigen::LLT<MatrixXd> ai_llt(l.ai);
    if (ai_llt.info() != Eigen::Success)
      throw std::runtime_error(fmt::format(
          "grating: the inverse Toeplitz matrix of 1/eps (ridge {:g}, groove {:g}) is not "
          "positive definite in double precision",
          eps_r_, eps_m_));
    l.ai_l = ai_llt.matrixL();
    if (l.ee_llt.info() != Eigen::Success)
      throw std::runtime_error(fmt::format(
          "grating: the Toeplitz matrix of eps (ridge {:g}, groove {:g}) is not positive "
          "definite in double precision",
          eps_r_, eps_m_));
    layers_.push_back(std::move(l));
  }
}

Eigen::VectorXd GratingAtFrequency::scaled_orders(double kx) const {
  const double G = 2.0 * kPi / g_.period;
  // Lengths in units of 1/G at xi > 0 (header); SI (1/m) at xi = 0.
  const double unit = xi_ > 0.0 ? 1.0 / G : 1.0;
  VectorXd k(m_);
  for (int i = 0; i < m_; ++i) k[i] = (kx + (i - n_) * G) * unit;
  return k;
}

GratingAtFrequency::Line GratingAtFrequency::line(double kx) const {
  // Conical decoupling (header of Line, derived). Each M x M problem is symmetric: TE directly;
  // TM with Ai = A A^T as (A^T T A) y = gamma^2 y, zeta = A y, T = K Ee^-1 K + q^2 = G^T G + q^2,
  // G = C^-1 K (Gram form as in reflect_coupled); xi = 0 generalized symmetric (S, Ee).
  // Lengths in units of 1/G (G = 2 pi / period) and q = xi/(c G): eps enters as q^2 Ee, finite
  // as xi -> 0 for a Drude metal, and no operator mixes sizes (k/q)^2 and 1 (header).
  Line out;
  out.kx = kx;
  if (pec_ || conductor_static_) return out;  // no layer modes: grating_pec.h is analytic
  const VectorXd k = scaled_orders(kx);
  const auto K = k.asDiagonal();
  const double q2 = q_ * q_;
  for (const Layer& ly : layers_) {
    Line::LayerModes lm;
    if (xi_ > 0.0) {
      MatrixXd te = q2 * ly.ee;
      te.diagonal() += k.array().square().matrix();
      Eigen::SelfAdjointEigenSolver<MatrixXd> es_te(te);
      const MatrixXd Gk = ly.ee_llt.matrixL().solve(MatrixXd(K));  // C^-1 K
      MatrixXd T = Gk.transpose() * Gk;
      T.diagonal().array() += q2;
      const MatrixXd C = ly.ai_l.transpose() * T * ly.ai_l;
      Eigen::SelfAdjointEigenSolver<MatrixXd> es_tm(0.5 * (C + C.transpose()));
      if (es_te.info() != Eigen::Success || es_tm.info() != Eigen::Success)
        throw std::runtime_error("grating: the layer eigenproblem did not converge");
      lm.g2_te = es_te.eigenvalues();
      lm.g2_tm = es_tm.eigenvalues();
      // Both operators are >= q^2 min(eps) (Ee >= eps_min, Ai = [[1/eps]]^-1 >= eps_min;
      // derived), a bound of size q^2 ~ 1e-14 at xi = 1e9 rad/s that rounding of the largest
      // eigenvalue (~ N^2) can push below zero where some k_n = 0: clamp to the bound, and fail
      // only below -1e-10 of the largest (not rounding).
      const double floor = q2 * std::min(eps_r_, eps_m_);
      for (VectorXd* g2 : {&lm.g2_te, &lm.g2_tm}) {
        const double big = g2->cwiseAbs().maxCoeff();
        if (!(g2->minCoeff() > -1e-10 * big))
          throw std::runtime_error(
              fmt::format("grating: layer mode gamma^2 = {} (largest {}, units G^2) is not "
                          "positive at xi = {} rad/s, k_x = {} 1/m",
                          g2->minCoeff(), big, xi_, kx));
        *g2 = g2->cwiseMax(floor);
      }
      lm.phi = es_te.eigenvectors();
      lm.zeta = ly.ai_l * es_tm.eigenvectors();
      lm.tm_top = ly.ee * lm.phi;                                       // Ee phi
      lm.tm_bot = ly.ee_llt.matrixL().transpose().solve(Gk * lm.zeta);  // C^-T C^-1 K zeta
    } else {
      const MatrixXd S = K * ly.ai * K;
      Eigen::GeneralizedSelfAdjointEigenSolver<MatrixXd> es(S, ly.ee);
      if (es.info() != Eigen::Success)
        throw std::runtime_error("grating: the static layer eigenproblem did not converge");
      lm.g2_tm = es.eigenvalues().cwiseMax(0.0);
      lm.zeta = es.eigenvectors();
      lm.tm_top = ly.ee * lm.zeta;
    }
    out.layers.push_back(std::move(lm));
  }
  return out;
}

Eigen::MatrixXd GratingAtFrequency::reflect(const Line& line, double ky, int lo, int hi) const {
  if (hi < 0) hi = m_ - 1;
  if (lo < 0 || lo > hi || hi >= m_)
    throw std::invalid_argument(
        fmt::format("grating: order block {}..{} outside 0..{}", lo, hi, m_ - 1));
  if (pec_) return pec_reflect(line.kx, ky, lo, hi);
  if (conductor_static_) return conductor_reflect(line.kx, ky, lo, hi);
  return order_block(reflect(line, ky), m_, lo, hi);
}

Eigen::MatrixXd order_block(const Eigen::MatrixXd& full, int m, int lo, int hi) {
  if (lo == 0 && hi == m - 1) return full;
  const int na = hi - lo + 1, nb = static_cast<int>(full.rows()) / m;
  MatrixXd r(nb * na, nb * na);
  for (int a = 0; a < nb; ++a)
    for (int b = 0; b < nb; ++b)
      r.block(a * na, b * na, na, na) = full.block(a * m + lo, b * m + lo, na, na);
  return r;
}

Eigen::VectorXd order_block(const Eigen::VectorXd& full, int m, int lo, int hi) {
  if (lo == 0 && hi == m - 1) return full;
  const int na = hi - lo + 1, nb = static_cast<int>(full.size()) / m;
  VectorXd r(nb * na);
  for (int a = 0; a < nb; ++a) r.segment(a * na, na) = full.segment(a * m + lo, na);
  return r;
}

Eigen::MatrixXd GratingAtFrequency::reflect(const Line& line, double ky) const {
  if (pec_) return pec_reflect(line.kx, ky);
  if (conductor_static_) return conductor_reflect(line.kx, ky);
  const double unit = xi_ > 0.0 ? 1.0 / (2.0 * kPi / g_.period) : 1.0;
  const VectorXd k = scaled_orders(line.kx);
  const double kyn = ky * unit, ky2 = kyn * kyn;
  const int m = m_;
  if (xi_ > 0.0) {
    // Balanced basis (derived; header "Balanced basis"): per order n the tangential fields are
    // split along u = (-k_y, k_n)/k_t (TE) and v = (k_n, k_y)/k_t (TM), e' = (e.u, e.v) and
    // h' = (h~.u / Y_TE, h~.v / Y_TM) with the gap medium's admittances Y_TE = kappa,
    // Y_TM = q^2 eps_m / kappa (units 1/G). The gap then has V' = 1, and every entry of W', V'
    // below is a product or a same-sign sum (no cancellation between TE and TM sizes).
    const double q2 = q_ * q_;
    VectorXd ux(m), uy(m), vx(m), vy(m), kt(m), kap(m);
    for (int n = 0; n < m; ++n) {
      kt[n] = std::hypot(k[n], kyn);
      ux[n] = 0.0, uy[n] = 1.0, vx[n] = 1.0, vy[n] = 0.0;  // k_t = 0: any pair (planar.h)
      if (kt[n] > 0.0) {
        ux[n] = -kyn / kt[n];
        uy[n] = k[n] / kt[n];
        vx[n] = k[n] / kt[n];
        vy[n] = kyn / kt[n];
      }
      kap[n] = std::sqrt(kt[n] * kt[n] + q2 * eps_m_);
    }
    // Substrate: diagonal admittance kappa_s / kappa (TE), eps_s kappa / (eps_m kappa_s) (TM).
    MatrixXd y = MatrixXd::Zero(2 * m, 2 * m);
    for (int n = 0; n < m; ++n) {
      const double ks = std::sqrt(kt[n] * kt[n] + q2 * eps_s_);
      y(n, n) = ks / kap[n];
      y(m + n, m + n) = eps_s_ * kap[n] / (eps_m_ * ks);
    }
    for (int i = static_cast<int>(layers_.size()) - 1; i >= 0; --i) {
      const Line::LayerModes& lm = line.layers[i];
      Modes md;
      md.lambda.resize(2 * m);
      md.lambda.head(m) = (lm.g2_te.array() + ky2).sqrt();
      md.lambda.tail(m) = (lm.g2_tm.array() + ky2).sqrt();
      md.w.resize(2 * m, 2 * m);
      md.v.resize(2 * m, 2 * m);
      for (int j = 0; j < m; ++j) {
        const double lte = md.lambda[j], ltm = md.lambda[m + j], g2 = lm.g2_te[j];
        for (int n = 0; n < m; ++n) {
          // TE mode (E_x = 0): e = (0, phi), h~ = (-k_y K phi, gamma^2 phi) / lambda, and
          // h~.v = v_y q^2 (Ee phi)_n / lambda ((K^2 + q^2 Ee) phi = gamma^2 phi).
          const double ph = lm.phi(n, j);
          md.w(n, j) = uy[n] * ph;
          md.w(m + n, j) = vy[n] * ph;
          md.v(n, j) = (-ux[n] * kyn * k[n] + uy[n] * g2) * ph / (lte * kap[n]);
          md.v(m + n, j) = vy[n] * lm.tm_top(n, j) * kap[n] / (lte * eps_m_);
          // TM mode (H_x = 0), column scaled by q^2: h~ = q^2 (zeta, 0),
          // e = ((K Ee^-1 K + q^2) zeta, k_y Ee^-1 K zeta) / lambda, whose e.u = u_x q^2 zeta /
          // lambda (the K Ee^-1 K parts cancel exactly: u_x k_n + u_y k_y = 0).
          const double ze = lm.zeta(n, j);
          md.w(n, m + j) = ux[n] * q2 * ze / ltm;
          md.w(m + n, m + j) = (kt[n] * lm.tm_bot(n, j) + vx[n] * q2 * ze) / ltm;
          md.v(n, m + j) = q2 * ux[n] * ze / kap[n];
          md.v(m + n, m + j) = vx[n] * ze * kap[n] / eps_m_;
        }
      }
      y = admittance_through(md, layers_[i].thickness / unit, y);
    }
    const MatrixXd rb = reflection_from(MatrixXd::Identity(2 * m, 2 * m), y);
    // Back to (E_x, E_y): R = U R' U^T, U the per-order rotation (u, v) -> (x, y).
    const auto Ux = ux.asDiagonal(), Uy = uy.asDiagonal(), Vx = vx.asDiagonal(),
               Vy = vy.asDiagonal();
    const MatrixXd ruu = rb.topLeftCorner(m, m), ruv = rb.topRightCorner(m, m),
                   rvu = rb.bottomLeftCorner(m, m), rvv = rb.bottomRightCorner(m, m);
    // Rows: x = u_x (u-part) + v_x (v-part); first the left factor, then the right.
    const MatrixXd lx_u = Ux * ruu + Vx * rvu, lx_v = Ux * ruv + Vx * rvv;
    const MatrixXd ly_u = Uy * ruu + Vy * rvu, ly_v = Uy * ruv + Vy * rvv;
    MatrixXd r(2 * m, 2 * m);
    r.topLeftCorner(m, m) = lx_u * Ux + lx_v * Vx;
    r.topRightCorner(m, m) = lx_u * Uy + lx_v * Vy;
    r.bottomLeftCorner(m, m) = ly_u * Ux + ly_v * Vx;
    r.bottomRightCorner(m, m) = ly_u * Uy + ly_v * Vy;
    return r;
  }
  const Modes top = homogeneous_static(k, kyn, eps_m_);
  MatrixXd y = homogeneous_static(k, kyn, eps_s_).v;
  for (int i = static_cast<int>(layers_.size()) - 1; i >= 0; --i) {
    const Line::LayerModes& lm = line.layers[i];
    Modes md;
    md.lambda = (lm.g2_tm.array() + ky2).sqrt();
    md.w = lm.zeta;
    md.v = -lm.tm_top * md.lambda.asDiagonal();
    y = admittance_through(md, layers_[i].thickness / unit, y);
  }
  return reflection_from(top.v, y);
}

Eigen::MatrixXd GratingAtFrequency::pec_reflect(double kx, double ky, int lo, int hi) const {
  return pec_lamellar_reflection({g_.period, g_.filling, g_.depth}, xi_, eps_m_, n_, kx, ky, -1, lo,
                                 hi);
}

Eigen::MatrixXd GratingAtFrequency::conductor_reflect(double kx, double ky, int lo, int hi) const {
  return conductor_lamellar_static({g_.period, g_.filling, g_.depth}, eps_m_, n_, kx, ky, lo, hi);
}

Eigen::MatrixXd GratingAtFrequency::reflect_coupled(double kx, double ky) const {
  if (pec_) return pec_reflect(kx, ky);
  if (conductor_static_) return conductor_reflect(kx, ky);
  // The former formulation, kept as the independent reference: lengths in units of c/xi.
  const double unit = xi_ > 0.0 ? 1.0 / q0_ : 1.0;
  const VectorXd k = xi_ > 0.0 ? VectorXd(scaled_orders(kx) / q_) : scaled_orders(kx);
  const double kyn = ky * unit;
  const int dim = this->dim();
  if (xi_ > 0.0) {
    const Modes top = homogeneous_dynamic(k, kyn, eps_m_);
    MatrixXd y = homogeneous_dynamic(k, kyn, eps_s_).v;  // substrate: down-going only
    // Layers from the bottom up (layers_ is top first).
    for (auto it = layers_.rbegin(); it != layers_.rend(); ++it) {
      const Layer& ly = *it;
      // Symmetric form (derived): with h~ = (-h_y, h_x), d_z e = P~ h~, d_z h~ = Q~ e,
      //   P~ = [K; k_y] Ee^-1 [K, k_y] + 1 (SPD),  Q~ = [[k_y^2 + Ai, -k_y K], [-k_y K, K^2 + Ee]]
      // (symmetric), so P~ Q~ w = lambda^2 w is, with P~ = L L^T and w = L z, the symmetric
      // problem (L^T Q~ L) z = lambda^2 z (no defective degenerate pairs).
      const auto K = k.asDiagonal();
      const MatrixXd id = MatrixXd::Identity(m_, m_);
      MatrixXd P(dim, dim), Q(dim, dim);
      // P~ - 1 = B Ee^-1 B^T = (B C^-T)(B C^-T)^T with Ee = C C^T: a Gram matrix, positive
      // semi-definite also in rounding (high-contrast Ee, e.g. metals at small xi).
      MatrixXd B(dim, m_);
      B << MatrixXd(K), kyn * id;
      const MatrixXd Gt = ly.ee_llt.matrixL().solve(B.transpose());  // C^-1 B^T
      P = Gt.transpose() * Gt + MatrixXd::Identity(dim, dim);
      MatrixXd kk = k.array().square().matrix().asDiagonal();
      Q << kyn * kyn * id + ly.ai, -kyn * MatrixXd(K), -kyn * MatrixXd(K), kk + ly.ee;
      const Eigen::LLT<MatrixXd> llt(P);
      if (llt.info() != Eigen::Success)
        throw std::runtime_error("grating: the layer operator P is not positive definite");
      const MatrixXd L = llt.matrixL();
      const MatrixXd C = L.transpose() * Q * L;
      Eigen::SelfAdjointEigenSolver<MatrixXd> es(0.5 * (C + C.transpose()));
      if (es.info() != Eigen::Success)
        throw std::runtime_error("grating: the layer eigenproblem did not converge");
      Modes md;
      const VectorXd ev = es.eigenvalues();
      if (!(ev.minCoeff() > 0.0))
        throw std::runtime_error(
            fmt::format("grating: layer mode lambda^2 = {} is not positive", ev.minCoeff()));
      md.lambda = ev.cwiseSqrt();
      md.w = L * es.eigenvectors();
      md.v = Q * md.w * md.lambda.cwiseInverse().asDiagonal();
      y = admittance_through(md, ly.thickness / unit, y);
    }
    return reflection_from(top.v, y);
  }
  // xi = 0: electrostatic TM (header).
  const Modes top = homogeneous_static(k, kyn, eps_m_);
  MatrixXd y = homogeneous_static(k, kyn, eps_s_).v;
  for (auto it = layers_.rbegin(); it != layers_.rend(); ++it) {
    const Layer& ly = *it;
    const auto K = k.asDiagonal();
    const MatrixXd S = K * ly.ai * K + kyn * kyn * ly.ee;
    Eigen::GeneralizedSelfAdjointEigenSolver<MatrixXd> es(S, ly.ee);
    if (es.info() != Eigen::Success)
      throw std::runtime_error("grating: the static layer eigenproblem did not converge");
    Modes md;
    md.lambda = es.eigenvalues().cwiseMax(0.0).cwiseSqrt();
    md.w = es.eigenvectors();
    md.v = -ly.ee * md.w * md.lambda.asDiagonal();
    y = admittance_through(md, ly.thickness / unit, y);
  }
  return reflection_from(top.v, y);
}

Eigen::MatrixXd planar_reflection_in_orders(const PlanarAtFrequency& p, double xi, double period,
                                            int orders, double kx, double ky, bool static_pair) {
  const int m = 2 * orders + 1;
  const double G = 2.0 * kPi / period;
  if (xi == 0.0) {
    MatrixXd r = MatrixXd::Zero(static_pair ? 2 * m : m, static_pair ? 2 * m : m);
    for (int i = 0; i < m; ++i) {
      const double kn = kx + (i - orders) * G;
      const Reflection rf = p.reflect(std::hypot(kn, ky));
      r(i, i) = -rf.tm;
      if (static_pair) r(m + i, m + i) = -rf.te;  // psi (grating_pec.h)
    }
    return r;
  }
  MatrixXd r = MatrixXd::Zero(2 * m, 2 * m);
  for (int i = 0; i < m; ++i) {
    const double kn = kx + (i - orders) * G;
    const double kt = std::hypot(kn, ky);
    const Reflection rf = p.reflect(kt);
    double ux = 0.0, uy = 1.0, vx = 1.0, vy = 0.0;  // k = 0: r_TE = -r_TM, any directions
    if (kt > 0.0) {
      ux = -ky / kt;
      uy = kn / kt;
      vx = kn / kt;
      vy = ky / kt;
    }
    r(i, i) = rf.te * ux * ux - rf.tm * vx * vx;
    r(i, m + i) = rf.te * ux * uy - rf.tm * vx * vy;
    r(m + i, i) = rf.te * uy * ux - rf.tm * vy * vx;
    r(m + i, m + i) = rf.te * uy * uy - rf.tm * vy * vy;
  }
  return r;
}

Eigen::VectorXd orders_decay(double xi, double eps_m, double period, int orders, double kx,
                             double ky, bool static_pair) {
  const int m = 2 * orders + 1;
  const double G = 2.0 * kPi / period;
  const double q2 = eps_m * (xi / kSpeedOfLight) * (xi / kSpeedOfLight);
  const bool two = xi > 0.0 || static_pair;
  VectorXd kap(two ? 2 * m : m);
  for (int i = 0; i < m; ++i) {
    const double kn = kx + (i - orders) * G;
    kap[i] = std::sqrt(kn * kn + ky * ky + q2);
    if (two) kap[m + i] = kap[i];
  }
  return kap;
}

}  // namespace roundtrip
