// Grating-plate round trip per unit area (formulas, conventions and sources in grating_plate.h).
#include "solver/geometries/grating_plate.h"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <exception>
#include <map>
#include <memory>
#include <stdexcept>
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

using Eigen::MatrixXd;
using Eigen::VectorXd;
using Triple = std::array<double, 3>;

thread_local int g_last_nodes = 0;

// One material for the PFA's columns: the same object, or two perfect conductors (a film of a
// perfect conductor on a perfect conductor is the perfect conductor).
bool same_material(const MaterialPtr& a, const MaterialPtr& b) {
  return a == b || (a->is_perfect_conductor() && b->is_perfect_conductor());
}

// A column of the sample (grating_columns) as a planar body: coating and ridge films on the
// substrate, films of one material merged, none for zero thickness.
PlanarPtr column_body(const LamellarGrating& g_, const GratingColumn& c) {
  std::vector<Layer> films;
  const auto add = [&](const MaterialPtr& m, double d) {
    if (!(d > 0.0)) return;
    if (!films.empty() && same_material(films.back().material, m))
      films.back().thickness += d;
    else
      films.push_back({m, d});
  };
  add(g_.coating, c.coating);
  add(g_.ridge, c.ridge);
  while (!films.empty() && same_material(films.back().material, g_.substrate)) films.pop_back();
  return films.empty() ? make_half_space(g_.substrate) : make_layered(films, g_.substrate);
}

// The orders that reach the plate: M = R_g D R_p D has the factor D = e^{-kappa L} on the right,
// so an order whose round-trip decay e^{-2 kappa_n L} is below e^{-kDroppedDecay} of the least
// decaying order's gives M a column of zeros to that precision, and 1 - M is block triangular:
// ln det(1 - M) and its L-derivatives (which keep the right factor D) are those of the block of
// the other orders (derived). kappa_n is convex in n, so that block is one run lo..hi of order
// indices. e^-60 = 9e-27 leaves 1e10 to the double rounding for any reflection elements up to
// 1e5 (the tangential-E basis' R_xy ~ k_y k_n/gamma^2; R_D, R_N themselves are contractions).
constexpr double kDroppedDecay = 60.0;

std::pair<int, int> reaching_orders(const VectorXd& kap, int m, double gap) {
  double kmin = kap[0];
  for (int i = 1; i < m; ++i) kmin = std::min(kmin, kap[i]);
  int lo = 0, hi = m - 1;
  while (lo < hi && 2.0 * (kap[lo] - kmin) * gap > kDroppedDecay) ++lo;
  while (hi > lo && 2.0 * (kap[hi] - kmin) * gap > kDroppedDecay) --hi;
  return {lo, hi};
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
  if (const std::string p = coating_problem(g_); !p.empty())
    throw std::invalid_argument("grating-plate: " + p);
  if (opts_.orders < 0 || opts_.orders > 500)
    throw std::invalid_argument(
        fmt::format("grating-plate: orders = {} must lie in 0..500", opts_.orders));
  if (!(opts_.sphere_radius >= 0.0) || !std::isfinite(opts_.sphere_radius))
    throw std::invalid_argument(
        fmt::format("grating-plate: sphere radius = {} m must be >= 0", opts_.sphere_radius));
  if (!(opts_.bloch_rel_tol >= 1e-12 && opts_.bloch_rel_tol <= 1e-2))
    throw std::invalid_argument(fmt::format(
        "grating-plate: bloch_rel_tol = {} must lie in [1e-12, 1e-2]", opts_.bloch_rel_tol));
}

int GratingPlate::orders_at(double gap) const { return study(gap).orders; }

GratingStudy GratingPlate::study(double gap) const {
  if (opts_.orders > 0 && (g_.profile == GratingProfile::kLamellar || g_.slices > 0)) {
    GratingStudy st;
    st.orders = opts_.orders;
    st.slices = g_.profile == GratingProfile::kLamellar ? 0 : g_.slices;
    return st;
  }
  std::lock_guard<std::mutex> lock(mu_);
  const auto it = studies_.find(gap);
  if (it != studies_.end()) return it->second;
  GratingStudy st = run_study(gap);
  studies_.emplace(gap, st);
  return st;
}

