// Sphere above a planar body: round-trip operator in the spherical multipole basis.
//
// Physics and conventions (derivation in DEVELOPERS.md, "Sphere-plate round trip"):
// imaginary frequency xi, kappa = n_m xi / c in the medium, D = R + L. Per azimuthal number m the
// round trip M = T U, T the Mie amplitudes (solver/scatterers/mie.h) and U the plate reflection
// between outgoing and regular multipoles, by the plane-wave (Weyl) expansion
// (Canaguier-Durand, Maia Neto, Lambrecht, Reynaud, PRA 82, 012511 (2010); Emig, J. Stat. Mech.
// (2008) P04007). With x = sqrt(k^2 + kappa^2)/kappa >= 1 and the real functions of x
//   Pt_l^m (solver/special/legendre.h),  p_lm = m Pt_l^m / s,  t_lm = m x Pt_l^m / s + Pt_l^{m+1},
//   s = sqrt(x^2 - 1),  a_l = sqrt((2l+1)(l-m)! / ((l+m)! l(l+1))),
// and after the similarity transforms sqrt|T| (.) sqrt|T|, (-1)^l and i on TM rows, the
// symmetric matrix is
//   M = sigma \int_1^inf dx e^{-2 kappa D x} [ r_TE(k) u(x) u(x)^T - r_TM(k) v(x) v(x)^T ],
//   u = (sqrt|T^TE_l| a_l t_lm ; sqrt|T^TM_l| a_l p_lm),  v = (sqrt|T^TE_l| a_l p_lm ;
//   sqrt|T^TM_l| a_l t_lm),  sigma = sign(T^TE) = -sign(T^TM)  (= -1 for ordinary spheres),
// k = kappa s. The x integral is done by Gauss-Laguerre in t = 2 kappa D (x - 1) (exact for a
// perfectly reflecting plate once N > l_max), so M = S W C W^T (solver/logdet/low_rank.h).
// Scalar fields: one block with a_l = sqrt((2l+1)(l-m)!/(l+m)!), Pt_l^m instead of t, p, l >= 0,
// and r = -1 (Dirichlet) or +1 (Neumann).
// xi = 0 is taken exactly (kappa -> 0 at fixed k): TE and TM decouple and
//   M_{l l'} = g_l g_l' (R/2D)^{l+l'+1} / sqrt((l-m)!(l+m)!(l'-m)!(l'+m)!)
//              \int_0^inf dt t^{l+l'} e^{-t} rho(t/2D),
// rho_TM = r_TM(0,k), rho_TE = -r_TE(0,k), g_l^2 from static_sphere(); for a Drude sphere over a
// Drude plate this is the matrix whose log det Bimonte & Emig, PRL 109, 160403 (2012) sum exactly.
// Ions in the medium (kappa_ion > 0; solver/planar/electrolyte.h): they screen the xi = 0 TM
// term only. For conductors the static TM fluctuations are those of the electrostatic potential
// with the conductors equipotential; with ions it obeys (nabla^2 - kappa^2) phi = 0 outside the
// bodies, the scalar Helmholtz equation at imaginary wave number kappa, with phi = 0 on the
// plate (its potential is fixed at infinity) and, at the isolated neutral sphere, phi = V on its
// surface with V free and zero net charge: the multipoles l >= 1 vanish there (Dirichlet,
// T_l = -i_l/k_l at kappa R) and the l = 0 part has zero flux (Neumann, T_0 = -i_0'/k_0';
// derived). So the screened n = 0 term is the scalar round trip above at kappa_0 = kappa with
// these amplitudes. As kappa -> 0, T_0 ~ (kappa R)^3 -> 0 and the l >= 1 of the electromagnetic
// static TM term remain. Checks (tests/sphere_plate/sphere_electrolyte_test.cc): kappa
// -> 0 gives the unscreened Drude n = 0 term (the Bessel kernel, static_bessel_kernel.h); R >> L
// gives the PFA of the screened plate-plate term (planar/electrolyte.h); the same scalar
// problem for two plates is that plate-plate term (r^2 = 1, e^{-2qL}). The static TE term of a
// Drude sphere or plate is zero, so the xi = 0 term is the screened TM one alone.
#include "solver/geometries/sphere_plate.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>
#include <vector>

