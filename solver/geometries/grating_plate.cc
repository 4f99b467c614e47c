// Grating-plate round trip per unit area (formulas, conventions and sources in grating_plate.h).
#include "solver/geometries/grating_plate.h"

#include <fmt/format.h>

#include <array>
#include <cmath>
#include <exception>
#include <map>
#include <stdexcept>
#include <utility>
#include <vector>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/plate_plate.h"
#include "solver/guards.h"
#include "solver/materials/models.h"

namespace roundtrip {
namespace {

using Eigen::MatrixXd;
using Eigen::VectorXd;
using Triple = std::array<double, 3>;

constexpr int kMaxXLevel = 5;  // n_x = 4 * 3^5 = 972 midpoints on [0, G/2]
constexpr int kMaxTLevel = 7;  // h = 0.5 / 2^7
constexpr int kX0 = 4;
constexpr double kH0 = 0.5;

thread_local int g_last_nodes = 0;

long pow3(int a) {
  long p = 1;
  for (int i = 0; i < a; ++i) p *= 3;
  return p;
}

// ln det(1 - M), d/dL, d2/dL2 at one Bloch vector (header).
Triple round_trip(const MatrixXd& rg, const MatrixXd& rp, const VectorXd& kap, double gap, int n) {
  const VectorXd d = (-kap * gap).array().exp();
  const MatrixXd bm = rp * d.asDiagonal();  // R_p D
  const MatrixXd a = rg * d.asDiagonal();   // R_g D
  const MatrixXd m = a * bm;
  const int dim = static_cast<int>(m.rows());
  const MatrixXd one_m = MatrixXd::Identity(dim, dim) - m;
  const auto lu = one_m.partialPivLu();
  const double det = lu.determinant();
  if (!(det > 0.0) || !std::isfinite(det))
    throw std::runtime_error(
        fmt::format("grating-plate: det(1 - M) = {} is not positive at a Bloch vector", det));
  // ln det(1 - M) = -sum_k Tr(M^k)/k (standard) when M is small: ln(det) would keep only the
  // rounding of 1 - |M| (high frequencies, large gaps).
  Triple out{0.0, 0.0, 0.0};
  const double norm = m.norm();
  if (norm < 0.1) {
    MatrixXd pk = m;
    for (int k = 1; k < 200; ++k) {
      const double term = pk.trace() / k;
      out[0] -= term;
      if (std::pow(norm, k + 1) / (k + 1) <= 1e-17 * std::abs(out[0])) break;
      pk = pk * m;
    }
  } else {
    out[0] = std::log(det);
  }
  if (n < 2) return out;
  const MatrixXd rgk = rg * kap.asDiagonal();  // R_g K
  const MatrixXd m1 = -(rgk * d.asDiagonal() * bm + m * kap.asDiagonal());
  const MatrixXd x1 = lu.solve(m1);
  out[1] = -x1.trace();
  if (n < 3) return out;
  const VectorXd k2 = kap.array().square();
  const MatrixXd m2 = rg * k2.asDiagonal() * d.asDiagonal() * bm +
                      2.0 * rgk * d.asDiagonal() * rp * kap.asDiagonal() * d.asDiagonal() +
                      m * k2.asDiagonal();
  out[2] = -lu.solve(m2).trace() - (x1 * x1).trace();
  return out;
}

}  // namespace

GratingPlate::GratingPlate(LamellarGrating grating, PlanarPtr plate, MaterialPtr medium,
                           GratingPlateOptions opts)
    : g_(std::move(grating)),
      plate_(std::move(plate)),
      medium_(medium ? std::move(medium) : make_vacuum()),
      opts_(opts) {
  if (!plate_) throw std::invalid_argument("grating-plate: the plate must be given");
  if (!(g_.period > 0.0) || !std::isfinite(g_.period))
    throw std::invalid_argument(fmt::format("grating-plate: period = {} m must be > 0", g_.period));
  if (!(g_.filling >= 0.0 && g_.filling <= 1.0))
    throw std::invalid_argument(
        fmt::format("grating-plate: filling = {} must lie in [0, 1]", g_.filling));
  if (!(g_.depth >= 0.0) || !std::isfinite(g_.depth))
    throw std::invalid_argument(fmt::format("grating-plate: depth = {} m must be >= 0", g_.depth));
  if (!g_.ridge || !g_.substrate)
    throw std::invalid_argument("grating-plate: ridge and substrate materials must be given");
  if (medium_->static_limit().is_conductor())
    throw std::invalid_argument("grating-plate: the gap medium must be a dielectric");
  if (opts_.orders < 0 || opts_.orders > 500)
    throw std::invalid_argument(
        fmt::format("grating-plate: orders = {} must lie in 0..500", opts_.orders));
  if (!(opts_.bloch_rel_tol >= 1e-12 && opts_.bloch_rel_tol <= 1e-2))
    throw std::invalid_argument(fmt::format(
        "grating-plate: bloch_rel_tol = {} must lie in [1e-12, 1e-2]", opts_.bloch_rel_tol));
}

int GratingPlate::orders_at(double gap) const {
  if (opts_.orders > 0) return opts_.orders;
  // Automatic N (a model, not a convergence test): the orders |n| G > ln(1e6)/(2L) are damped
  // by e^{-2 kappa_n L} < 1e-6 on the round trip; at least 8 for the grating's own (algebraic,
  // Li 1996) convergence; at most 100.
  const double G = 2.0 * kPi / g_.period;
  const double n = std::ceil(std::log(1e6) / (2.0 * G * gap));
  return static_cast<int>(std::clamp(n, 8.0, 100.0));
}

std::string GratingPlate::unverified_truncation(double gap) const {
  return fmt::format(
      "diffraction orders -{0}..{0} {1}, not a convergence test: the truncation error is not "
      "verified against rel_tol (measured ~7e-4 of E at N = 8, 400 nm period, 200 nm gap; "
      "the error falls like N^-1.7); compare runs with larger numerics.orders",
      orders_at(gap), opts_.orders > 0 ? "as set" : "from a model");
}

int GratingPlate::last_node_count() { return g_last_nodes; }

Spectral GratingPlate::at_frequency(double xi, double gap, DerivativeOrder order) const {
  return compute(xi, gap, order, opts_.bloch_rel_tol);
}

Spectral GratingPlate::at_frequency_within(double xi, double gap, DerivativeOrder order,
                                           double rel_tol) const {
  return compute(xi, gap, order, std::max(opts_.bloch_rel_tol, 0.3 * rel_tol));
}

Spectral GratingPlate::compute(double xi, double gap, DerivativeOrder order, double tol) const {
  if (!(gap > 0.0) || !std::isfinite(gap))
    throw std::invalid_argument(fmt::format("grating-plate: gap = {} m must be > 0", gap));
  if (!(xi >= 0.0) || !std::isfinite(xi))
    throw std::invalid_argument(fmt::format("grating-plate: xi = {} rad/s must be >= 0", xi));
  const int n_comp = 1 + static_cast<int>(order);
  const int N = orders_at(gap);
  const GratingAtFrequency gf(g_, xi, *medium_, N);
  const auto pat = plate_->at(xi, *medium_);
  const double eps_m = xi > 0.0 ? medium_->epsilon(xi) : medium_->static_limit().static_eps;
  const double G = 2.0 * kPi / g_.period;
  const double half_bz = 0.5 * G;
  // k_y = sinh(t)/(2L) up to y = 2 L k_y where e^{-y} < 1e-3 tol (every order decays at least
  // as fast as e^{-2 k_y L}).
  const double y_max = std::log(1e3 / tol) + 10.0;
  const double q2 = eps_m * (xi / kSpeedOfLight) * (xi / kSpeedOfLight);
  const long x_fine = pow3(kMaxXLevel);
  const long t_fine = 1L << kMaxTLevel;

  std::map<std::pair<long, long>, Triple> memo;
  // Integrand at finest-grid keys: x key p (odd multiples: k_x = p/(2 n_fine) G/2), t key q.
  const double nfine = kX0 * static_cast<double>(x_fine);
  auto node = [&](long p, long q) {
    // k_x = (G/2) w(u), w(u) = u - sin(2 pi u)/(2 pi), u = p/(2 n_fine) (Sidi's sin^2
    // transformation, Sidi, Numer. Math. 9 (1993), from memory): w' vanishes at both ends, so the
    // kink of the n = 0 order at k = 0 (xi = 0: |k|) is pushed to high order in u.
    const double u = static_cast<double>(p) / (2.0 * nfine);
    const double kx = half_bz * (u - std::sin(2.0 * kPi * u) / (2.0 * kPi));
    const double wu = half_bz * (1.0 - std::cos(2.0 * kPi * u));
    // k_y = a sinh(t), a = min(1/(2L), sqrt(k_x^2 + eps_m q0^2)): the n = 0 branch points
    // k_y = +-i sqrt(k_x^2 + eps_m q0^2) stay a fixed distance from the real t axis.
    const double a = std::min(0.5 / gap, std::sqrt(kx * kx + q2));
    const double t = q * (kH0 / t_fine);
    const double ky = a * std::sinh(t);
    const MatrixXd rg = gf.reflect(kx, ky);
    const MatrixXd rp = planar_reflection_in_orders(*pat, xi, g_.period, N, kx, ky);
    const VectorXd kap = orders_decay(xi, eps_m, g_.period, N, kx, ky);
    Triple v = round_trip(rg, rp, kap, gap, n_comp);
    const double jac = a * std::cosh(t) * wu;
    for (double& c : v) c *= jac;
    return v;
  };
  auto keys_of = [&](int a, int b) {
    std::vector<std::pair<long, long>> keys;
    const long nx = kX0 * pow3(a);
    const long xs = pow3(kMaxXLevel - a);
    const long ts = 1L << (kMaxTLevel - b);
    const double h = kH0 / (1 << b);
    for (long i = 0; i < nx; ++i) {
      const long p = (2 * i + 1) * xs;
      const double u = static_cast<double>(p) / (2.0 * nfine);
      const double kx = half_bz * (u - std::sin(2.0 * kPi * u) / (2.0 * kPi));
      const double a = std::min(0.5 / gap, std::sqrt(kx * kx + q2));
      const double t_max = std::asinh(y_max / (2.0 * gap * a));
      const long J = static_cast<long>(std::ceil(t_max / h));
      for (long j = 0; j <= J; ++j) keys.emplace_back(p, j * ts);
    }
    return keys;
  };
  auto ensure = [&](const std::vector<std::pair<long, long>>& keys) {
    std::vector<std::pair<long, long>> todo;
    for (const auto& k : keys)
      if (!memo.count(k)) todo.push_back(k);
    std::vector<Triple> vals(todo.size());
    std::exception_ptr err;
    constexpr std::size_t kBatch = 64;
    for (std::size_t b0 = 0; b0 < todo.size(); b0 += kBatch) {
      throw_if_cancelled();
      const std::size_t b1 = std::min(todo.size(), b0 + kBatch);
#pragma omp parallel for schedule(dynamic, 1)
      for (std::size_t i = b0; i < b1; ++i) {
        try {
          vals[i] = node(todo[i].first, todo[i].second);
        } catch (...) {
#pragma omp critical
          if (!err) err = std::current_exception();
        }
      }
      if (err) std::rethrow_exception(err);
    }
    for (std::size_t i = 0; i < todo.size(); ++i) memo[todo[i]] = vals[i];
  };
  // S(a, b) and \int |f| on the same grid; 4 = both halves in k_x and k_y; 1/(2 pi)^2.
  auto sum = [&](int a, int b, Triple& absum) {
    const auto keys = keys_of(a, b);
    ensure(keys);
    const long nx = kX0 * pow3(a);
    const double wx = 1.0 / nx;  // du; the k_x Jacobian is in the node
    const double h = kH0 / (1 << b);
    const double pref = 4.0 / (4.0 * kPi * kPi);
    Triple s{}, ab{};
    for (const auto& k : keys) {
      const double w = wx * h * (k.second == 0 ? 0.5 : 1.0) * pref;
      const Triple& v = memo.at(k);
      for (int c = 0; c < 3; ++c) {
        s[c] += w * v[c];
        ab[c] += w * std::abs(v[c]);
      }
    }
    absum = ab;
    return s;
  };
  int a = 0, b = 0;
  for (;;) {
    Triple ab0, abx, aby;
    const Triple s0 = sum(a, b, ab0), sx = sum(a + 1, b, abx), sy = sum(a, b + 1, aby);
    // Absolute floor: 1e-10 tol / L^2 (per L^c for derivative c) is 1e-10 tol of the perfect-
    // mirror scale 1/(8 pi L^2) x 8 pi; a term below it (far beyond the frequency scale, where s
    // falls like e^{-2 xi L/c} and the FMM's rounding dominates) is negligible in any sum whose
    // reflection coefficients are above ~1e-4.
    bool ok_x = true, ok_y = true;
    for (int c = 0; c < n_comp; ++c) {
      const double floor = 1e-10 * tol / (gap * gap * std::pow(gap, c));
      if (!(std::abs(sx[c] - s0[c]) <= std::max(tol * abx[c], floor))) ok_x = false;
      if (!(std::abs(sy[c] - s0[c]) <= std::max(tol * aby[c], floor))) ok_y = false;
    }
    if (ok_x && ok_y) {
      g_last_nodes = static_cast<int>(memo.size());
      // The two refinements' corrections are independent (product rule): add both.
      return {sx[0] + sy[0] - s0[0], sx[1] + sy[1] - s0[1], sx[2] + sy[2] - s0[2]};
    }
    if (!ok_x) ++a;
    if (!ok_y) ++b;
    if (a + 1 > kMaxXLevel || b + 1 > kMaxTLevel)
      throw std::runtime_error(fmt::format(
          "grating-plate: the Bloch integral did not reach {:g} at xi = {:g} rad/s, L = {:g} m "
          "({} nodes)",
          tol, xi, gap, memo.size()));
  }
}

double GratingPlate::frequency_scale(double gap) const {
  const StaticLimit m = medium_->static_limit();
  const double eps0 = m.static_eps >= 1.0 ? m.static_eps : 1.0;
  return kSpeedOfLight / (2.0 * gap * std::sqrt(eps0));
}

std::string GratingPlate::describe() const {
  return fmt::format("grating-plate: {} facing {} across {}", g_.describe(), plate_->describe(),
                     medium_->name());
}

std::optional<PfaValues> GratingPlate::pfa(double gap, const FrequencyRuleOptions& opts) const {
  const PlatePlate top(make_half_space(g_.ridge), plate_, medium_);
  const PlatePlate bottom(make_half_space(g_.substrate), plate_, medium_);
  const double f = g_.filling, h = g_.depth;
  const FrequencySum s = sum_over_frequencies(
      [&](double xi) {
        Spectral v = top.at_frequency(xi, gap, DerivativeOrder::kGradient) * f;
        v += bottom.at_frequency(xi, gap + h, DerivativeOrder::kGradient) * (1.0 - f);
        return v;
      },
      frequency_scale(gap), opts);
  return PfaValues{s.total.value, -s.total.d1, -s.total.d2};
}

std::map<std::string, double> GratingPlate::truncation(double gap) const {
  return {{"orders", static_cast<double>(orders_at(gap))}, {"bloch_rel_tol", opts_.bloch_rel_tol}};
}

}  // namespace roundtrip