GratingStudy GratingPlate::run_study(double gap) const {
  GratingStudy st;
  const double xi = frequency_scale(gap);
  const double tau = opts_.rel_tol;
  // Bloch nodes of the study: tight, so that its noise (<= tol |s|) is far below the
  // differences it measures; each step evaluates its pair of levels on the same nodes.
  const double tol = std::clamp(0.01 * tau, 1e-10, 1e-4);
  const auto pair_at = [&](Level lo, Level hi) {
    const auto v = levels_at(xi, gap, DerivativeOrder::kEnergy, tol, {lo, hi}, {0.0, 1.0});
    return std::pair{v[1].value, v[2].value};
  };
  // Slices first, at N = 4.
  if (g_.profile != GratingProfile::kLamellar) {
    if (opts_.orders > 0 && g_.slices > 0) {
      st.slices = g_.slices;
    } else {
      const int n_s = 4;
      double d_prev = 0.0;
      for (int S = 4;; S *= 2) {
        const auto [lo, hi] = pair_at({n_s, S / 2}, {n_s, S});
        const double d = hi - lo, p = observed_rate(S / 4, S / 2, S, d_prev, d);
        st.slices = S;
        if (p > 0.0) {
          st.slice_rate = p;
          st.slice_error = 1.25 * std::abs(d) / (std::pow(2.0, p) - 1.0) / std::abs(hi);
          if (st.slice_error <= 0.2 * tau) break;
        } else {
          st.slice_error = std::abs(d / hi);  // no rate yet: the last change
        }
        if (2 * S > opts_.max_slices) break;
        d_prev = d;
      }
    }
  }
  const int S = st.slices;
  if (opts_.orders > 0) {
    st.orders = opts_.orders;
    st.verified = false;
    return st;
  }
  return study_orders(
      st, g_.period, gap, tau, opts_.max_orders,
      [&](int N) {
        return levels_at(xi, gap, DerivativeOrder::kEnergy, tol, {{N, S}}, {1.0})[0].value;
      },
      [&](int lo, int hi) {
        return pair_at({lo, S}, {hi, S});
      });
}

std::string GratingPlate::unverified_truncation(double gap) const {
  return study_unverified(study(gap), opts_.orders > 0, opts_.max_orders);
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
  const GratingStudy st = study(gap);
  const auto [orders, weights] = study_levels(st);
  std::vector<Level> levels;
  for (int N : orders) levels.push_back({N, st.slices});
  return levels_at(xi, gap, order, tol, levels, weights)[0];
}

std::vector<Spectral> GratingPlate::levels_at(double xi, double gap, DerivativeOrder order,
                                              double tol, const std::vector<Level>& levels,
                                              const std::vector<double>& weights) const {
  if (!(gap > 0.0) || !std::isfinite(gap))
    throw std::invalid_argument(fmt::format("grating-plate: gap = {} m must be > 0", gap));
  if (!(xi >= 0.0) || !std::isfinite(xi))
    throw std::invalid_argument(fmt::format("grating-plate: xi = {} rad/s must be >= 0", xi));
  if (levels.empty() || levels.size() != weights.size())
    throw std::invalid_argument("grating-plate: levels and weights must match");
  const int n_comp = 1 + static_cast<int>(order);
  const int nl = static_cast<int>(levels.size());
  std::vector<GratingAtFrequency> gfs;
  for (const Level& lv : levels) {
    LamellarGrating g = g_;
    g.slices = lv.slices;
    gfs.emplace_back(g, xi, *medium_, lv.orders);
  }
  const auto pat = plate_->at(xi, *medium_);
  const double eps_m = xi > 0.0 ? medium_->epsilon(xi) : medium_->static_limit().static_eps;
  const double q2 = eps_m * (xi / kSpeedOfLight) * (xi / kSpeedOfLight);
  // Node values (blocks::BlochIntegral, flat): the weighted sum's three components first, then
  // each level's; line slot l holds level l's layer modes.
  blocks::BlochIntegral bloch(
      g_.period, gap, q2, tol, 3 * (nl + 1), nl, [&](int l, double kx) { return gfs[l].line(kx); },
      [&](double kx, double ky, double jac, const blocks::BlochIntegral::Lines& lines) {
        blocks::BlochIntegral::Values out(3 * (nl + 1), 0.0);
        for (int l = 0; l < nl; ++l) {
          const int N = levels[l].orders;
          const bool pair = gfs[l].static_pair();
          const VectorXd kap_all = orders_decay(xi, eps_m, g_.period, N, kx, ky, pair);
          const auto [lo, hi] = reaching_orders(kap_all, 2 * N + 1, gap);
          const MatrixXd rg = gfs[l].reflect(lines[l], ky, lo, hi);
          const MatrixXd rp = order_block(
              planar_reflection_in_orders(*pat, xi, g_.period, N, kx, ky, pair), 2 * N + 1, lo, hi);
          const VectorXd kap = order_block(kap_all, 2 * N + 1, lo, hi);
          Triple v = round_trip(rg, rp, kap, gap, n_comp);
          for (int c = 0; c < 3; ++c) {
            v[c] *= jac;
            out[3 * (l + 1) + c] = v[c];
            out[c] += weights[l] * v[c];
          }
        }
        return out;
      });
  // Absolute floor: 1e-10 tol / L^2 (per L^c for derivative c) is 1e-10 tol of the perfect-
  // mirror scale 1/(8 pi L^2) x 8 pi; a term below it (far beyond the frequency scale, where s
  // falls like e^{-2 xi L/c} and the FMM's rounding dominates) is negligible in any sum whose
  // reflection coefficients are above ~1e-4. The test is on the weighted sum (index 0).
  const auto accept = [&](const blocks::BlochIntegral::Values& fine,
                          const blocks::BlochIntegral::Values& coarse,
                          const blocks::BlochIntegral::Values& fine_abs) {
    for (int c = 0; c < n_comp; ++c) {
      const double floor = 1e-10 * tol / (gap * gap * std::pow(gap, c));
      if (!(std::abs(fine[c] - coarse[c]) <= std::max(tol * fine_abs[c], floor))) return false;
    }
    return true;
  };
  const auto v = bloch.integrate(accept, [&](long nodes) {
    return fmt::format(
        "grating-plate: the Bloch integral did not reach {:g} at xi = {:g} rad/s, L = {:g} m "
        "({} nodes)",
        tol, xi, gap, nodes);
  });
  g_last_nodes = static_cast<int>(bloch.nodes());
  std::vector<Spectral> out;
  for (int l = 0; l <= nl; ++l) out.push_back({v[3 * l], v[3 * l + 1], v[3 * l + 2]});
  return out;
}