#include "solver/blocks/m_sum.h"
#include "solver/blocks/plane_wave_nodes.h"
#include "solver/blocks/sphere_block.h"
#include "solver/constants.h"
#include "solver/geometries/plate_plate.h"
#include "solver/geometries/static_bessel_kernel.h"
#include "solver/logdet/low_rank.h"
#include "solver/materials/models.h"
#include "solver/pfa/pfa.h"
#include "solver/planar/layered.h"
#include "solver/scatterers/mie.h"
#include "solver/scatterers/sphere_body.h"
#include "solver/special/gauss_laguerre.h"
#include "solver/special/legendre.h"
#include "solver/special/momentum_rule.h"

namespace roundtrip {
namespace {

using namespace blocks;

class SpherePlate final : public Geometry {
 public:
  explicit SpherePlate(SpherePlateOptions o)
      : o_(std::move(o)), body_{o_.radius, o_.sphere, o_.shells} {
    keep_large_blocks_in_heap();
    if (!o_.medium) o_.medium = make_vacuum();
    // PFA partner: the plate facing a half-space of the sphere's material. Scalar fields: each
    // of Dirichlet and Neumann is half of the electromagnetic perfect-conductor plate-plate
    // energy (r^2 = 1 per polarisation), at every temperature.
    if (o_.field == FieldKind::kElectromagnetic) {
      // A coated sphere's partner is the same films on a half-space of the core (pfa.h).
      pfa_plates_ = std::make_unique<PlatePlate>(
          o_.plate, sphere_pfa_partner(SphereBody{o_.radius, o_.sphere, o_.shells}), o_.medium,
          o_.kappa_ion, 1e-13);
      pfa_scale_ = 1.0;
      if (o_.kappa_ion > 0.0 && std::isfinite(o_.kappa_ion)) {
        // The screened n = 0 term: the scalar Dirichlet problem at kappa_0 = kappa_ion, l >= 1,
        // in vacuum (kappa_0 = xi/c there), with this sphere's numerics.
        SpherePlateOptions d = o_;
        d.field = FieldKind::kDirichlet;
        d.neutral_sphere = true;
        d.medium = make_vacuum();
        d.kappa_ion = 0.0;
        d.shells.clear();
        screened_static_ = std::make_unique<SpherePlate>(d);
      }
    } else {
      pfa_plates_ = scalar_field_pfa_plates(o_.medium);
      pfa_scale_ = kScalarFieldPfaShare;
    }
  }

  ResultScale scale() const override { return ResultScale::kTotal; }
  bool parallel_inside() const override { return true; }
  bool sums_over_m() const override { return true; }  // every path ends in one sum_over_m
  std::string kind() const override { return "sphere-plate"; }

  double frequency_scale(double gap) const override {
    const StaticLimit sm = o_.medium->static_limit();
    const double nm = sm.kind == StaticClass::kDielectric ? std::sqrt(sm.static_eps) : 1.0;
    return kSpeedOfLight / (2.0 * nm * gap);
  }

  std::string describe() const override {
    if (o_.field != FieldKind::kElectromagnetic)
      return fmt::format("{} sphere (R = {:.6g} m) over a {} plate, scalar field{}",
                         to_string(o_.field), o_.radius, to_string(o_.field),
                         o_.neutral_sphere ? " (neutral sphere: zero-flux l = 0)" : "");
    std::string ions;
    if (o_.kappa_ion > 0.0)
      ions = fmt::format(" with ions (Debye length {:.4g} nm; static term screened)",
                         1e9 / o_.kappa_ion);
    return fmt::format("sphere of {} (R = {:.6g} m) over {} in {}{}", body_.describe(), o_.radius,
                       o_.plate->describe(), o_.medium->name(), ions);
  }

