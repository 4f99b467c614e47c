// Two spheres on a common axis: round trip M = T1 U12 T2 U21 per azimuthal number m, with the
// translations by the plane-wave (Weyl) route of sphere_plate.cc.
//
// Physics and conventions (DEVELOPERS.md, "Sphere-sphere round trip"): imaginary frequency xi,
// kappa = n_m xi / c in the medium, radii R1, R2, gap L, centre distance d = R1 + R2 + L.
//
// Mirror argument (derived). Let P be the reflection through the plane half-way between the
// centres, acting on fields as the image operator of a perfect conductor in that plane (for the
// scalar Dirichlet field, phi -> -phi(Pr)). P maps outgoing waves about one centre onto outgoing
// waves about the other, and P T P is the T operator of the mirrored sphere. Then
//   M = T1 U12 T2 U21 = [T1 (U12 P)] [(P T2 P) (P U21)] = (T1 U)(T2' U),
// where U = U12 P = P U21 is exactly the sphere-plate translation-reflection of a perfect-mirror
// plate at centre distance D = d/2 (the image of an outgoing field is the field reflected by
// the mirror), and T2' is sphere 2 placed at sphere 1's centre (a sphere is mirror symmetric).
// In the symmetrised low-rank form of sphere_plate.cc, T_i U ~ S_i W_i C W_i^T with W_i the
// sphere-plate columns of sphere i (same nodes for both spheres: tau = 2 kappa D = kappa d) and
// C = c I, c = +-1 for the mirror (c^2 = 1 drops out). By Sylvester's identity
//   det(1 - M) = det(1 - G1 G2),  G_i = W_i^T S_i W_i   (momentum-node space, 2N x 2N for EM),
// each G_i symmetric; the node weights (one e^{-kappa d x} per translation) sit as square roots
// in the columns of both W_i. The L-dependence is only in the weights, Omega_j ~ e^{f1_j L}
// (f1 = -kappa x; at xi = 0, f1 = -t/d at fixed k = t/d), so
//   d/dL log det = -Tr[B K1], d2/dL2 = -Tr[B K2] - Tr[(B K1)^2],  B = (1 - K)^{-1}, K = G1 G2,
//   K1 = G1 F G2 + K F,  K2 = G1 F^2 G2 + 2 G1 F G2 F + K F^2,  F = diag(f1)
// (from K(L + h) ~ G1 e^{hF} G2 e^{hF}, a similarity of the exact K(L + h)). 1 - K is not
// symmetric; it is factorised by LU with partial pivoting (the general path).
// Equal spheres (same radius and material): G1 = G2 = G and
//   det(1 - G^2) = det(1 - G) det(1 + G) = det(1 - M_sp,PEC(L/2)) det(1 - M_sp,PMC(L/2)),
// the sphere facing a perfect electric and a perfect magnetic mirror at the mid-plane (PMC:
// r_TE = +1, r_TM = -1, i.e. minus the PEC round trip); for scalar fields Dirichlet and
// Neumann mirrors. With S = sigma I (sigma = sign T^TE = -sign T^TM at xi > 0 for ordinary
// spheres) this is det(1 - W^T W) det(1 + W^T W), both symmetric positive definite: two
// Cholesky factorisations of the banded node-space matrices of sphere-plate (the mirror path).
// At xi = 0 TE and TM decouple (W^T W block diagonal), so mixed static signs do not matter.
// The general path applied to equal spheres equals the mirror path to rounding
// (tests/sphere_sphere): this fixes the signs of both.
#include "solver/geometries/sphere_sphere.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <vector>

#include "solver/blocks/m_sum.h"
#include "solver/blocks/plane_wave_nodes.h"
#include "solver/blocks/sphere_block.h"
#include "solver/constants.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/models.h"
#include "solver/pfa/pfa.h"
#include "solver/planar/layered.h"
#include "solver/planar/planar.h"
#include "solver/scatterers/mie.h"
#include "solver/scatterers/sphere_body.h"