double GratingPlate::frequency_scale(double gap) const {
  const StaticLimit m = medium_->static_limit();
  const double eps0 = m.static_eps >= 1.0 ? m.static_eps : 1.0;
  return kSpeedOfLight / (2.0 * gap * std::sqrt(eps0));
}

std::string GratingPlate::describe() const {
  const std::string coat = g_.coated() ? fmt::format(", coated with {:g} m of {}",
                                                     g_.coating_thickness, g_.coating->name())
                                       : "";
  return fmt::format("grating-plate: {}{} facing {} across {}", g_.describe(), coat,
                     plate_->describe(), medium_->name());
}

std::optional<PfaValues> GratingPlate::pfa(double gap, const FrequencyRuleOptions& opts) const {
  // Grating PFA (Bao et al., PRL 105, 250402 (2010)), per area: E = (1/Lambda) \int dx
  // E_pp(L + H - h(x)), each column a film of the ridge material of thickness h(x) on the
  // substrate (lamellar: f E_pp(L; ridge film of depth h on the substrate) + (1 - f)
  // E_pp(L + h; substrate)). Non-lamellar profiles: midpoint rule in x over half a period
  // (even profile) with kPfaColumns columns; the PFA is a comparison value, not a result.
  // Coated: each column is the coating (h_out(x) - h(x)) on the ridge film h(x) on the
  // substrate, at L + H + t - h_out(x) (lamellar: ridge, coated walls, groove; grating_columns).
  constexpr int kPfaColumns = 64;
  std::vector<std::pair<double, std::unique_ptr<PlatePlate>>> pp;
  std::vector<double> dz;
  for (const GratingColumn& c : grating_columns(g_, kPfaColumns)) {
    if (c.weight == 0.0) continue;
    pp.emplace_back(c.weight, std::make_unique<PlatePlate>(column_body(g_, c), plate_, medium_));
    dz.push_back(c.below_top);
  }
  const FrequencySum s = sum_over_frequencies(
      [&](double xi) {
        Spectral v;
        for (std::size_t i = 0; i < pp.size(); ++i)
          v +=
              pp[i].second->at_frequency(xi, gap + dz[i], DerivativeOrder::kGradient) * pp[i].first;
        return v;
      },
      frequency_scale(gap), opts);
  return PfaValues{s.total.value, -s.total.d1, -s.total.d2};
}

double GratingPlate::flat_energy(double gap, const FrequencyRuleOptions& opts) const {
  // The sample filled to the ridge tops: a film of the ridge material of the profile's height on
  // the substrate (a half-space when they are one material or the height is 0), under the
  // coating's film when coated, facing the plate at L (Lifshitz (1956) through PlatePlate).
  GratingColumn flat;
  flat.ridge = g_.height();
  flat.coating = g_.coated() ? g_.coating_thickness : 0.0;
  const PlatePlate pp(column_body(g_, flat), plate_, medium_);
  return sum_over_frequencies(
             [&](double xi) { return pp.at_frequency(xi, gap, DerivativeOrder::kEnergy); },
             frequency_scale(gap), opts)
      .total.value;
}