  /// At the case's rel_tol and xi = c/(2L) for the energy; derivatives and higher frequencies
  /// use more multipoles, terms asked for less accuracy fewer (lmax_for).
  std::map<std::string, double> truncation(double gap) const override {
    // In double: beyond kMaxMultipoleOrder (guards.h) the values are reported as they are (the
    // plan refuses them) instead of wrapping around in int.
    const double lmax = o_.l_max > 0 ? o_.l_max
                                     : sphere_plate_lmax_required(o_.radius, gap, 1.0, o_.rel_tol,
                                                                  DerivativeOrder::kEnergy);
    return {{"l_max", lmax},
            {"quadrature_nodes", momentum_node_count(lmax, o_.rel_tol, 1.0, o_.nodes_per_unit)}};
  }

  std::optional<PfaValues> pfa(double gap, const FrequencyRuleOptions& opts) const override;
  std::optional<double> pfa_length() const override { return o_.radius; }

  Spectral at_frequency(double xi, double gap, DerivativeOrder order) const override {
    return at_frequency_within(xi, gap, order, o_.rel_tol);
  }

  Spectral at_frequency_within(double xi, double gap, DerivativeOrder order,
                               double rel_tol) const override {
    // l_max, the momentum nodes and the m tail all follow tol.
    const double tol = rel_tol > 0.0 && rel_tol < 0.1 ? rel_tol : o_.rel_tol;
    const bool is_static = xi == 0.0;
    if (is_static && o_.kappa_ion > 0.0) {       // ions: the screened problem (top of this file)
      if (!screened_static_) return Spectral{};  // kappa = inf: complete screening
      return screened_static_->at_frequency_within(o_.kappa_ion * kSpeedOfLight, gap, order, tol);
    }
    if (is_static)
      if (const auto s = static_closed_form(gap, tol, order)) return *s;
    const int lmax = lmax_for(gap, tol, xi, order);
    // Per-frequency data shared by all m.
    NodeSet nodes;
    MieLog mie;
    StaticSphere st;
    if (is_static)
      prepare_static(gap, lmax, tol, nodes, st);
    else
      prepare_dynamic(xi, gap, lmax, tol, nodes, mie);

    const int mlimit = o_.m_max >= 0 ? std::min(o_.m_max, lmax) : lmax;
    return sum_over_m(mlimit, order, tol, xi, gap, lmax, [&](int m) {
      std::string mismatch;
      const LowRankBlock b =
          is_static ? sphere_static_block(o_.field, m, o_.radius, 2.0 * (o_.radius + gap), lmax,
                                          nodes, st, true)
                    : build_dynamic(m, lmax, nodes, mie, mismatch);
      if (!mismatch.empty()) return LogDetResult{{}, false, mismatch, 0};
      return logdet_one_minus(b, order, o_.node_solver);
    });
  }

  /// The frequency as at_frequency_within computes it, split into the set-up (prepare_dynamic
  /// or prepare_static: Mie amplitudes, nodes, plate reflections) and the m blocks 0 .. mlimit.
  /// The static closed form (one Bessel-kernel matrix per m, cheap) is not split.
  std::unique_ptr<FrequencyProbe> probe(double xi, double gap, DerivativeOrder order,
                                        double rel_tol) const override {
    const double tol = rel_tol > 0.0 && rel_tol < 0.1 ? rel_tol : o_.rel_tol;
    if (xi == 0.0 && static_closed_form_applies(gap, tol, order)) return nullptr;
    if (o_.w_build != WBuild::kBand) return nullptr;
    auto p = std::make_unique<Probe>(*this, xi, gap, order, tol);
    return p;
  }

  /// Spheres over plates that differ only in materials (the points of a material scan): same
  /// radius, shell thicknesses, field and numerics. The medium is compared at each frequency.
  bool shares_frequency_work_with(const Geometry& other) const override {
    const auto* p = dynamic_cast<const SpherePlate*>(&other);
    if (p == nullptr || p == this) return false;
    const SpherePlateOptions &a = o_, &b = p->o_;
    if (a.radius != b.radius || a.field != b.field || a.rel_tol != b.rel_tol ||
        a.kappa_ion != b.kappa_ion || a.neutral_sphere != b.neutral_sphere || a.l_max != b.l_max ||
        a.m_max != b.m_max || a.nodes_per_unit != b.nodes_per_unit ||
        a.node_solver != b.node_solver || a.w_build != WBuild::kBand ||
        b.w_build != WBuild::kBand || a.shells.size() != b.shells.size())
      return false;
    for (std::size_t i = 0; i < a.shells.size(); ++i)
      if (a.shells[i].thickness != b.shells[i].thickness) return false;
    return true;
  }