namespace roundtrip {
namespace {

using namespace blocks;

bool same_material(const MaterialPtr& a, const MaterialPtr& b) {
  if (a == b) return true;
  if (!a || !b) return false;
  return a->name() == b->name() && a->description() == b->description();
}

/// True if the non-zero signs of s are all equal.
bool uniform_sign(const Eigen::VectorXd& s) {
  double sigma = 0.0;
  for (Eigen::Index r = 0; r < s.size(); ++r) {
    if (s[r] == 0.0) continue;
    if (sigma == 0.0) sigma = s[r];
    if (s[r] != sigma) return false;
  }
  return true;
}

/// log det(1 - G1 G2) and its L-derivatives (general path, formulas in the file comment).
LogDetResult logdet_two_bodies(const LowRankBlock& b1, const LowRankBlock& b2,
                               DerivativeOrder order) {
  LogDetResult out;
  const Eigen::Index q = b1.W.cols();
  out.dimension = static_cast<int>(q);
  if (q == 0 || b1.W.rows() == 0 || b2.W.rows() == 0) return out;
  const Eigen::MatrixXd S1W = b1.s.asDiagonal() * b1.W, S2W = b2.s.asDiagonal() * b2.W;
  Eigen::MatrixXd G1(q, q), G2(q, q);
  G1.noalias() = b1.W.transpose() * S1W;
  G2.noalias() = b2.W.transpose() * S2W;
  Eigen::MatrixXd K(q, q);
  K.noalias() = G1 * G2;
  Eigen::MatrixXd A = -K;
  A.diagonal().array() += 1.0;
  const Eigen::PartialPivLU<Eigen::MatrixXd> lu(A);
  if (!positive_lu_log_det(lu, out)) return out;
  if (order == DerivativeOrder::kEnergy) return out;
  const Eigen::MatrixXd B = lu.inverse();
  const Eigen::VectorXd& f = b1.f1;
  Eigen::MatrixXd G1F2(q, q);  // G1 F G2
  G1F2.noalias() = G1 * f.asDiagonal() * G2;
  const Eigen::MatrixXd K1 = G1F2 + K * f.asDiagonal();
  out.s.d1 = -(B.array() * K1.transpose().array()).sum();
  if (order == DerivativeOrder::kForce) return out;
  const Eigen::VectorXd& f2 = b1.f2;  // = f1^2 (exponential weights)
  Eigen::MatrixXd K2(q, q);
  K2.noalias() = G1 * f2.asDiagonal() * G2;
  K2 += 2.0 * G1F2 * f.asDiagonal() + K * f2.asDiagonal();
  Eigen::MatrixXd BK1(q, q);
  BK1.noalias() = B * K1;
  out.s.d2 =
      -(B.array() * K2.transpose().array()).sum() - (BK1.array() * BK1.transpose().array()).sum();
  return out;
}

class SphereSphere final : public Geometry {
 public:
  explicit SphereSphere(SphereSphereOptions o) : o_(std::move(o)) {
    keep_large_blocks_in_heap();
    if (!o_.medium) o_.medium = make_vacuum();
    em_ = o_.field == FieldKind::kElectromagnetic;
    if (!em_) o_.shells1.clear(), o_.shells2.clear();  // scalar spheres are homogeneous
    body1_ = SphereBody{o_.radius1, o_.sphere1, o_.shells1};
    body2_ = SphereBody{o_.radius2, o_.sphere2, o_.shells2};
    bool same_shells = o_.shells1.size() == o_.shells2.size();
    for (std::size_t i = 0; same_shells && i < o_.shells1.size(); ++i)
      same_shells = o_.shells1[i].thickness == o_.shells2[i].thickness &&
                    same_material(o_.shells1[i].material, o_.shells2[i].material);
    const bool equal =
        o_.radius1 == o_.radius2 && same_shells && (!em_ || same_material(o_.sphere1, o_.sphere2));
    mirror_ = equal && o_.method == SphereSphereMethod::kAuto;
    r_eff_ = pfa_effective_radius(o_.radius1, o_.radius2);
    // PFA partner: half-spaces of the two materials (Derjaguin 1934 with R_eff). Scalar fields:
    // half of the electromagnetic perfect-conductor plates, as for sphere-plate.
    if (em_) {
      // A coated sphere's partner is the same films on a half-space of its core (pfa.h).
      pfa_plates_ = std::make_unique<PlatePlate>(sphere_pfa_partner(body1_),
                                                 sphere_pfa_partner(body2_), o_.medium);
    } else {
      pfa_plates_ = scalar_field_pfa_plates(o_.medium);
      pfa_scale_ = kScalarFieldPfaShare;
    }
  }

  ResultScale scale() const override { return ResultScale::kTotal; }
  bool parallel_inside() const override { return true; }
  bool sums_over_m() const override { return true; }  // every path ends in one sum_over_m
  std::string kind() const override { return "sphere-sphere"; }

  double frequency_scale(double gap) const override {
    return kSpeedOfLight / (2.0 * medium_index() * gap);
  }

