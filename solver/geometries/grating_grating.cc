// Grating-grating round trip per unit area with a lateral offset (formulas, conventions and
// sources in grating_grating.h). The Bloch integral is the shared one (solver/blocks/
// bloch_integral.h) with ds/db as a fourth component; the order study is grating-plate's
// (grating_orders.h).
#include "solver/geometries/grating_grating.h"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <complex>
#include <exception>
#include <map>
#include <stdexcept>
#include <string>
#include <tuple>
#include <utility>
#include <vector>

#include "solver/blocks/bloch_integral.h"
#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/plate_plate.h"
#include "solver/guards.h"
#include "solver/materials/models.h"
#include "solver/parallel_for.h"
#include "solver/planar/layered.h"
#include "solver/scatterers/grating_coating.h"

namespace roundtrip {
namespace {

using Eigen::MatrixXcd;
using Eigen::MatrixXd;
using Eigen::VectorXd;
using Quad = std::array<double, 4>;  // s, ds/dL, d2s/dL2, ds/db
using cd = std::complex<double>;

// The lateral component vanishes at b = 0 and Lambda/2 (pointwise, by symmetry); its Bloch
// tolerance is relative to max(\int |ds/db|, kLateralScale G \int |s|), so that near those
// offsets it is controlled on the scale of a typical lateral force, not on rounding.
constexpr double kLateralScale = 1e-3;

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
         a.ridge == b.ridge && a.substrate == b.substrate && a.coating == b.coating &&
         a.coating_thickness == b.coating_thickness;
}

void check_grating(const LamellarGrating& g, const char* which) {
  if (g.profile != GratingProfile::kLamellar)
    throw std::invalid_argument(fmt::format(
        "grating-grating: the {} grating's profile is not lamellar; only lamellar profiles are "
        "built (the PFA and the overlap assume rectangular ridges)",
        which));
  if (const std::string p = coating_problem(g); !p.empty())
    throw std::invalid_argument(fmt::format("grating-grating: {} grating: {}", which, p));
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

// PFA columns of a coated lamellar grating (Bao et al., PRL 105, 250402 (2010), per column;
// derived for the coating): intervals of x (m, one period about the ridge centre), the depth of
// the column's top below the coated tops, and its planar body, with the ridge material taken as
// semi-infinite under the ridge as in the uncoated columns: ridge (coating t on the ridge),
// coated walls (the coating), groove (coating t on the substrate, h lower).
struct PfaColumn {
  std::vector<std::pair<double, double>> xs;
  double below = 0.0;
  PlanarPtr body;
};

std::vector<PfaColumn> coated_columns(const LamellarGrating& g) {
  const double lam = g.period, t = g.coating_thickness, a = 0.5 * g.filling * lam;
  const double o = g.filling > 0.0 ? std::min(a + t, 0.5 * lam) : 0.0;  // outer half-width
  std::vector<PfaColumn> c;
  if (a > 0.0) c.push_back({{{-a, a}}, 0.0, make_layered({{g.coating, t}}, g.ridge)});
  if (o > a) c.push_back({{{-o, -a}, {a, o}}, 0.0, make_half_space(g.coating)});
  if (o < 0.5 * lam)
    c.push_back({{{o, lam - o}}, g.depth, make_layered({{g.coating, t}}, g.substrate)});
  return c;
}

// Length per period of [a1, a2] and [c1 + b, c2 + b] (periodic in lam) and its b derivative
// (piecewise linear; as GratingGrating::overlap).
std::pair<double, double> interval_overlap(double a1, double a2, double c1, double c2, double b,
                                           double lam) {
  const double bb = b - lam * std::round(b / lam);
  double o = 0.0, d = 0.0;
  for (int k = -3; k <= 3; ++k) {
    const double lo = std::max(a1, c1 + bb + k * lam), hi = std::min(a2, c2 + bb + k * lam);
    if (hi > lo) {
      o += hi - lo;
      d += (c2 + bb + k * lam < a2 ? 1.0 : 0.0) - (c1 + bb + k * lam > a1 ? 1.0 : 0.0);
    }
  }
  return {o, d};
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

int GratingGrating::orders_at(double gap) const { return study(gap).orders; }

GratingStudy GratingGrating::study(double gap) const {
  if (opts_.orders > 0) {
    GratingStudy st;
    st.orders = opts_.orders;
    return st;
  }
  std::lock_guard<std::mutex> lock(study_mutex_);
  const auto it = studies_.find(gap);
  if (it != studies_.end()) return it->second;
  GratingStudy st = run_study(gap);
  studies_.emplace(gap, st);
  return st;
}

GratingStudy GratingGrating::run_study(double gap) const {
  // As grating-plate (grating_plate.cc): tight Bloch nodes, so that the study's noise
  // (<= tol |s|) is far below the differences it measures; each pair on the same nodes.
  const double xi = frequency_scale(gap);
  const double tol = std::clamp(0.01 * opts_.rel_tol, 1e-10, 1e-4);
  const double b = opts_.offset;
  return study_orders(
      GratingStudy{}, g1_.period, gap, opts_.rel_tol, opts_.max_orders,
      [&](int N) {
        return terms_at(xi, gap, DerivativeOrder::kEnergy, tol, {{b, {N}, {1.0}}})[0][0].s.value;
      },
      [&](int lo, int hi) {
        const auto v =
            terms_at(xi, gap, DerivativeOrder::kEnergy, tol, {{b, {lo, hi}, {0.0, 1.0}}})[0];
        return std::pair{v[1].s.value, v[2].s.value};
      });
}

void GratingGrating::study_together(double gap,
                                    const std::vector<const GratingGrating*>& group) const {
  if (opts_.orders > 0) return;
  std::vector<const GratingGrating*> todo;  // members without a study of this gap
  for (const GratingGrating* g : group) {
    const std::lock_guard<std::mutex> lock(g->study_mutex_);
    if (!g->studies_.count(gap)) todo.push_back(g);
  }
  if (todo.size() < 2) return;  // study() alone does it
  // Each member's study runs as run_study would (same xi*, tolerance and level sequence); a
  // value it asks for is computed together with the same level(s) of the members after it
  // (terms_at: one term per offset, each with its own Bloch test, so each value is the one
  // run_study gets alone). The level sequence is fixed (4, 6, 8, 11, ...), so the later members
  // find most of theirs; a member that stops earlier leaves at most the values of the levels
  // the others went on to.
  const double xi = frequency_scale(gap);
  const double tol = std::clamp(0.01 * opts_.rel_tol, 1e-10, 1e-4);
  std::map<std::tuple<std::size_t, int, int>, std::pair<double, double>> values;
  const auto value = [&](std::size_t k, int lo, int hi) {
    if (!values.count({k, lo, hi})) {
      std::vector<Term> terms;
      for (std::size_t j = k; j < todo.size(); ++j)
        terms.push_back(lo > 0 ? Term{todo[j]->opts_.offset, {lo, hi}, {0.0, 1.0}}
                               : Term{todo[j]->opts_.offset, {hi}, {1.0}});
      const auto v = terms_at(xi, gap, DerivativeOrder::kEnergy, tol, terms);
      for (std::size_t j = k; j < todo.size(); ++j) {
        const auto& t = v[j - k];
        values[{j, lo, hi}] =
            lo > 0 ? std::pair{t[1].s.value, t[2].s.value} : std::pair{0.0, t[0].s.value};
      }
    }
    return values.at({k, lo, hi});
  };
  for (std::size_t k = 0; k < todo.size(); ++k) {
    const GratingStudy st = study_orders(
        GratingStudy{}, g1_.period, gap, opts_.rel_tol, opts_.max_orders,
        [&](int N) { return value(k, 0, N).second; },
        [&](int lo, int hi) { return value(k, lo, hi); });
    const std::lock_guard<std::mutex> lock(todo[k]->study_mutex_);
    todo[k]->studies_.emplace(gap, st);
  }
}

std::string GratingGrating::unverified_truncation(double gap) const {
  return study_unverified(study(gap), opts_.orders > 0, opts_.max_orders);
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
  const auto [orders, weights] = study_levels(study(gap));
  GratingGratingSpectral out =
      terms_at(xi, gap, order, tol, {{opts_.offset, orders, weights}})[0][0];
  {
    const std::lock_guard<std::mutex> lock(cache_mutex_);
    d_offset_cache_[{xi, gap}] = out.d_offset;
  }
  return out;
}

bool GratingGrating::shares_frequency_work_with(const Geometry& other) const {
  const auto* p = dynamic_cast<const GratingGrating*>(&other);
  if (p == nullptr || p == this) return false;
  const GratingGratingOptions &a = opts_, &b = p->opts_;
  // The medium by name here; its epsilon at each frequency in at_frequency_shared.
  return same_grating(g1_, p->g1_) && same_grating(g2_, p->g2_) &&
         medium_->name() == p->medium_->name() && a.orders == b.orders &&
         a.bloch_rel_tol == b.bloch_rel_tol && a.rel_tol == b.rel_tol &&
         a.max_orders == b.max_orders;
}

std::vector<Spectral> GratingGrating::at_frequency_shared(
    double xi, double gap, DerivativeOrder order, double rel_tol,
    const std::vector<const Geometry*>& others) const {
  std::vector<const GratingGrating*> all{this};
  bool together = true;
  for (const Geometry* g : others) {
    const auto* p = dynamic_cast<const GratingGrating*>(g);
    together =
        together && p != nullptr && shares_frequency_work_with(*p) &&
        (xi > 0.0 ? p->medium_->epsilon(xi) == medium_->epsilon(xi)
                  : p->medium_->static_limit().static_eps == medium_->static_limit().static_eps);
    all.push_back(p);
  }
  if (!together) return Geometry::at_frequency_shared(xi, gap, order, rel_tol, others);
  // The tolerance of at_frequency_within (the options are equal, so one for all).
  const double tol = std::max(opts_.bloch_rel_tol, 0.3 * rel_tol);
  study_together(gap, all);
  std::vector<Term> terms;
  for (const GratingGrating* g : all) {
    const auto [orders, weights] = study_levels(g->study(gap));
    terms.push_back({g->opts_.offset, orders, weights});
  }
  const auto v = terms_at(xi, gap, order, tol, terms);
  std::vector<Spectral> out;
  for (std::size_t k = 0; k < all.size(); ++k) {
    {
      const std::lock_guard<std::mutex> lock(all[k]->cache_mutex_);
      all[k]->d_offset_cache_[{xi, gap}] = v[k][0].d_offset;
    }
    out.push_back(v[k][0].s);
  }
  return out;
}

std::vector<std::vector<GratingGratingSpectral>> GratingGrating::terms_at(
    double xi, double gap, DerivativeOrder order, double tol,
    const std::vector<Term>& terms) const {
  if (!(gap > 0.0) || !std::isfinite(gap))
    throw std::invalid_argument(
        fmt::format("grating-grating: gap = {} m must be > 0 (the ridge tops may not touch)", gap));
  if (!(xi >= 0.0) || !std::isfinite(xi))
    throw std::invalid_argument(fmt::format("grating-grating: xi = {} rad/s must be >= 0", xi));
  // The order levels of all terms (ascending): one FMM per node and level serves every term.
  std::vector<int> levels;
  std::vector<int> base;  // first component of each term
  int n_values = 0;
  for (const Term& t : terms) {
    if (t.orders.empty() || t.orders.size() != t.weights.size())
      throw std::invalid_argument("grating-grating: orders and weights of a term must match");
    for (int N : t.orders) {
      if (N < 1) throw std::invalid_argument("grating-grating: orders must be >= 1");
      levels.push_back(N);
    }
    base.push_back(n_values);
    n_values += 4 * (static_cast<int>(t.orders.size()) + 1);
  }
  std::sort(levels.begin(), levels.end());
  levels.erase(std::unique(levels.begin(), levels.end()), levels.end());
  const int n_comp = 1 + static_cast<int>(order);
  const int nl = static_cast<int>(levels.size());
  const bool twin = same_grating(g1_, g2_);
  const int n_g = twin ? 1 : 2;
  std::vector<GratingAtFrequency> gf1, gf2;
  for (int N : levels) {
    gf1.emplace_back(g1_, xi, *medium_, N);
    if (!twin) gf2.emplace_back(g2_, xi, *medium_, N);
  }
  const double eps_m = xi > 0.0 ? medium_->epsilon(xi) : medium_->static_limit().static_eps;
  const double G = 2.0 * kPi / g1_.period;
  const double q2 = eps_m * (xi / kSpeedOfLight) * (xi / kSpeedOfLight);
  // Order index of each basis entry (E_x and E_y blocks at xi > 0, the potential at xi = 0, the
  // potentials phi and psi at xi = 0 when a grating is a perfect conductor, grating_pec.h: the
  // other grating, a dielectric, then reflects psi by 0, as its static TE reflection).
  const bool pair = gf1.front().static_pair() || (!twin && gf2.front().static_pair());
  const auto in_basis = [&](MatrixXd r, int m) {
    if (xi > 0.0 || !pair || r.rows() == 2 * m) return r;
    MatrixXd p = MatrixXd::Zero(2 * m, 2 * m);
    p.topLeftCorner(m, m) = r;
    return p;
  };
  std::vector<VectorXd> ords;
  for (int N : levels) {
    const int m = 2 * N + 1;
    VectorXd ord(xi > 0.0 || pair ? 2 * m : m);
    for (int i = 0; i < ord.size(); ++i) ord[i] = (i % m) - N;
    ords.push_back(ord);
  }
  // Line slot u n_g + j: level u's layer modes of grating j (0 lower, 1 upper unless twin).
  blocks::BlochIntegral bloch(
      g1_.period, gap, q2, tol, n_values, nl * n_g,
      [&](int slot, double kx) { return (slot % n_g == 0 ? gf1 : gf2)[slot / n_g].line(kx); },
      [&](double kx, double ky, double jac, const blocks::BlochIntegral::Lines& lines) {
        blocks::BlochIntegral::Values out(n_values, 0.0);
        for (int u = 0; u < nl; ++u) {
          const int N = levels[u];
          const MatrixXd r1 = in_basis(gf1[u].reflect(lines[u * n_g], ky), 2 * N + 1);
          const MatrixXd r2 =
              twin ? r1 : in_basis(gf2[u].reflect(lines[u * n_g + 1], ky), 2 * N + 1);
          const VectorXd kap = orders_decay(xi, eps_m, g1_.period, N, kx, ky, pair);
          for (std::size_t k = 0; k < terms.size(); ++k) {
            const Term& t = terms[k];
            for (std::size_t l = 0; l < t.orders.size(); ++l) {
              if (t.orders[l] != N) continue;
              Quad v = round_trip(r1, r2, kap, ords[u], G, t.offset, gap, n_comp);
              for (int c = 0; c < 4; ++c) {
                v[c] *= jac;
                out[base[k] + 4 * (static_cast<int>(l) + 1) + c] = v[c];
                out[base[k] + c] += t.weights[l] * v[c];
              }
            }
          }
        }
        return out;
      });
  std::vector<std::vector<GratingGratingSpectral>> result;
  for (std::size_t k = 0; k < terms.size(); ++k) {
    const int b0 = base[k];
    // Absolute floor as grating-plate: 1e-10 tol / L^2 per L^c (and G / L^2 for d/db); the
    // test is on the term's weighted sum.
    const auto accept = [&](const blocks::BlochIntegral::Values& fine,
                            const blocks::BlochIntegral::Values& coarse,
                            const blocks::BlochIntegral::Values& fine_abs) {
      const auto ok = [&](int c, double scale, double floor) {
        return std::abs(fine[b0 + c] - coarse[b0 + c]) <= std::max(tol * scale, floor);
      };
      for (int c = 0; c < n_comp; ++c)
        if (!ok(c, fine_abs[b0 + c], 1e-10 * tol / (gap * gap * std::pow(gap, c)))) return false;
      return ok(3, std::max(fine_abs[b0 + 3], kLateralScale * G * fine_abs[b0]),
                1e-10 * tol * G / (gap * gap));
    };
    const auto v = bloch.integrate(accept, [&](long nodes) {
      return fmt::format(
          "grating-grating: the Bloch integral did not reach {:g} at xi = {:g} rad/s, L = {:g} "
          "m, b = {:g} m ({} nodes)",
          tol, xi, gap, terms[k].offset, nodes);
    });
    std::vector<GratingGratingSpectral> r;
    for (std::size_t l = 0; l <= terms[k].orders.size(); ++l) {
      const int i = b0 + 4 * static_cast<int>(l);
      GratingGratingSpectral g;
      g.s = {v[i], n_comp >= 2 ? v[i + 1] : 0.0, n_comp >= 3 ? v[i + 2] : 0.0};
      g.d_offset = v[i + 3];
      r.push_back(g);
    }
    result.push_back(std::move(r));
  }
  return result;
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
  if (g1_.coated() || g2_.coated()) {
    const auto terms = coated_pfa_terms(b);
    double energy = 0.0, lateral = 0.0;
    for (const auto& [w, dwdb, dz, pp] : terms) {
      const double e =
          sum_over_frequencies(
              [&](double xi) { return pp->at_frequency(xi, gap + dz, DerivativeOrder::kEnergy); },
              frequency_scale(gap), opts)
              .total.value;
      energy += w * e;
      lateral -= dwdb * e;
    }
    return {energy, lateral};
  }
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

std::vector<GratingGrating::PfaTerm> GratingGrating::coated_pfa_terms(double b) const {
  // Column pairs (derived; the uncoated four columns generalised): weight o_ij(b)/Lambda, its b
  // derivative, the pair's extra gap (depths below the tops) and its plate-plate body pair. An
  // uncoated grating gives the columns of the uncoated formula (ridge and groove half-spaces).
  const auto columns = [](const LamellarGrating& g) {
    if (g.coated()) return coated_columns(g);
    const double lam = g.period, a = 0.5 * g.filling * lam;
    std::vector<PfaColumn> c;
    if (a > 0.0) c.push_back({{{-a, a}}, 0.0, make_half_space(g.ridge)});
    if (a < 0.5 * lam) c.push_back({{{a, lam - a}}, g.depth, make_half_space(g.substrate)});
    return c;
  };
  const double lam = g1_.period;
  std::vector<PfaTerm> out;
  for (const PfaColumn& c1 : columns(g1_))
    for (const PfaColumn& c2 : columns(g2_)) {
      double o = 0.0, d = 0.0;
      for (const auto& [a1, a2] : c1.xs)
        for (const auto& [e1, e2] : c2.xs) {
          const auto [oi, di] = interval_overlap(a1, a2, e1, e2, b, lam);
          o += oi;
          d += di;
        }
      out.push_back({o / lam, d / lam, c1.below + c2.below,
                     std::make_shared<PlatePlate>(c1.body, c2.body, medium_)});
    }
  return out;
}

std::optional<PfaValues> GratingGrating::pfa(double gap, const FrequencyRuleOptions& opts) const {
  if (g1_.coated() || g2_.coated()) {
    const auto terms = coated_pfa_terms(opts_.offset);
    const FrequencySum s = sum_over_frequencies(
        [&](double xi) {
          Spectral v;
          for (const auto& [w, dwdb, dz, pp] : terms)
            if (w > 0.0) v += pp->at_frequency(xi, gap + dz, DerivativeOrder::kGradient) * w;
          return v;
        },
        frequency_scale(gap), opts);
    return PfaValues{s.total.value, -s.total.d1, -s.total.d2};
  }
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
  if (opts_.orders > 0) return study_truncation(study(gap), opts_.bloch_rel_tol, false);
  {
    std::lock_guard<std::mutex> lock(study_mutex_);
    if (const auto it = studies_.find(gap); it != studies_.end())
      return study_truncation(it->second, opts_.bloch_rel_tol, false);
  }
  // Before the study (plans, `check`): the damping model's N.
  return {{"orders", static_cast<double>(model_orders(g1_.period, gap))},
          {"bloch_rel_tol", opts_.bloch_rel_tol}};
}

}  // namespace roundtrip