  /// xi > 0: l_max, the momentum nodes x_j and their weights depend on xi, L, rel_tol and the
  /// medium only, so the spheres share them and the Legendre recurrences of their W columns
  /// (sphere_dynamic_blocks: one recurrence per node over the union of the rows the spheres
  /// need; measured ~20 % of a frequency's time at R/L = 100). Mie amplitudes, plate
  /// reflections and the log dets are each sphere's own, and each m sum stops by its own test
  /// (sum_over_m_many), so every value equals its at_frequency_within up to rounding.
  std::vector<Spectral> at_frequency_shared(
      double xi, double gap, DerivativeOrder order, double rel_tol,
      const std::vector<const Geometry*>& others) const override {
    std::vector<const SpherePlate*> all{this};
    bool together = xi > 0.0 && o_.w_build == WBuild::kBand;
    for (const Geometry* g : others) {
      const auto* p = dynamic_cast<const SpherePlate*>(g);
      together = together && p != nullptr && shares_frequency_work_with(*p) &&
                 p->o_.medium->epsilon(xi) == o_.medium->epsilon(xi) &&
                 p->frequency_scale(gap) == frequency_scale(gap);
      all.push_back(p);
    }
    if (!together) return Geometry::at_frequency_shared(xi, gap, order, rel_tol, others);
    const double tol = rel_tol > 0.0 && rel_tol < 0.1 ? rel_tol : o_.rel_tol;
    const int lmax = lmax_for(gap, tol, xi, order);
    const int K = static_cast<int>(all.size());
    std::vector<NodeSet> nodes(K);
    std::vector<MieLog> mie(K);
    for (int k = 0; k < K; ++k) all[k]->prepare_dynamic(xi, gap, lmax, tol, nodes[k], mie[k]);
    const int mlimit = o_.m_max >= 0 ? std::min(o_.m_max, lmax) : lmax;
    return blocks::sum_over_m_many(
        K, mlimit, o_.m_max >= 0, order, tol,
        [&](int m, const std::vector<char>& active) {
          std::vector<const NodeSet*> np;
          std::vector<const MieLog*> mp;
          std::vector<int> which;
          for (int k = 0; k < K; ++k)
            if (active[k]) np.push_back(&nodes[k]), mp.push_back(&mie[k]), which.push_back(k);
          std::vector<LowRankBlock> b = sphere_dynamic_blocks(o_.field, m, lmax, np, mp, false);
          std::vector<LogDetResult> r(K);
          for (std::size_t i = 0; i < which.size(); ++i)
            r[which[i]] = logdet_one_minus(b[i], order, o_.node_solver);
          return r;
        },
        [&](int k, int m, const LogDetResult& r) {
          return fmt::format(
              "sphere-plate ({}): xi = {:.6g} rad/s, L = {:.6g} m, m = {}: {} (l_max = {})",
              all[k]->describe(), xi, gap, m, r.message, lmax);
        });
  }

  /// Sum over m of the block log dets (solver/blocks/m_sum.h).
  template <class BlockLogDet>
  Spectral sum_over_m(int mlimit, DerivativeOrder order, double tol, double xi, double gap,
                      int lmax, BlockLogDet&& block) const {
    return blocks::sum_over_m(
        mlimit, o_.m_max >= 0, order, tol, block, [&](int m, const LogDetResult& r) {
          return fmt::format(
              "sphere-plate: xi = {:.6g} rad/s, L = {:.6g} m, m = {}: {} (l_max = {})", xi, gap, m,
              r.message, lmax);
        });
  }