  std::string describe() const override {
    if (!em_)
      return fmt::format("two {} spheres (R1 = {:.6g} m, R2 = {:.6g} m), scalar field",
                         to_string(o_.field), o_.radius1, o_.radius2);
    return fmt::format("spheres of {} (R1 = {:.6g} m) and {} (R2 = {:.6g} m) in {}",
                       body1_.describe(), o_.radius1, body2_.describe(), o_.radius2,
                       o_.medium->name());
  }

  std::map<std::string, double> truncation(double gap) const override {
    const double xi = frequency_scale(gap);
    // In double, never refused here (the plan refuses what cannot be indexed, solver/plan.h).
    const auto lmax_of = [&](double radius) {
      return o_.l_max > 0 ? double(o_.l_max)
                          : sphere_plate_lmax_required(radius, 0.5 * gap, xi / mirror_scale(gap),
                                                       o_.rel_tol, DerivativeOrder::kEnergy);
    };
    const double l1 = lmax_of(o_.radius1), l2 = lmax_of(o_.radius2);
    return {{"l_max1", l1},
            {"l_max2", l2},
            {"quadrature_nodes", momentum_node_count(std::max(l1, l2), o_.rel_tol,
                                                     xi / mirror_scale(gap), o_.nodes_per_unit)},
            {"mirror_symmetry", mirror_ ? 1.0 : 0.0}};
  }

  std::optional<PfaValues> pfa(double gap, const FrequencyRuleOptions& opts) const override {
    PfaValues v = sphere_plate_pfa(*pfa_plates_, r_eff_, gap, opts);
    v.energy *= pfa_scale_;
    v.force *= pfa_scale_;
    v.gradient *= pfa_scale_;
    return v;
  }
  std::optional<double> pfa_length() const override { return r_eff_; }

  Spectral at_frequency(double xi, double gap, DerivativeOrder order) const override {
    return at_frequency_within(xi, gap, order, o_.rel_tol);
  }

  Spectral at_frequency_within(double xi, double gap, DerivativeOrder order,
                               double rel_tol) const override {
    const Prepared p = prepare(xi, gap, order, rel_tol);
    return sum_over_m(
        p.mlimit, o_.m_max >= 0, order, p.tol, [&](int m) { return block_logdet(p, m, order); },
        [&](int m, const LogDetResult& r) {
          return fmt::format(
              "sphere-sphere: xi = {:.6g} rad/s, L = {:.6g} m, m = {}: {} (l_max = {}, {})", xi,
              gap, m, r.message, p.l1, p.l2);
        });
  }

  /// Geometry::cost (the banded node-space model of one sphere of the larger l_max: the mirror
  /// path) plus, for unequal spheres, the dense node-space work of logdet_two_bodies per block
  /// (q = 2 x quadrature nodes, n_i = 2 (l_max,i - max(1, m) + 1) rows of sphere i): the Grams
  /// G_i = W_i^T S_i W_i, 2 n_i q^2 each, K = G1 G2, 2 q^3, its LU, 2/3 q^3; for the derivatives
  /// the inverse, 2 q^3, and G1 F G2, B K1, K2, 2 q^3 each. Counted as gemm-equivalent flops
  /// (large dense products). Without them a frequency of 24 and 16 um gold spheres at 80 nm was
  /// modelled at 0.3 s and took 2.7 s (`check` then timed it whole instead of by parts).
  FrequencyCost cost(double gap, DerivativeOrder order, double rel_tol) const override {
    FrequencyCost c = Geometry::cost(gap, order, rel_tol);
    if (mirror_ || c.block_flops.empty() || c.blocks <= 0.0) return c;
    const auto t = truncation(gap);
    const double q = 2.0 * t.at("quadrature_nodes"), l1 = t.at("l_max1"), l2 = t.at("l_max2");
    const double stride = c.blocks / static_cast<double>(c.block_flops.size());
    for (std::size_t i = 0; i < c.block_flops.size(); ++i) {
      const double m = static_cast<double>(i) * stride;
      const double n1 = 2.0 * std::max(0.0, l1 - std::max(1.0, m) + 1.0);
      const double n2 = 2.0 * std::max(0.0, l2 - std::max(1.0, m) + 1.0);
      double f = 2.0 * q * q * (n1 + n2) + (2.0 + 2.0 / 3.0) * q * q * q;
      if (order != DerivativeOrder::kEnergy) f += 4.0 * q * q * q;
      if (order == DerivativeOrder::kGradient) f += 4.0 * q * q * q;
      c.block_flops[i] += std::max(stride, 1.0) * f;
    }
    return c;
  }

  /// The frequency as at_frequency_within computes it, split into its set-up (prepare: Mie
  /// amplitudes or static factors, momentum nodes) and the m blocks 0 .. mlimit.
  std::unique_ptr<FrequencyProbe> probe(double xi, double gap, DerivativeOrder order,
                                        double rel_tol) const override {
    return std::make_unique<Probe>(*this, prepare(xi, gap, order, rel_tol), order);
  }

