// Grating-grating round trip per unit area with a lateral offset (formulas, conventions and
// sources in grating_grating.h). The Bloch integral follows grating_plate.cc (same maps and
// nested levels) with ds/db as a fourth component.
#include "solver/geometries/grating_grating.h"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <complex>
#include <exception>
#include <stdexcept>
#include <utility>
#include <vector>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/plate_plate.h"
#include "solver/guards.h"
#include "solver/materials/models.h"
#include "solver/parallel_for.h"

namespace roundtrip {
namespace {

using Eigen::MatrixXcd;
using Eigen::MatrixXd;
using Eigen::VectorXd;
using Quad = std::array<double, 4>;  // s, ds/dL, d2s/dL2, ds/db
using cd = std::complex<double>;

constexpr int kMaxXLevel = 5;  // n_x = 4 * 3^5 midpoints on [0, G/2] (as grating_plate.cc)
constexpr int kMaxTLevel = 7;
constexpr int kX0 = 4;
constexpr double kH0 = 0.5;
// The lateral component vanishes at b = 0 and Lambda/2 (pointwise, by symmetry); its Bloch
// tolerance is relative to max(\int |ds/db|, kLateralScale G \int |s|), so that near those
// offsets it is controlled on the scale of a typical lateral force, not on rounding.
constexpr double kLateralScale = 1e-3;

long pow3(int a) {
  long p = 1;
  for (int i = 0; i < a; ++i) p *= 3;
  return p;
}

// Re ln det(1 - M), its L-derivatives (n components) and d/db at one Bloch vector (header).
Quad round_trip(const MatrixXd& r1, const MatrixXd& r2, const VectorXd& kap, const VectorXd& ord,
                double G, double b, double gap, int n) {
  const int dim = static_cast<int>(r1.rows());
  const VectorXd d = (-kap * gap).array().exp();
  Eigen::VectorXcd phi(dim);
  for (int i = 0; i < dim; ++i) phi[i] = std::polar(1.0, -ord[i] * G * b);
  const MatrixXcd x = phi.asDiagonal() * r2.cast<cd>() * phi.conjugate().asDiagonal();
  const MatrixXcd xd = x * d.asDiagonal();               // X D
  const MatrixXcd a = (r1 * d.asDiagonal()).cast<cd>();  // R_1 D
  const MatrixXcd m = a * xd;
  const MatrixXcd one_m = MatrixXcd::Identity(dim, dim) - m;
  const Eigen::PartialPivLU<MatrixXcd> lu(one_m);
  const cd det = lu.determinant();
  if (!(std::abs(det) > 0.0) || !std::isfinite(std::abs(det)))
    throw std::runtime_error(
        fmt::format("grating-grating: det(1 - M) = {}{:+}i is not usable at a Bloch vector",
                    det.real(), det.imag()));
  Quad out{0.0, 0.0, 0.0, 0.0};
  const double norm = m.norm();
  if (norm < 0.1) {
    // Re ln det(1 - M) = -Re sum_k Tr(M^k)/k (standard), kept for small M (grating_plate.cc).
    MatrixXcd pk = m;
    for (int k = 1; k < 200; ++k) {
      out[0] -= pk.trace().real() / k;
      if (std::pow(norm, k + 1) / (k + 1) <= 1e-17 * std::abs(out[0])) break;
      pk = pk * m;
    }
  } else {
    const MatrixXcd& u = lu.matrixLU();
    for (int i = 0; i < dim; ++i) out[0] += std::log(std::abs(u(i, i)));
  }
  // d/db: X' = -i G (N X - X N).
  const MatrixXcd xp = cd(0.0, -G) * (ord.asDiagonal() * x - x * ord.asDiagonal());
  out[3] = -lu.solve(a * xp * d.asDiagonal()).trace().real();
  if (n < 2) return out;
  const MatrixXcd rk = (r1 * kap.asDiagonal()).cast<cd>();  // R_1 K
  const MatrixXcd m1 = -(rk * d.asDiagonal() * xd + m * kap.asDiagonal());
  const MatrixXcd b1 = lu.solve(m1);
  out[1] = -b1.trace().real();
  if (n < 3) return out;
  const VectorXd k2 = kap.array().square();
  const MatrixXcd m2 = (r1 * k2.asDiagonal() * d.asDiagonal()).cast<cd>() * xd +
                       2.0 * rk * d.asDiagonal() * x * kap.asDiagonal() * d.asDiagonal() +
                       m * k2.asDiagonal();
  out[2] = -lu.solve(m2).trace().real() - (b1 * b1).trace().real();
  return out;
}

bool same_grating(const LamellarGrating& a, const LamellarGrating& b) {
  return a.period == b.period && a.filling == b.filling && a.depth == b.depth &&
         a.ridge == b.ridge && a.substrate == b.substrate;
}

void check_grating(const LamellarGrating& g, const char* which) {
  if (g.profile != GratingProfile::kLamellar)
    throw std::invalid_argument(fmt::format(
        "grating-grating: the {} grating's profile is not lamellar; only lamellar profiles are "
        "built (the PFA and the overlap assume rectangular ridges)",
        which));
  if (!(g.period > 0.0) || !std::isfinite(g.period))
    throw std::invalid_argument(
        fmt::format("grating-grating: {} period = {} m must be > 0", which, g.period));
  if (!(g.filling >= 0.0 && g.filling <= 1.0))
    throw std::invalid_argument(
        fmt::format("grating-grating: {} filling = {} must lie in [0, 1]", which, g.filling));
  if (!(g.depth >= 0.0) || !std::isfinite(g.depth))
    throw std::invalid_argument(
        fmt::format("grating-grating: {} depth = {} m must be >= 0", which, g.depth));
  if (!g.ridge || !g.substrate)
    throw std::invalid_argument(
        fmt::format("grating-grating: {} ridge and substrate materials must be given", which));
}

}  // namespace

GratingGrating::GratingGrating(LamellarGrating lower, LamellarGrating upper, MaterialPtr medium,
                               GratingGratingOptions opts)
    : g1_(std::move(lower)),
      g2_(std::move(upper)),
      medium_(medium ? std::move(medium) : make_vacuum()),
      opts_(opts) {
  check_grating(g1_, "lower");
  check_grating(g2_, "upper");
  if (g1_.period != g2_.period)
    throw std::invalid_argument(
        fmt::format("grating-grating: periods {} m and {} m differ (only equal periods are built)",
                    g1_.period, g2_.period));
  if (medium_->static_limit().is_conductor())
    throw std::invalid_argument("grating-grating: the gap medium must be a dielectric");
  if (opts_.orders < 0 || opts_.orders > 500)
    throw std::invalid_argument(
        fmt::format("grating-grating: orders = {} must lie in 0..500", opts_.orders));
  if (!(opts_.bloch_rel_tol >= 1e-12 && opts_.bloch_rel_tol <= 1e-2))
    throw std::invalid_argument(fmt::format(
        "grating-grating: bloch_rel_tol = {} must lie in [1e-12, 1e-2]", opts_.bloch_rel_tol));
  if (!std::isfinite(opts_.offset))
    throw std::invalid_argument("grating-grating: the offset must be finite");
}

int GratingGrating::orders_at(double gap) const {
  if (opts_.orders > 0) return opts_.orders;
  // The grating-plate model (grating_plate.cc): e^{-2 |n| G L} < 1e-6, at least 8, at most 100.
  const double G = 2.0 * kPi / g1_.period;
  const double n = std::ceil(std::log(1e6) / (2.0 * G * gap));
  return static_cast<int>(std::clamp(n, 8.0, 100.0));
}

std::string GratingGrating::unverified_truncation(double gap) const {
  return fmt::format(
      "diffraction orders -{0}..{0} {1}, not a convergence test: the truncation error is not "
      "verified against rel_tol (lamellar edges: algebraic convergence in N); compare runs with "
      "larger numerics.orders",
      orders_at(gap), opts_.orders > 0 ? "as set" : "from a model");
}

Spectral GratingGrating::at_frequency(double xi, double gap, DerivativeOrder order) const {
  return spectral(xi, gap, order, opts_.bloch_rel_tol).s;
}

Spectral GratingGrating::at_frequency_within(double xi, double gap, DerivativeOrder order,
                                             double rel_tol) const {
  return spectral(xi, gap, order, std::max(opts_.bloch_rel_tol, 0.3 * rel_tol)).s;
}

GratingGratingSpectral GratingGrating::spectral(double xi, double gap, DerivativeOrder order,
                                                double tol) const {
  if (!(gap > 0.0) || !std::isfinite(gap))
    throw std::invalid_argument(
        fmt::format("grating-grating: gap = {} m must be > 0 (the ridge tops may not touch)", gap));
  if (!(xi >= 0.0) || !std::isfinite(xi))
    throw std::invalid_argument(fmt::format("grating-grating: xi = {} rad/s must be >= 0", xi));
  const int n_comp = 1 + static_cast<int>(order);
  const int N = orders_at(gap);
  const GratingAtFrequency gf1(g1_, xi, *medium_, N);
  const bool twin = same_grating(g1_, g2_);
  std::unique_ptr<GratingAtFrequency> gf2;
  if (!twin) gf2 = std::make_unique<GratingAtFrequency>(g2_, xi, *medium_, N);
  const double eps_m = xi > 0.0 ? medium_->epsilon(xi) : medium_->static_limit().static_eps;
  const double G = 2.0 * kPi / g1_.period;
  const double half_bz = 0.5 * G;
  const double b = opts_.offset;
  const double y_max = std::log(1e3 / tol) + 10.0;
  const double q2 = eps_m * (xi / kSpeedOfLight) * (xi / kSpeedOfLight);
  const long x_fine = pow3(kMaxXLevel);
  const long t_fine = 1L << kMaxTLevel;
  // Order index of each basis entry (E_x and E_y blocks at xi > 0, the potential at xi = 0, the
  // potentials phi and psi at xi = 0 when a grating is a perfect conductor, grating_pec.h: the
  // other grating, a dielectric, then reflects psi by 0, as its static TE reflection).
  const int m = 2 * N + 1;
  const bool pair = gf1.static_pair() || (gf2 && gf2->static_pair());
  const auto in_basis = [&](MatrixXd r) {
    if (xi > 0.0 || !pair || r.rows() == 2 * m) return r;
    MatrixXd p = MatrixXd::Zero(2 * m, 2 * m);
    p.topLeftCorner(m, m) = r;
    return p;
  };
  VectorXd ord(xi > 0.0 || pair ? 2 * m : m);
  for (int i = 0; i < ord.size(); ++i) ord[i] = (i % m) - N;

  std::map<std::pair<long, long>, Quad> memo;
  const double nfine = kX0 * static_cast<double>(x_fine);
  auto kx_of = [&](double u) { return half_bz * (u - std::sin(2.0 * kPi * u) / (2.0 * kPi)); };
  // Layer modes per k_x line (GratingAtFrequency::Line, the conical decoupling), kept only for
  // the lines of the batch being evaluated: [0] lower grating, [1] upper (unless twin).
  using Lines = std::array<GratingAtFrequency::Line, 2>;
  auto node = [&](long p, long q, const Lines& lines) {
    const double u = static_cast<double>(p) / (2.0 * nfine);
    const double kx = kx_of(u);
    const double wu = half_bz * (1.0 - std::cos(2.0 * kPi * u));
    const double a = std::min(0.5 / gap, std::sqrt(kx * kx + q2));
    const double t = q * (kH0 / t_fine);
    const double ky = a * std::sinh(t);
    const MatrixXd r1 = in_basis(gf1.reflect(lines[0], ky));
    const MatrixXd r2 = twin ? r1 : in_basis(gf2->reflect(lines[1], ky));
    const VectorXd kap = orders_decay(xi, eps_m, g1_.period, N, kx, ky, pair);
    Quad v = round_trip(r1, r2, kap, ord, G, b, gap, n_comp);
    const double jac = a * std::cosh(t) * wu;
    for (double& c : v) c *= jac;
    return v;
  };
  auto keys_of = [&](int ax, int bt) {
    std::vector<std::pair<long, long>> keys;
    const long nx = kX0 * pow3(ax);
    const long xs = pow3(kMaxXLevel - ax);
    const long ts = 1L << (kMaxTLevel - bt);
    const double h = kH0 / (1 << bt);
    for (long i = 0; i < nx; ++i) {
      const long p = (2 * i + 1) * xs;
      const double kx = kx_of(static_cast<double>(p) / (2.0 * nfine));
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
    std::sort(todo.begin(), todo.end());
    std::vector<Quad> vals(todo.size());
    // Batches of whole k_x lines as grating_plate.cc: the lines' modes first, then their nodes.
    constexpr std::size_t kLinesPerBatch = 8;
    const int n_g = twin ? 1 : 2;
    std::size_t b0 = 0;
    while (b0 < todo.size()) {
      throw_if_cancelled();
      std::vector<long> ps;
      std::size_t b1 = b0;
      while (b1 < todo.size()) {
        if (ps.empty() || ps.back() != todo[b1].first) {
          if (ps.size() == kLinesPerBatch) break;
          ps.push_back(todo[b1].first);
        }
        ++b1;
      }
      std::vector<Lines> lines(ps.size());
      const long n_line_tasks = static_cast<long>(ps.size()) * n_g;
      parallel_for(0, n_line_tasks, [&](long t) {
        const double kx = kx_of(static_cast<double>(ps[t / n_g]) / (2.0 * nfine));
        lines[t / n_g][t % n_g] = (t % n_g == 0 ? gf1 : *gf2).line(kx);
      });
      parallel_for(static_cast<long>(b0), static_cast<long>(b1), [&](long i) {
        const std::size_t li = std::lower_bound(ps.begin(), ps.end(), todo[i].first) - ps.begin();
        vals[i] = node(todo[i].first, todo[i].second, lines[li]);
      });
      b0 = b1;
    }
    for (std::size_t i = 0; i < todo.size(); ++i) memo[todo[i]] = vals[i];
  };
  auto sum = [&](int ax, int bt, Quad& absum) {
    const auto keys = keys_of(ax, bt);
    ensure(keys);
    const long nx = kX0 * pow3(ax);
    const double wx = 1.0 / nx;
    const double h = kH0 / (1 << bt);
    const double pref = 4.0 / (4.0 * kPi * kPi);  // both halves in k_x and k_y; 1/(2 pi)^2
    Quad s{}, ab{};
    for (const auto& k : keys) {
      const double w = wx * h * (k.second == 0 ? 0.5 : 1.0) * pref;
      const Quad& v = memo.at(k);
      for (int c = 0; c < 4; ++c) {
        s[c] += w * v[c];
        ab[c] += w * std::abs(v[c]);
      }
    }
    absum = ab;
    return s;
  };
  int ax = 0, bt = 0;
  for (;;) {
    Quad ab0, abx, aby;
    const Quad s0 = sum(ax, bt, ab0), sx = sum(ax + 1, bt, abx), sy = sum(ax, bt + 1, aby);
    bool ok_x = true, ok_y = true;
    // Absolute floor as grating_plate.cc: 1e-10 tol / L^2 per L^c (and G / L^2 for d/db).
    const auto check = [&](int c, double scale_x, double scale_y, double floor) {
      if (!(std::abs(sx[c] - s0[c]) <= std::max(tol * scale_x, floor))) ok_x = false;
      if (!(std::abs(sy[c] - s0[c]) <= std::max(tol * scale_y, floor))) ok_y = false;
    };
    for (int c = 0; c < n_comp; ++c)
      check(c, abx[c], aby[c], 1e-10 * tol / (gap * gap * std::pow(gap, c)));
    check(3, std::max(abx[3], kLateralScale * G * abx[0]),
          std::max(aby[3], kLateralScale * G * aby[0]), 1e-10 * tol * G / (gap * gap));
    if (ok_x && ok_y) {
      GratingGratingSpectral out;
      out.s = {sx[0] + sy[0] - s0[0], sx[1] + sy[1] - s0[1], sx[2] + sy[2] - s0[2]};
      if (n_comp < 2) out.s.d1 = 0.0;
      if (n_comp < 3) out.s.d2 = 0.0;
      out.d_offset = sx[3] + sy[3] - s0[3];
      {
        const std::lock_guard<std::mutex> lock(cache_mutex_);
        d_offset_cache_[{xi, gap}] = out.d_offset;
      }
      return out;
    }
    if (!ok_x) ++ax;
    if (!ok_y) ++bt;
    if (ax + 1 > kMaxXLevel || bt + 1 > kMaxTLevel)
      throw std::runtime_error(fmt::format(
          "grating-grating: the Bloch integral did not reach {:g} at xi = {:g} rad/s, L = {:g} "
          "m, b = {:g} m ({} nodes)",
          tol, xi, gap, b, memo.size()));
  }
}

double GratingGrating::frequency_scale(double gap) const {
  const StaticLimit m = medium_->static_limit();
  const double eps0 = m.static_eps >= 1.0 ? m.static_eps : 1.0;
  return kSpeedOfLight / (2.0 * gap * std::sqrt(eps0));
}

std::string GratingGrating::describe() const {
  return fmt::format(
      "grating-grating: {} facing the mirrored {} across {}, ridges offset by b = {:g} m",
      g1_.describe(), g2_.describe(), medium_->name(), opts_.offset);
}

std::pair<double, double> GratingGrating::overlap(double b) const {
  // Ridge 1 on [-w1/2, w1/2], ridge 2 on [b - w2/2, b + w2/2], periodic in Lambda: o(b) is the
  // length of their intersection per period, do/db its derivative (piecewise linear).
  const double lam = g1_.period, w1 = g1_.filling * lam, w2 = g2_.filling * lam;
  const double bb = b - lam * std::round(b / lam);
  double o = 0.0, d = 0.0;
  for (int k = -2; k <= 2; ++k) {
    const double c = bb + k * lam;
    const double lo = std::max(-0.5 * w1, c - 0.5 * w2), hi = std::min(0.5 * w1, c + 0.5 * w2);
    if (hi > lo) {
      o += hi - lo;
      // d(hi - lo)/dc: +1 if hi moves with c and lo does not, -1 the other way round.
      const bool hi_moves = c + 0.5 * w2<0.5 * w1, lo_moves = c - 0.5 * w2> - 0.5 * w1;
      d += (hi_moves ? 1.0 : 0.0) - (lo_moves ? 1.0 : 0.0);
    }
  }
  return {o, d};
}

std::pair<double, double> GratingGrating::pfa_energy_and_lateral(
    double gap, double b, const FrequencyRuleOptions& opts) const {
  const double lam = g1_.period, w1 = g1_.filling * lam, w2 = g2_.filling * lam;
  const double h1 = g1_.depth, h2 = g2_.depth;
  const auto hs = [](const MaterialPtr& m) { return make_half_space(m); };
  const PlatePlate rr(hs(g1_.ridge), hs(g2_.ridge), medium_);
  const PlatePlate rs(hs(g1_.ridge), hs(g2_.substrate), medium_);
  const PlatePlate sr(hs(g1_.substrate), hs(g2_.ridge), medium_);
  const PlatePlate ss(hs(g1_.substrate), hs(g2_.substrate), medium_);
  const auto e = [&](const PlatePlate& p, double l) {
    return sum_over_frequencies(
               [&](double xi) { return p.at_frequency(xi, l, DerivativeOrder::kEnergy); },
               frequency_scale(gap), opts)
        .total.value;
  };
  const double err = e(rr, gap), ers = e(rs, gap + h2), esr = e(sr, gap + h1),
               ess = e(ss, gap + h1 + h2);
  const auto [o, dodb] = overlap(b);
  const double energy =
      (o * err + (w1 - o) * ers + (w2 - o) * esr + (lam - w1 - w2 + o) * ess) / lam;
  const double lateral = -dodb * (err - ers - esr + ess) / lam;
  return {energy, lateral};
}

std::optional<PfaValues> GratingGrating::pfa(double gap, const FrequencyRuleOptions& opts) const {
  const double lam = g1_.period, w1 = g1_.filling * lam, w2 = g2_.filling * lam;
  const double h1 = g1_.depth, h2 = g2_.depth;
  const auto hs = [](const MaterialPtr& m) { return make_half_space(m); };
  const PlatePlate rr(hs(g1_.ridge), hs(g2_.ridge), medium_);
  const PlatePlate rs(hs(g1_.ridge), hs(g2_.substrate), medium_);
  const PlatePlate sr(hs(g1_.substrate), hs(g2_.ridge), medium_);
  const PlatePlate ss(hs(g1_.substrate), hs(g2_.substrate), medium_);
  const double o = overlap(opts_.offset).first;
  const double f_rr = o / lam, f_rs = (w1 - o) / lam, f_sr = (w2 - o) / lam,
               f_ss = (lam - w1 - w2 + o) / lam;
  const FrequencySum s = sum_over_frequencies(
      [&](double xi) {
        Spectral v = rr.at_frequency(xi, gap, DerivativeOrder::kGradient) * f_rr;
        v += rs.at_frequency(xi, gap + h2, DerivativeOrder::kGradient) * f_rs;
        v += sr.at_frequency(xi, gap + h1, DerivativeOrder::kGradient) * f_sr;
        v += ss.at_frequency(xi, gap + h1 + h2, DerivativeOrder::kGradient) * f_ss;
        return v;
      },
      frequency_scale(gap), opts);
  return PfaValues{s.total.value, -s.total.d1, -s.total.d2};
}

std::vector<ExtraQuantity> GratingGrating::extra_quantities(
    double gap, const FrequencyRuleOptions& opts) const {
  // ds/db at the frequencies the rule asks for: from the cache of at_frequency when present
  // (the rules' nodes are deterministic), else computed.
  const FrequencySum s = sum_over_frequencies(
      [&](double xi) {
        {
          const std::lock_guard<std::mutex> lock(cache_mutex_);
          const auto it = d_offset_cache_.find({xi, gap});
          if (it != d_offset_cache_.end()) return Spectral{it->second, 0.0, 0.0};
        }
        return Spectral{spectral(xi, gap, DerivativeOrder::kEnergy, opts_.bloch_rel_tol).d_offset,
                        0.0, 0.0};
      },
      frequency_scale(gap), opts);
  ExtraQuantity lat;
  lat.name = "lateral_force";
  lat.column = "F_b";
  lat.units = "Pa";
  lat.description =
      "lateral force per area F_b = -dE/db on the upper grating (> 0 pushes it towards +x, "
      "b = offset of its ridges)";
  lat.value = -s.total.value;
  lat.abs_error = s.abs_error;
  ExtraQuantity lat_pfa;
  lat_pfa.name = "lateral_force_pfa";
  lat_pfa.column = "F_b,PFA";
  lat_pfa.units = "Pa";
  lat_pfa.description = "proximity force approximation of the lateral force per area (-dE_PFA/db)";
  lat_pfa.value = pfa_energy_and_lateral(gap, opts_.offset, opts).second;
  return {lat, lat_pfa};
}

std::map<std::string, double> GratingGrating::truncation(double gap) const {
  return {{"orders", static_cast<double>(orders_at(gap))}, {"bloch_rel_tol", opts_.bloch_rel_tol}};
}

}  // namespace roundtrip