  /// xi = 0 with the multipole sum done in closed form where the static sphere factor is 1 for
  /// every l and the plate's static reflection is the same for all k (static_bessel_kernel.h):
  /// the TM channel of conducting spheres and the Dirichlet sphere. There the only cut-offs are
  /// the momentum nodes and m (no l_max); the other channel (TE of perfect-conductor and
  /// plasma-model spheres), if it is not zero, keeps the multipole path. TE and TM decouple at
  /// xi = 0, so their log dets add. A fixed l_max in the options keeps the multipole path.
  std::optional<Spectral> static_closed_form(double gap, double tol, DerivativeOrder order) const {
    if (o_.l_max > 0 || o_.field == FieldKind::kNeumann) return std::nullopt;
    const bool em = o_.field == FieldKind::kElectromagnetic;
    // g_l^2 = 1 for every l (not only l <= l_max) needs a conducting outer surface; a coated
    // sphere whose g_l^2 is 1 to rounding up to l_max but not beyond must keep the multipoles.
    if (em && !static_tm_is_unit(body_)) return std::nullopt;
    const int lmax = lmax_for(gap, tol, 0.0, order);
    NodeSet nodes;
    StaticSphere st;
    prepare_static(gap, lmax, tol, nodes, st);
    const std::vector<double>& g2 = em ? st.g2_tm : st.g2_te;
    for (int l = em ? 1 : 0; l <= lmax; ++l)
      if (g2[l] != 1.0) return std::nullopt;
    const std::vector<double>& c = em ? nodes.c_tm : nodes.c_te;
    for (double v : c)
      if (!(v > 0.0) || v != c.front()) return std::nullopt;
    bool te_left = false;
    if (em)
      for (int l = 1; l <= lmax; ++l) te_left = te_left || st.g2_te[l] != 0.0;

    const double D = o_.radius + gap;
    const int m_cap = o_.m_max >= 0 ? o_.m_max : static_m_cap(o_.radius, gap, tol);
    std::vector<double> log_w(nodes.x.size());
    for (std::size_t j = 0; j < log_w.size(); ++j) log_w[j] = 2.0 * nodes.half_log_w[j];
    const StaticBesselKernel kernel(nodes.x, log_w, o_.radius, D, c.front(), em, m_cap);
    const Eigen::Map<const Eigen::VectorXd> f1(nodes.f1.data(), nodes.f1.size()),
        f2(nodes.f2.data(), nodes.f2.size());
    const int mlimit = te_left ? std::min(m_cap, lmax) : m_cap;
    return sum_over_m(mlimit, order, tol, 0.0, gap, lmax, [&](int m) {
      LogDetResult r = logdet_node_matrix(kernel.one_minus(m), f1, f2, order, o_.node_solver);
      if (r.ok && te_left) {
        const LogDetResult te =
            logdet_one_minus(sphere_static_block(o_.field, m, o_.radius, 2.0 * (o_.radius + gap),
                                                 lmax, nodes, st, false),
                             order, o_.node_solver);
        if (!te.ok) return te;
        r.s += te.s;
      }
      return r;
    });
  }

  /// Multipole cut-off for s(xi) and its first `order` gap derivatives to relative accuracy tol.
  /// Measured (Drude gold, R/L = 20 ... 300; tests/sphere_plate, LmaxMeetsTheTolerance...): near
  /// contact the error of derivative k falls like
  ///   B_k(u) exp(-alpha_k(u) l_max L/R),  u = xi / xi_c (xi_c = c/(2 n L)),
  ///   alpha_k = a_k / (1 + u/40), a = 2.0, 1.85, 1.7,  B_k = max(C_k, 1.2 (1 + u)^2), C = 1, 8, 20
  /// (k = 0, 1, 2: E, dE/dL, d2E/dL2), independent of R/L: the force gradient needs ~1.5 R/L more
  /// multipoles than the energy, and high frequencies converge more slowly. Far away the error
  /// falls like Z^l_max, Z = exp(-mu), cosh mu = 1 + L/R (bispherical parameter of Bimonte &
  /// Emig 2012). u is capped at 10 (the measured range): beyond it s(xi) carries less than ~1e-3
  /// of any frequency sum (it falls like e^-u), and the T = 0 quadrature samples u up to ~1e3.
  int lmax_for(double gap, double tol, double xi = 0.0,
               DerivativeOrder order = DerivativeOrder::kEnergy) const {
    if (o_.l_max > 0) return o_.l_max;
    return sphere_plate_lmax_model(o_.radius, gap, xi / frequency_scale(gap), tol, order);
  }