 private:
  /// Per-frequency data shared by all m.
  struct Prepared {
    double xi = 0.0, gap = 0.0, tol = 0.0, d = 0.0;
    bool is_static = false;
    int l1 = 0, l2 = 0, mlimit = 0;
    NodeSet nodes1, nodes2;
    MieLog mie1, mie2;
    StaticSphere st1, st2;
  };

  Prepared prepare(double xi, double gap, DerivativeOrder order, double rel_tol) const {
    Prepared p;
    p.xi = xi;
    p.gap = gap;
    p.tol = rel_tol > 0.0 && rel_tol < 0.1 ? rel_tol : o_.rel_tol;
    const double tol = p.tol;
    p.is_static = xi == 0.0;
    const bool is_static = p.is_static;
    p.l1 = lmax_for(o_.radius1, gap, tol, xi, order);
    p.l2 = mirror_ ? p.l1 : lmax_for(o_.radius2, gap, tol, xi, order);
    const int l1 = p.l1, l2 = p.l2;
    p.d = o_.radius1 + o_.radius2 + gap;
    const double d = p.d;
    // One node set for both spheres (tau = kappa d).
    const auto& gl = momentum_rule_for(
        std::max(l1, l2), tol, is_static ? -1.0 : xi / mirror_scale(gap), o_.nodes_per_unit);
    NodeSet nodes;
    if (is_static) {
      fill_static_nodes(gl, d, nodes);
      // Exact xi = 0 factors, homogeneous or coated (sphere_body.h).
      p.st1 = sphere_static(body1_, o_.field, *o_.medium, l1);
      if (!mirror_) p.st2 = sphere_static(body2_, o_.field, *o_.medium, l2);
    } else {
      const double eps_m = o_.medium->epsilon(xi);
      const double kappa = std::sqrt(eps_m) * xi / kSpeedOfLight;
      fill_dynamic_nodes(gl, kappa * d, kappa, nodes);
      p.mie1 = sphere_mie(body1_, o_.field, xi, *o_.medium, l1);  // homogeneous or coated
      if (!mirror_) p.mie2 = sphere_mie(body2_, o_.field, xi, *o_.medium, l2);
    }
    // The mirror's reflection factor c = +-1 drops out of G1 G2 and of det(1 -+ W^T W).
    std::fill(nodes.c_te.begin(), nodes.c_te.end(), 1.0);
    std::fill(nodes.c_tm.begin(), nodes.c_tm.end(), 1.0);

    // Balanced weights for unequal spheres: any split Omega = Omega_1^{1/2} Omega_2^{1/2} with
    // Omega_1 Omega_2 = Omega^2 leaves det(1 - G1 G2) unchanged (a diagonal similarity). Sphere
    // i's node-space reflection grows like e^{2 kappa R_i x}; with Omega_{1,2} = Omega
    // e^{-+kappa x (R1 - R2)} both G_i fall like e^{-kappa L x}, so that neither is lost below
    // the negligible level of the W entries nor dominates the LU in rounding. (At xi = 0 the
    // same with kappa x -> k = t/d.)
    p.nodes1 = nodes;
    p.nodes2 = std::move(nodes);
    if (!mirror_) {
      const double shift = o_.radius1 - o_.radius2;
      const double kappa = is_static ? 0.0 : std::sqrt(o_.medium->epsilon(xi)) * xi / kSpeedOfLight;
      for (std::size_t j = 0; j < p.nodes1.x.size(); ++j) {
        const double k_or_kx = is_static ? p.nodes1.x[j] / d : kappa * p.nodes1.x[j];
        p.nodes1.half_log_w[j] -= 0.5 * k_or_kx * shift;
        p.nodes2.half_log_w[j] += 0.5 * k_or_kx * shift;
      }
    }
    const int mcap = std::min(l1, l2);
    p.mlimit = o_.m_max >= 0 ? std::min(o_.m_max, mcap) : mcap;
    return p;
  }