std::vector<ExtraQuantity> GratingPlate::extra_quantities_of(double gap,
                                                             const FrequencyRuleOptions& opts,
                                                             double energy,
                                                             double energy_error) const {
  const double R = opts_.sphere_radius;
  if (!(R > 0.0)) return {};
  // PFA for the sphere (Derjaguin 1934; GratingPlateOptions): F(L) = 2 pi R E(L), E per area.
  const double two_pi_r = 2.0 * kPi * R;
  ExtraQuantity f;
  f.name = "sphere_force";
  f.column = "F_sphere";
  f.units = "N";
  f.description =
      "force on a sphere of radius R (pfa_sphere.radius) in place of the plate, PFA on the exact "
      "grating-plate energy: 2 pi R E(L) (< 0 attractive)";
  f.value = two_pi_r * energy;
  f.abs_error = two_pi_r * energy_error;
  ExtraQuantity fp;
  fp.name = "sphere_force_grating_pfa";
  fp.column = "F_sphere,PFA";
  fp.units = "N";
  fp.description =
      "the same with the grating PFA energy (the E_PFA column): 2 pi R E_PFA(L) (< 0 "
      "attractive)";
  fp.value = two_pi_r * pfa(gap, opts)->energy;
  ExtraQuantity ff;
  ff.name = "sphere_force_flat";
  ff.column = "F_sphere,flat";
  ff.units = "N";
  ff.description =
      "the same for the sample without grooves (ridge material filled to the ridge tops): "
      "2 pi R E_flat(L) (< 0 attractive)";
  ff.value = two_pi_r * flat_energy(gap, opts);
  return {f, fp, ff};
}

std::map<std::string, double> GratingPlate::truncation(double gap) const {
  GratingStudy st;
  bool known = opts_.orders > 0 && (g_.profile == GratingProfile::kLamellar || g_.slices > 0);
  if (known) {
    st = study(gap);
  } else {
    std::lock_guard<std::mutex> lock(mu_);
    if (const auto it = studies_.find(gap); it != studies_.end()) {
      st = it->second;
      known = true;
    }
  }
  if (!known) {  // before the study (plans, `check`): the model's N
    return {{"orders", static_cast<double>(model_orders(g_.period, gap))},
            {"bloch_rel_tol", opts_.bloch_rel_tol}};
  }
  return study_truncation(st, opts_.bloch_rel_tol, g_.profile != GratingProfile::kLamellar);
}

FrequencyCost GratingPlate::cost(double gap, DerivativeOrder order, double /*rel_tol*/) const {
  // Per Bloch node and level (N, S), n = 2(2N + 1): S admittance steps (two LUs and products,
  // ~5 n^3) and the round trip (LU and products, ~4 n^3; +2 n^3 per derivative); the layer
  // modes are solved once per k_x line (conical decoupling: two symmetric eigenproblems of
  // dimension n/2 with vectors and the products forming them, ~4 n^3 per layer), shared by the
  // ~20 nodes of a line: ~0.2 S n^3 per node. Nodes: ~500 (measured 200-900 at the case-file
  // tolerances). Model of gemm-equivalent flops (geometry.h), not calibrated per
  // kind; the study of each gap (a few extra evaluations at xi*) is not included.
  const auto t = truncation(gap);
  const double N = t.at("orders");
  const double n_low = t.count("orders_low") ? t.at("orders_low") : 0.0;
  // Layers per node: lamellar 1 (coated: the top slab, ridge layer and floor, 3).
  const double S = g_.profile == GratingProfile::kLamellar
                       ? (g_.coated() ? 3.0 : 1.0)
                       : std::max(1.0, t.count("slices") ? t.at("slices") : 16.0);
  const double extra = 2.0 * static_cast<int>(order);
  double per_node = 0.0;
  for (double n_ord : {N, n_low}) {
    if (n_ord <= 0.0) continue;
    const double n = 2.0 * (2.0 * n_ord + 1.0);
    per_node += (5.2 * S + 4.0 + extra) * n * n * n;
  }
  constexpr double kNodes = 500.0;
  FrequencyCost c;
  c.blocks = 1.0;  // one work item per frequency (its nodes run in parallel inside)
  c.block_flops.assign(1, kNodes * per_node);
  const double n = 2.0 * (2.0 * N + 1.0);
  c.memory_bytes = 8.0 * n * n * (12.0 + 2.0 * S);
  return c;
}

}  // namespace roundtrip