  /// Nodes of the k-integral: composite Gauss-Legendre in sqrt(t) resolving integrands of
  /// degree 2 l_max (solver/special/momentum_rule.h). The log det is less sensitive than single
  /// integrals. Measured relative error of s, ds/dL, d2s/dL2 against 6-8 nodes per unit (Drude
  /// gold and PEC): with 2 nodes per unit, <= 3e-9 at R/L = 100 ... 400 and u = xi/xi_c >= 0.3,
  /// but 1.5e-6 at R/L = 10, u = 0.1, and ~1e-5 as u -> 0, where the kernel sharpens towards the
  /// static limit; 3 per unit leave ~1e-7 there, and the n = 0 Bessel kernel needs 3 for 1e-8
  /// and 4 for 3e-11 (static_bessel_kernel.h). Hence 2 per unit for rel_tol >= 1e-4 at
  /// u >= 0.1 (7x margin at worst), else 3 (rel_tol >= 1e-5), 4 (>= 1e-7), 6. Checked by
  /// SpherePlate.MomentumNodesMeetTheTolerance. u < 0 means static (xi = 0). An explicit
  /// nodes_per_unit in the options wins.
  const special::GaussLaguerreRule& momentum_rule_for(int lmax, double tol, double u) const {
    return blocks::momentum_rule_for(lmax, tol, u, o_.nodes_per_unit);
  }
  int nodes_for(int lmax, double tol, double u) const {
    return static_cast<int>(momentum_rule_for(lmax, tol, u).nodes.size());
  }

 private:
  class Probe final : public FrequencyProbe {
   public:
    Probe(const SpherePlate& g, double xi, double gap, DerivativeOrder order, double tol)
        : g_(g), xi_(xi), gap_(gap), order_(order), lmax_(g.lmax_for(gap, tol, xi, order)) {
      if (xi == 0.0)
        g.prepare_static(gap, lmax_, tol, nodes_, st_);
      else
        g.prepare_dynamic(xi, gap, lmax_, tol, nodes_, mie_);
      mlimit_ = g.o_.m_max >= 0 ? std::min(g.o_.m_max, lmax_) : lmax_;
    }
    int blocks() const override { return mlimit_ + 1; }
    Spectral block(int m) const override {
      const LowRankBlock b =
          xi_ == 0.0 ? sphere_static_block(g_.o_.field, m, g_.o_.radius,
                                           2.0 * (g_.o_.radius + gap_), lmax_, nodes_, st_, true)
                     : sphere_dynamic_block(g_.o_.field, m, lmax_, nodes_, mie_, false);
      const LogDetResult r = logdet_one_minus(b, order_, g_.o_.node_solver);
      if (!r.ok)
        throw std::runtime_error(
            fmt::format("sphere-plate probe: xi = {:.6g} rad/s, m = {}: {}", xi_, m, r.message));
      return r.s;
    }

   private:
    const SpherePlate& g_;
    double xi_, gap_;
    DerivativeOrder order_;
    int lmax_, mlimit_ = 0;
    NodeSet nodes_;
    MieLog mie_;
    StaticSphere st_;
  };