  /// Block m's log det and its gap derivatives (the mirror path or the general one).
  LogDetResult block_logdet(const Prepared& p, int m, DerivativeOrder order) const {
    auto block = [&](int which, bool write_zeros) {
      const double R = which == 1 ? o_.radius1 : o_.radius2;
      const int l = which == 1 ? p.l1 : p.l2;
      const NodeSet& ns = which == 1 ? p.nodes1 : p.nodes2;
      if (p.is_static)
        return sphere_static_block(o_.field, m, R, p.d, l, ns, which == 1 ? p.st1 : p.st2, true);
      return sphere_dynamic_block(o_.field, m, l, ns, which == 1 ? p.mie1 : p.mie2, write_zeros);
    };
    if (mirror_) {
      const LowRankBlock b = block(1, false);
      if (p.is_static || uniform_sign(b.s)) {
        LogDetResult r = logdet_node_gram(b, 1.0, order, o_.node_solver);
        if (!r.ok) return r;
        const LogDetResult q = logdet_node_gram(b, -1.0, order, o_.node_solver);
        if (!q.ok) return q;
        r.s += q.s;
        return r;
      }
      // Mixed signs (not met for ordinary spheres): the general path.
      const LowRankBlock bz = block(1, true);
      return logdet_two_bodies(bz, bz, order);
    }
    return logdet_two_bodies(block(1, true), block(2, true), order);
  }

  class Probe final : public FrequencyProbe {
   public:
    Probe(const SphereSphere& g, Prepared p, DerivativeOrder order)
        : g_(g), p_(std::move(p)), order_(order) {}
    int blocks() const override { return p_.mlimit + 1; }
    Spectral block(int m) const override {
      const LogDetResult r = g_.block_logdet(p_, m, order_);
      if (!r.ok)
        throw std::runtime_error(
            fmt::format("sphere-sphere probe: xi = {:.6g} rad/s, m = {}: {}", p_.xi, m, r.message));
      return r.s;
    }

   private:
    const SphereSphere& g_;
    Prepared p_;
    DerivativeOrder order_;
  };

  double medium_index() const {
    const StaticLimit sm = o_.medium->static_limit();
    return sm.kind == StaticClass::kDielectric ? std::sqrt(sm.static_eps) : 1.0;
  }
  /// c / (2 n (L/2)): the frequency scale of the sphere-mirror problem at gap L/2, in which the
  /// cut-off model of sphere-plate was measured.
  double mirror_scale(double gap) const { return kSpeedOfLight / (medium_index() * gap); }

  /// Multipole cut-off of a sphere of radius R: the sphere-plate model (plane_wave_nodes.h) at
  /// the mirror gap L/2, exact for equal spheres by the mirror identity; used for each sphere
  /// of unequal pairs too (the transverse momenta are cut by e^{-kappa L x} there as well, and
  /// a sphere of radius R resolves them with l ~ kR). Checked by the l_max convergence tests.
  int lmax_for(double radius, double gap, double tol, double xi, DerivativeOrder order) const {
    if (o_.l_max > 0) return o_.l_max;
    return sphere_plate_lmax_model(radius, 0.5 * gap, xi / mirror_scale(gap), tol, order);
  }

  SphereSphereOptions o_;
  bool em_ = true;
  bool mirror_ = false;
  SphereBody body1_, body2_;  // radius, core and shells of each sphere
  double r_eff_ = 0.0;
  std::unique_ptr<PlatePlate> pfa_plates_;
  double pfa_scale_ = 1.0;
};

}  // namespace

std::string SphereSphereOptions::validate() const {
  if (!(radius1 > 0.0) || !std::isfinite(radius1))
    return fmt::format("radius of sphere 1 must be a positive length, got {} m", radius1);
  if (!(radius2 > 0.0) || !std::isfinite(radius2))
    return fmt::format("radius of sphere 2 must be a positive length, got {} m", radius2);
  if (!(rel_tol > 0.0 && rel_tol < 0.1))
    return fmt::format("rel_tol must lie in (0, 0.1), got {}", rel_tol);
  if (l_max < 0) return fmt::format("l_max must be >= 0 (0 = automatic), got {}", l_max);
  if (nodes_per_unit < 0)
    return fmt::format("nodes_per_unit must be >= 0 (0 = automatic), got {}", nodes_per_unit);
  if (field == FieldKind::kElectromagnetic) {
    if (!sphere1) return "material of sphere 1 is missing";
    if (!sphere2) return "material of sphere 2 is missing";
    if (auto p = SphereBody{radius1, sphere1, shells1}.validate(); !p.empty())
      return "sphere 1: " + p;
    if (auto p = SphereBody{radius2, sphere2, shells2}.validate(); !p.empty())
      return "sphere 2: " + p;
  }
  return {};
}

std::shared_ptr<Geometry> make_sphere_sphere(const SphereSphereOptions& options) {
  const std::string why = options.validate();
  if (!why.empty()) throw std::invalid_argument("sphere-sphere: " + why);
  return std::make_shared<SphereSphere>(options);
}

}  // namespace roundtrip