  /// True if static_closed_form(gap, tol, order) returns a value (not the multipole path).
  bool static_closed_form_applies(double gap, double tol, DerivativeOrder order) const {
    if (o_.l_max > 0 || o_.field == FieldKind::kNeumann) return false;
    const bool em = o_.field == FieldKind::kElectromagnetic;
    if (em && !static_tm_is_unit(body_)) return false;
    const int lmax = lmax_for(gap, tol, 0.0, order);
    NodeSet nodes;
    StaticSphere st;
    prepare_static(gap, lmax, tol, nodes, st);
    const std::vector<double>& g2 = em ? st.g2_tm : st.g2_te;
    for (int l = em ? 1 : 0; l <= lmax; ++l)
      if (g2[l] != 1.0) return false;
    const std::vector<double>& c = em ? nodes.c_tm : nodes.c_te;
    for (double v : c)
      if (!(v > 0.0) || v != c.front()) return false;
    return true;
  }

  void prepare_dynamic(double xi, double gap, int lmax, double tol, NodeSet& nodes,
                       MieLog& mie) const {
    const double eps_m = o_.medium->epsilon(xi);
    const double kappa = std::sqrt(eps_m) * xi / kSpeedOfLight;
    const double D = o_.radius + gap;
    const bool em = o_.field == FieldKind::kElectromagnetic;
    mie = sphere_mie(body_, o_.field, xi, *o_.medium, lmax);  // homogeneous or coated
    if (!em && o_.neutral_sphere) {
      // The isolated neutral conductor (top of this file): l = 0 takes the zero-flux (Neumann)
      // amplitude -i_0'/k_0' at kappa R, l >= 1 stay Dirichlet.
      const MieLog n = mie_imaginary(FieldKind::kNeumann, false, kappa * o_.radius, 1.0, 0);
      mie.log_abs_te[0] = n.log_abs_te[0];
      mie.sign_te[0] = n.sign_te[0];
    }

    const auto& gl = momentum_rule_for(lmax, tol, xi / frequency_scale(gap));
    const int N = static_cast<int>(gl.nodes.size());
    const double tau = 2.0 * kappa * D;
    std::unique_ptr<PlanarAtFrequency> plate;
    if (em) plate = o_.plate->at(xi, *o_.medium);
    fill_dynamic_nodes(gl, tau, 2.0 * kappa, nodes);
    for (int j = 0; j < N; ++j) {
      const double t = gl.nodes[j];
      if (em) {
        const double k = kappa * std::sqrt((t / tau) * (2.0 + t / tau));
        const Reflection r = plate->reflect(k);
        nodes.c_te[j] = r.te;
        nodes.c_tm[j] = -r.tm;
      } else {
        nodes.c_te[j] = o_.field == FieldKind::kDirichlet ? -1.0 : 1.0;
      }
    }
  }

  /// W block m as SpherePlateOptions::w_build says; `mismatch` describes a failed cross-check.
  LowRankBlock build_dynamic(int m, int lmax, const NodeSet& nodes, const MieLog& mie,
                             std::string& mismatch) const {
    if (o_.w_build == WBuild::kFullRange)
      return sphere_dynamic_block_full_range(o_.field, m, lmax, nodes, mie);
    // The checked build writes the zeros too, so that they can be compared.
    const bool checked = o_.w_build == WBuild::kBandCheckedAgainstFullRange;
    LowRankBlock b = sphere_dynamic_block(o_.field, m, lmax, nodes, mie, checked);
    if (checked)
      mismatch = compare_sphere_blocks(
          b, sphere_dynamic_block_full_range(o_.field, m, lmax, nodes, mie), m);
    return b;
  }

  void prepare_static(double gap, int lmax, double tol, NodeSet& nodes, StaticSphere& st) const {
    const bool em = o_.field == FieldKind::kElectromagnetic;
    st = sphere_static(body_, o_.field, *o_.medium, lmax);  // exact xi = 0, homogeneous or coated
    // Integrands t^{l+l'} e^{-t} rho: the same sqrt(t)-panel rule as at xi > 0.
    const auto& gl = momentum_rule_for(lmax, tol, -1.0);
    const int N = static_cast<int>(gl.nodes.size());
    const double D = o_.radius + gap;
    std::unique_ptr<PlanarAtFrequency> plate;
    if (em) plate = o_.plate->at(0.0, *o_.medium);
    fill_static_nodes(gl, D, nodes);  // d/dL e^{-2kD} = -2k e^{-2kD}, k = t/(2D)
    for (int j = 0; j < N; ++j) {
      const double t = gl.nodes[j];
      if (em) {
        const Reflection r = plate->reflect(t / (2.0 * D));
        nodes.c_te[j] = -r.te;
        nodes.c_tm[j] = r.tm;
      } else {
        nodes.c_te[j] = 1.0;  // Dirichlet: -r = 1; Neumann: r = 1
      }
    }
  }

  SpherePlateOptions o_;
  SphereBody body_;  // radius, sphere (core) and shells of o_
  std::unique_ptr<PlatePlate> pfa_plates_;
  double pfa_scale_ = 1.0;
  std::unique_ptr<SpherePlate> screened_static_;  // kappa_ion > 0: the screened n = 0 problem
};

std::optional<PfaValues> SpherePlate::pfa(double gap, const FrequencyRuleOptions& opts) const {
  PfaValues v = sphere_plate_pfa(*pfa_plates_, o_.radius, gap, opts);
  v.energy *= pfa_scale_;
  v.force *= pfa_scale_;
  v.gradient *= pfa_scale_;
  return v;
}

}  // namespace

std::string SpherePlateOptions::validate() const {
  if (!(radius > 0.0) || !std::isfinite(radius))
    return fmt::format("sphere radius must be a positive length, got {} m", radius);
  if (!(rel_tol > 0.0 && rel_tol < 0.1))
    return fmt::format("rel_tol must lie in (0, 0.1), got {}", rel_tol);
  if (l_max < 0) return fmt::format("l_max must be >= 0 (0 = automatic), got {}", l_max);
  if (nodes_per_unit < 0)
    return fmt::format("nodes_per_unit must be >= 0 (0 = automatic), got {}", nodes_per_unit);
  if (field == FieldKind::kElectromagnetic) {
    // the sphere: material set; shells with materials, 0 < thickness, sum < radius
    const std::string why = SphereBody{radius, sphere, shells}.validate();
    if (!why.empty()) return why;
    if (!plate) return "plate is missing";
  }
  if (neutral_sphere && field != FieldKind::kDirichlet)
    return "neutral_sphere applies to the scalar Dirichlet field only";
  if (!(kappa_ion >= 0.0)) return fmt::format("the Debye constant {} 1/m must be >= 0", kappa_ion);
  if (kappa_ion > 0.0) {
    // The screened n = 0 term is built for conductors: the electrostatic Dirichlet problem.
    const char* why_not =
        "ions in the medium are built for a conducting sphere over a conducting plate (Drude-like "
        "metals: the screened static term is then the Dirichlet problem of (nabla^2 - kappa^2) "
        "phi = 0; sphere_plate.cc)";
    if (field != FieldKind::kElectromagnetic)
      return fmt::format("{}; not for scalar fields", why_not);
    if (!shells.empty()) return fmt::format("{}; not for coated spheres", why_not);
    const StaticLimit sl = sphere->static_limit();
    if (sl.kind != StaticClass::kDrudeConductor)
      return fmt::format("{}; the sphere's {} is {}", why_not, sphere->name(),
                         sl.kind == StaticClass::kDielectric
                             ? "a dielectric (its screened static response is not built)"
                             : "a plasma-model or perfect conductor (static TE response)");
    const MaterialPtr m = medium ? medium : make_vacuum();
    const auto r = plate->at(0.0, *m);
    for (double k : {1e3, 1e6, 1e8, 1e10}) {
      const Reflection rk = r->reflect(k);
      if (rk.tm != 1.0 || rk.te != 0.0)
        return fmt::format(
            "{}; the plate ({}) does not reflect static TM fields completely without a static TE "
            "response (a dielectric, plasma-model or perfect-conductor plate)",
            why_not, plate->describe());
    }
  }
  return {};
}

std::shared_ptr<Geometry> make_sphere_plate(const SpherePlateOptions& options) {
  const std::string why = options.validate();
  if (!why.empty()) throw std::invalid_argument("sphere-plate: " + why);
  return std::make_shared<SpherePlate>(options);
}

}  // namespace roundtrip
