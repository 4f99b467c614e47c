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
#include "solver/geometries/sphere_plate.h"

#include <fmt/format.h>
#include <omp.h>
#if defined(__GLIBC__)
#include <malloc.h>
#endif

#include <algorithm>
#include <cmath>
#include <exception>
#include <limits>
#include <mutex>
#include <stdexcept>
#include <vector>

#include "solver/constants.h"
#include "solver/geometries/plate_plate.h"
#include "solver/geometries/static_bessel_kernel.h"
#include "solver/guards.h"
#include "solver/logdet/low_rank.h"
#include "solver/materials/models.h"
#include "solver/pfa/pfa.h"
#include "solver/scatterers/mie.h"
#include "solver/special/gauss_laguerre.h"
#include "solver/special/legendre.h"
#include "solver/special/momentum_rule.h"

namespace roundtrip {
namespace {

constexpr double kNegInf = -std::numeric_limits<double>::infinity();
/// m-blocks computed per parallel batch; fixed so that the set of computed m (and hence the
/// result) does not depend on the thread count.
constexpr int kMBatch = 8;
/// W entries below e^kLogNegligible (~1.6e-18; |M| <= 1) are dropped (BandedWriter).
constexpr double kLogNegligible = -41.0;
/// The band search on the saddle-point estimate of Pt (error O(1/l) in the log) takes rows down
/// to this much below the negligible level; the exact values then confirm the ends.
constexpr double kEstimateMargin = 4.0;
/// Blocks with at most this many rows per group are computed over all rows.
constexpr int kWholeBlockRows = 64;

/// Quadrature nodes and everything about them that does not depend on m.
struct NodeSet {
  std::vector<double> x;           // dynamic: x_j >= 1; static: t_j
  std::vector<double> half_log_w;  // 1/2 log Omega_j
  std::vector<double> c_te, c_tm;  // reflection factors per node (see block builders)
  std::vector<double> f1, f2;      // dOmega/dL / Omega, d2Omega/dL2 / Omega
  void resize(std::size_t n) {
    for (auto* v : {&x, &half_log_w, &c_te, &c_tm, &f1, &f2}) v->resize(n);
  }
};

/// Logs of the continued Mie angular functions at one node x > 1 (log_s = log sqrt(x^2 - 1))
/// over some rows, from log Pt^m (P) and log Pt^{m+1} (P1): t = m x Pt^m / s + Pt^{m+1},
/// p = m Pt^m / s (both terms positive: log-sum-exp); m = 0: t = Pt^1, p = 0.
template <class In0, class In1, class OutT, class OutP>
void angular_logs(int m, double x, double log_s, const In0& P, const In1& P1, OutT&& lt,
                  OutP&& lp) {
  if (m == 0) {
    lt = P1;
    lp.setConstant(kNegInf);
    return;
  }
  lp = std::log(double(m)) - log_s + P;
  const Eigen::ArrayXd a = lp + std::log(x);
  const Eigen::ArrayXd hi = a.max(P1), lo = a.min(P1);
  lt = hi + (1.0 + (lo - hi).exp()).log();
}

/// Reflection factor and L-derivative factors of node j: column j (TE channel, or the scalar
/// field) and, for EM, column N + j (TM channel).
void set_node_coefficients(const NodeSet& nodes, int j, bool em, LowRankBlock& b) {
  const int N = static_cast<int>(nodes.x.size());
  b.c[j] = nodes.c_te[j];
  b.f1[j] = nodes.f1[j];
  b.f2[j] = nodes.f2[j];
  if (em) {
    b.c[N + j] = nodes.c_tm[j];
    b.f1[N + j] = nodes.f1[j];
    b.f2[N + j] = nodes.f2[j];
  }
}

/// Writes W entries from their logs into a zeroed block. Entries below e^{-41} (~1.6e-18;
/// |M| <= 1) are dropped, and each column's non-zero row range per row group (TE rows, TM rows)
/// is recorded: W is banded in (l, node), and the node-space Gram skips the zeros
/// (solver/logdet/low_rank.h). Measured: ~20 % of the entries are non-zero at R/L = 200.
class BandedWriter {
 public:
  /// write_zeros = false: entries outside the recorded ranges are left unset
  /// (LowRankBlock::zero_outside_ranges).
  BandedWriter(LowRankBlock& b, std::vector<int> group_start, bool write_zeros = true)
      : b_(b), write_zeros_(write_zeros) {
    b_.zero_outside_ranges = write_zeros;
    groups_ = static_cast<int>(group_start.size()) - 1;
    b_.group_start = std::move(group_start);
    b_.col_lo.assign(b_.W.cols() * groups_, std::numeric_limits<int>::max());
    b_.col_hi.assign(b_.W.cols() * groups_, 0);
  }
  /// Rows row0 .. row0 + logs.size() - 1 of column col from their logs; the negligible ones
  /// at either end are set to zero and fall outside the recorded band.
  void put_column(int col, int row0, int group, const Eigen::ArrayXd& logs) {
    const Eigen::Index n = logs.size();
    Eigen::Index first = 0, last = n;
    while (first < n && !(logs[first] > kLogNegligible)) ++first;
    while (last > first && !(logs[last - 1] > kLogNegligible)) --last;
    auto dst = b_.W.col(col).segment(row0, n);
    if (write_zeros_) {
      dst.head(first).setZero();
      dst.tail(n - last).setZero();
    }
    if (last > first) {
      // exp into an aligned temporary first: Eigen peels unaligned destinations element by
      // element (scalar std::exp), which would make the last bits depend on the buffer address.
      values_ = logs.segment(first, last - first).exp();
      dst.segment(first, last - first) = values_.matrix();
      int& lo = b_.col_lo[col * groups_ + group];
      int& hi = b_.col_hi[col * groups_ + group];
      lo = std::min<int>(lo, row0 + static_cast<int>(first));
      hi = std::max<int>(hi, row0 + static_cast<int>(last));
    }
  }

 private:
  LowRankBlock& b_;
  bool write_zeros_ = true;
  Eigen::ArrayXd values_;
  int groups_ = 1;
};

/// Each m block allocates matrices of several MiB; glibc serves those with mmap and returns them
/// at once, so every block paid its page faults again (40 % of the wall time was system time at
/// R/L = 1000). Keeping such blocks in the heap makes one frequency ~1.5x faster (measured at
/// R/L = 500). Process-wide and harmless for other code; done once.
void keep_large_blocks_in_heap() {
#if defined(__GLIBC__)
  static std::once_flag once;
  std::call_once(once, [] {
    mallopt(M_MMAP_THRESHOLD, 1 << 30);
    mallopt(M_TRIM_THRESHOLD, 1 << 30);
  });
#endif
}

class SpherePlate final : public Geometry {
 public:
  explicit SpherePlate(SpherePlateOptions o) : o_(std::move(o)) {
    keep_large_blocks_in_heap();
    if (!o_.medium) o_.medium = make_vacuum();
    // PFA partner: the plate facing a half-space of the sphere's material. Scalar fields: each
    // of Dirichlet and Neumann is half of the electromagnetic perfect-conductor plate-plate
    // energy (r^2 = 1 per polarisation), at every temperature.
    if (o_.field == FieldKind::kElectromagnetic) {
      pfa_plates_ = std::make_unique<PlatePlate>(o_.plate, make_half_space(o_.sphere), o_.medium);
      pfa_scale_ = 1.0;
    } else {
      const PlanarPtr pec = make_half_space(make_perfect_conductor());
      pfa_plates_ = std::make_unique<PlatePlate>(pec, pec, o_.medium);
      pfa_scale_ = 0.5;
    }
  }

  bool per_area() const override { return false; }
  bool parallel_inside() const override { return true; }
  std::string kind() const override { return "sphere-plate"; }

  double frequency_scale(double gap) const override {
    const StaticLimit sm = o_.medium->static_limit();
    const double nm = sm.kind == StaticClass::kDielectric ? std::sqrt(sm.static_eps) : 1.0;
    return kSpeedOfLight / (2.0 * nm * gap);
  }

  std::string describe() const override {
    if (o_.field != FieldKind::kElectromagnetic)
      return fmt::format("{} sphere (R = {:.6g} m) over a {} plate, scalar field",
                         to_string(o_.field), o_.radius, to_string(o_.field));
    return fmt::format("sphere of {} (R = {:.6g} m) over {} in {}", o_.sphere->name(), o_.radius,
                       o_.plate->describe(), o_.medium->name());
  }

  /// At the case's rel_tol and xi = c/(2L) for the energy; derivatives and higher frequencies
  /// use more multipoles, terms asked for less accuracy fewer (lmax_for).
  /// Computed in double: beyond kMaxMultipoleOrder (guards.h) the values are reported as they
  /// are (the plan refuses them) instead of wrapping around in int.
  std::map<std::string, double> truncation(double gap) const override {
    const double lmax =
        o_.l_max > 0 ? o_.l_max : lmax_required(gap, o_.rel_tol, frequency_scale(gap));
    if (lmax <= kMaxMultipoleOrder)
      return {{"l_max", lmax},
              {"quadrature_nodes", double(nodes_for(static_cast<int>(lmax), o_.rel_tol, 1.0))}};
    // The node count of momentum_rule (solver/special/momentum_rule.cc: panels of 10
    // Gauss-Legendre nodes, nodes_per_unit per unit of sqrt(t), up to sqrt(2 l_max + 1/2) + 8),
    // without building a rule that large.
    const double per_unit = nodes_per_unit_for(o_.rel_tol, 1.0);
    return {{"l_max", lmax},
            {"quadrature_nodes",
             10.0 * std::ceil((std::sqrt(2.0 * lmax + 0.5) + 8.0) * per_unit / 10.0)}};
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
      const LowRankBlock b = is_static ? static_block(m, gap, lmax, nodes, st, true)
                                       : build_dynamic(m, lmax, nodes, mie, mismatch);
      if (!mismatch.empty()) return LogDetResult{{}, false, mismatch, 0};
      return logdet_one_minus(b, order, o_.node_solver);
    });
  }

  /// Sum over m of the block log dets (+m and -m give the same block), in batches of kMBatch
  /// computed in parallel. The m terms fall off geometrically once m exceeds ~sqrt(R/L)
  /// (measured); the ratio r is estimated from each batch and the sum stops when the tail,
  /// last * r/(1-r), is below 0.1 tol.
  template <class BlockLogDet>
  Spectral sum_over_m(int mlimit, DerivativeOrder order, double tol, double xi, double gap,
                      int lmax, BlockLogDet&& block) const {
    Spectral total;
    std::vector<LogDetResult> batch(kMBatch);
    for (int m0 = 0; m0 <= mlimit; m0 += kMBatch) {
      const int m1 = std::min(mlimit + 1, m0 + kMBatch);
      // A cancellation request (guards.h) is seen before each block and inside the W builders;
      // exceptions may not leave an OpenMP region, so the first is kept and rethrown after it.
      // The frequency is then abandoned as a whole (never recorded). Polling changes no number.
      std::exception_ptr failure;
      std::mutex failure_mutex;
#pragma omp parallel for schedule(dynamic, 1)
      for (int m = m0; m < m1; ++m) {
        try {
          throw_if_cancelled();
          batch[m - m0] = block(m);
        } catch (...) {
          std::lock_guard<std::mutex> lock(failure_mutex);
          if (!failure) failure = std::current_exception();
        }
      }
      if (failure) std::rethrow_exception(failure);
      for (int m = m0; m < m1; ++m) {
        const LogDetResult& r = batch[m - m0];
        if (!r.ok)
          throw std::runtime_error(
              fmt::format("sphere-plate: xi = {:.6g} rad/s, L = {:.6g} m, m = {}: {} (l_max = {})",
                          xi, gap, m, r.message, lmax));
        total += r.s * (m == 0 ? 1.0 : 2.0);
      }
      if (o_.m_max >= 0 || m1 - m0 < 2) continue;
      bool done = true;
      for (int c = 0; c < 1 + static_cast<int>(order); ++c) {
        auto comp = [&](const Spectral& v) { return c == 0 ? v.value : (c == 1 ? v.d1 : v.d2); };
        const double first = std::abs(comp(batch[0].s)),
                     last = std::abs(comp(batch[m1 - m0 - 1].s));
        const double sum = std::abs(comp(total));
        if (last == 0.0) continue;
        const double r = std::pow(last / first, 1.0 / (m1 - m0 - 1));
        if (!(r < 0.95) || !(2.0 * last * r / (1.0 - r) <= 0.1 * tol * sum)) done = false;
      }
      if (done) break;
    }
    return total;
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
            logdet_one_minus(static_block(m, gap, lmax, nodes, st, false), order, o_.node_solver);
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
  /// l_max as a double (no int overflow at any R/L); lmax_for refuses values beyond
  /// kMaxMultipoleOrder with a message naming R and L.
  double lmax_required(double gap, double tol, double xi = 0.0,
                       DerivativeOrder order = DerivativeOrder::kEnergy) const {
    const double u = std::min(xi / frequency_scale(gap), 10.0);
    constexpr double kA[3] = {2.0, 1.85, 1.7};
    constexpr double kC[3] = {1.0, 8.0, 20.0};
    const int k = static_cast<int>(order);
    const double log_b_over_tol = std::log(std::max(kC[k], 1.2 * (1.0 + u) * (1.0 + u)) / tol);
    const double near = log_b_over_tol * (1.0 + u / 40.0) / kA[k] * o_.radius / gap;
    const double far = log_b_over_tol / std::acosh(1.0 + gap / o_.radius);
    return std::max(3.0, std::ceil(std::max(near, far)) + 3.0);
  }
  int lmax_for(double gap, double tol, double xi = 0.0,
               DerivativeOrder order = DerivativeOrder::kEnergy) const {
    if (o_.l_max > 0) return o_.l_max;
    const double lmax = lmax_required(gap, tol, xi, order);
    if (!(lmax <= kMaxMultipoleOrder))
      throw std::runtime_error(fmt::format(
          "sphere-plate: R = {:.6g} m at L = {:.6g} m (R/L = {:.3g}) needs l_max = {:.3g} "
          "multipoles, beyond the {:.0e} this program can handle",
          o_.radius, gap, o_.radius / gap, lmax, kMaxMultipoleOrder));
    return static_cast<int>(lmax);
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
  int nodes_per_unit_for(double tol, double u) const {
    int per_unit = tol >= 1e-5 ? 3 : (tol >= 1e-7 ? 4 : 6);
    if (u >= 0.1 && tol >= 1e-4) per_unit = 2;
    if (o_.nodes_per_unit > 0) per_unit = o_.nodes_per_unit;
    return per_unit;
  }
  const special::GaussLaguerreRule& momentum_rule_for(int lmax, double tol, double u) const {
    return special::momentum_rule(2 * lmax, nodes_per_unit_for(tol, u));
  }
  int nodes_for(int lmax, double tol, double u) const {
    return static_cast<int>(momentum_rule_for(lmax, tol, u).nodes.size());
  }

 private:
  void prepare_dynamic(double xi, double gap, int lmax, double tol, NodeSet& nodes,
                       MieLog& mie) const {
    const double eps_m = o_.medium->epsilon(xi);
    const double kappa = std::sqrt(eps_m) * xi / kSpeedOfLight;
    const double D = o_.radius + gap;
    const bool em = o_.field == FieldKind::kElectromagnetic;
    const bool pec = em && o_.sphere->is_perfect_conductor();
    const double n = (em && !pec) ? std::sqrt(o_.sphere->epsilon(xi) / eps_m) : 1.0;
    mie = mie_imaginary(o_.field, pec, kappa * o_.radius, n, lmax);

    const auto& gl = momentum_rule_for(lmax, tol, xi / frequency_scale(gap));
    const int N = static_cast<int>(gl.nodes.size());
    const double tau = 2.0 * kappa * D;
    std::unique_ptr<PlanarAtFrequency> plate;
    if (em) plate = o_.plate->at(xi, *o_.medium);
    nodes.resize(N);
    for (int j = 0; j < N; ++j) {
      const double t = gl.nodes[j];
      const double x = 1.0 + t / tau;
      nodes.x[j] = x;
      // \int_1^inf dx e^{-tau x} f(x) = (e^{-tau}/tau) \int_0^inf dt e^{-t} f(1 + t/tau)
      nodes.half_log_w[j] = 0.5 * (gl.log_weights[j] - tau - std::log(tau));
      nodes.f1[j] = -2.0 * kappa * x;
      nodes.f2[j] = 4.0 * kappa * kappa * x * x;
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
    if (o_.w_build == WBuild::kFullRange) return dynamic_block_full_range(m, lmax, nodes, mie);
    // The checked build writes the zeros too, so that they can be compared.
    const bool checked = o_.w_build == WBuild::kBandCheckedAgainstFullRange;
    LowRankBlock b = dynamic_block(m, lmax, nodes, mie, checked);
    if (checked) mismatch = compare_blocks(b, dynamic_block_full_range(m, lmax, nodes, mie), m);
    return b;
  }

  /// Empty if a and r have the same recorded bands, the same zero entries and entries within
  /// 1e-9 relative, else what differs first. Entries are exponentials of sums of logs of size up
  /// to ~1e4: the recurrence from l = m (dynamic_block_full_range) carries up to ~4e-11 of
  /// log Pt at l ~ 8000 (tests/special/legendre_band_test.cc), and the two paths differ by up
  /// to 1e-10 (R/L = 200) and 1e-9 (R/L = 1000, measured).
  static std::string compare_blocks(const LowRankBlock& a, const LowRankBlock& r, int m) {
    constexpr double kEntryTol = 1e-9;
    if (a.W.rows() != r.W.rows() || a.W.cols() != r.W.cols() || a.group_start != r.group_start)
      return fmt::format("m = {}: block shapes differ", m);
    const int groups = static_cast<int>(a.group_start.size()) - 1;
    for (Eigen::Index c = 0; c < a.W.cols(); ++c)
      for (int g = 0; g < groups; ++g) {
        const std::size_t k = c * groups + g;
        const bool ea = a.col_hi[k] <= a.col_lo[k], er = r.col_hi[k] <= r.col_lo[k];
        if (ea != er || (!ea && (a.col_lo[k] != r.col_lo[k] || a.col_hi[k] != r.col_hi[k])))
          return fmt::format("m = {}, column {}, group {}: band [{}, {}) but [{}, {}) over all l",
                             m, c, g, a.col_lo[k], a.col_hi[k], r.col_lo[k], r.col_hi[k]);
      }
    for (Eigen::Index c = 0; c < a.W.cols(); ++c)
      for (Eigen::Index i = 0; i < a.W.rows(); ++i) {
        const double x = a.W(i, c), y = r.W(i, c);
        if ((x == 0.0) != (y == 0.0) || !(std::abs(x - y) <= kEntryTol * std::abs(y)))
          return fmt::format("m = {}, W({}, {}) = {:.17g} but {:.17g} over all l", m, i, c, x, y);
      }
    if (a.s != r.s || a.c != r.c || a.f1 != r.f1 || a.f2 != r.f2)
      return fmt::format("m = {}: signs or node factors differ", m);
    return {};
  }

  /// Row data of block m shared by both builders: signs S, and per row the log of the factor
  /// a_l sqrt|T_l| for TE (hte) and TM (htm).
  void dynamic_rows(int m, int lmax, const MieLog& mie, LowRankBlock& b, Eigen::ArrayXd& hte,
                    Eigen::ArrayXd& htm) const {
    const bool em = o_.field == FieldKind::kElectromagnetic;
    const int lmin = em ? std::max(1, m) : m;
    const int nl = lmax - lmin + 1;
    hte.resize(nl);
    htm.resize(nl);
    for (int l = lmin; l <= lmax; ++l) {
      double la = std::log(2.0 * l + 1.0) + std::lgamma(l - m + 1.0) - std::lgamma(l + m + 1.0);
      if (em) la -= std::log(double(l) * (l + 1.0));
      const int i = l - lmin;
      hte[i] = 0.5 * la + 0.5 * mie.log_abs_te[l];
      if (em) {
        htm[i] = 0.5 * la + 0.5 * mie.log_abs_tm[l];
        b.s[i] = mie.sign_te[l];
        b.s[nl + i] = -mie.sign_tm[l];
      } else {
        b.s[i] = mie.sign_te[l];
      }
    }
  }

  /// W of block m, column by column over the band of rows where the column is not negligible
  /// (BandedWriter), at a cost ~ (nodes) x (band width) instead of (nodes) x l_max (the band is
  /// ~20 % of the rows at R/L = 1000; the zeros outside it are still written). Nodes are taken by
  /// increasing x; the rows tried for a node are the previous node's band with a margin (for the
  /// first node, the rows where the saddle-point estimate legendre_log_estimate is within
  /// kEstimateMargin of the negligible level). They are computed exactly by the recurrence
  /// started at their lower edge (legendre_log_range_pair) and accepted only if every column is
  /// below the negligible level at both ends and falls off outwards there; otherwise the rows
  /// are extended and computed again. This assumes each column's log is unimodal in l (Pt grows
  /// geometrically, a_l sqrt|T_l| falls ever faster once l > kappa R); the cross-check
  /// WBuild::kBandCheckedAgainstFullRange (tests/sphere_plate/banded_w_test.cc) finds the same
  /// recorded bands and zeros as dynamic_block_full_range, and entries within rounding.
  /// write_zeros = false leaves W unset outside the recorded bands (no n x q zero fill; the
  /// node-space log det reads only the bands, low_rank.h).
  LowRankBlock dynamic_block(int m, int lmax, const NodeSet& nodes, const MieLog& mie,
                             bool write_zeros) const {
    const bool em = o_.field == FieldKind::kElectromagnetic;
    const int lmin = em ? std::max(1, m) : m;
    const int nl = lmax - lmin + 1;
    const int N = static_cast<int>(nodes.x.size());
    LowRankBlock b;
    b.resize(em ? 2 * nl : nl, em ? 2 * N : N);
    thread_local Eigen::ArrayXd hte, htm, hmax, pm, pm1, lt, lp, col;
    dynamic_rows(m, lmax, mie, b, hte, htm);
    hmax = em ? hte.max(htm).eval() : hte;
    BandedWriter w(b, em ? std::vector<int>{0, nl, 2 * nl} : std::vector<int>{0, nl}, write_zeros);
    const double log_m = m > 0 ? std::log(double(m)) : 0.0;
    // Nodes by increasing x (the rule lists them panel by panel), so that each band is close
    // to the previous one.
    std::vector<int> order(N);
    for (int j = 0; j < N; ++j) order[j] = j;
    std::stable_sort(order.begin(), order.end(),
                     [&](int a, int c) { return nodes.x[a] < nodes.x[c]; });
    int prev_lo = 0, prev_hi = 0;            // band of the previous node (empty: none yet)
    int prev_rows_lo = 0, prev_rows_hi = 0;  // rows computed for it
    for (const int j : order) {
      throw_if_cancelled();
      const double x = nodes.x[j];
      const double hw = nodes.half_log_w[j];
      const double log_s = 0.5 * std::log((x - 1.0) * (x + 1.0));
      const double log_mx_s = log_m + std::log(x) - log_s;
      // Estimated log of the largest entry of row i over the node's columns (t >= p).
      auto estimate = [&](int i) {
        const int l = lmin + i;
        if (!em) return hmax[i] + hw + special::legendre_log_estimate(x, m, l);
        const double e1 = special::legendre_log_estimate(x, m + 1, l);
        if (m == 0) return hmax[i] + hw + e1;
        const double e0 = log_mx_s + special::legendre_log_estimate(x, m, l);
        const double big = std::max(e0, e1), small = std::min(e0, e1);
        return hmax[i] + hw + big + std::log1p(std::exp(small - big));
      };
      // Rows to compute: around the previous node's band (bands move little from node to node),
      // or the rows that showed the previous node negligible; for the first node from the
      // estimate; small blocks whole.
      int lo = 0, hi = nl;
      if (nl > kWholeBlockRows) {
        if (prev_hi > prev_lo) {
          const int margin = std::max(8, (prev_hi - prev_lo) / 8);
          lo = std::max(0, prev_lo - margin);
          hi = std::min(nl, prev_hi + margin);
          if (hi - lo < 4) lo = std::max(0, hi - 4), hi = std::min(nl, lo + 4);
        } else if (prev_rows_hi > prev_rows_lo) {
          lo = prev_rows_lo;
          hi = prev_rows_hi;
        } else {
          estimated_band(estimate, nl, kLogNegligible - kEstimateMargin, lo, hi);
        }
      }
      for (;;) {
        const int n = hi - lo;
        if (pm.size() < n) {
          for (auto* a : {&pm, &pm1, &lt, &lp, &col}) a->resize(n);
        }
        special::legendre_log_range_pair(x, m, lmin + lo, n, pm.data(), pm1.data());
        auto P = pm.head(n);
        auto P1 = pm1.head(n);
        auto LT = lt.head(n), LP = lp.head(n);
        if (em) {
          angular_logs(m, x, log_s, P, P1, LT, LP);
        }
        // Are all columns negligible and falling outwards at both ends of the rows?
        bool ok_lo = true, ok_hi = true;
        auto check = [&](const Eigen::ArrayXd& h0, const auto& f) {
          if (lo > 0) {
            const double a = h0[lo] + f[0], c = h0[lo + 1] + f[1];
            ok_lo = ok_lo && a + hw < kLogNegligible && a < c;
          }
          if (hi < nl) {
            const double a = h0[hi - 1] + f[n - 1], c = h0[hi - 2] + f[n - 2];
            ok_hi = ok_hi && a + hw < kLogNegligible && a < c;
          }
        };
        if (!em) {
          check(hte, P);
        } else {
          check(hte, LT);
          check(htm, LT);
          if (m > 0) {
            check(hte, LP);
            check(htm, LP);
          }
        }
        if (ok_lo && ok_hi) break;
        const int grow = std::max(32, n / 2);
        if (!ok_lo) lo = std::max(0, lo - grow);
        if (!ok_hi) hi = std::min(nl, hi + grow);
      }
      const int n = hi - lo;
      auto put = [&](int c, int group, const Eigen::ArrayXd& h0, const auto& f) {
        const int row0 = group == 0 ? 0 : nl;
        auto dst = b.W.col(c).segment(row0, nl);
        if (write_zeros) {
          dst.head(lo).setZero();
          dst.tail(nl - hi).setZero();
        }
        col.head(n) = h0.segment(lo, n) + hw + f;
        w.put_column(c, row0 + lo, group, col.head(n));
      };
      if (!em) {
        put(j, 0, hte, pm.head(n));
      } else {
        put(j, 0, hte, lt.head(n));      // u_j, TE rows
        put(j, 1, htm, lp.head(n));      // u_j, TM rows
        put(N + j, 0, hte, lp.head(n));  // v_j, TE rows
        put(N + j, 1, htm, lt.head(n));  // v_j, TM rows
      }
      // this node's band (union over its columns), the next node's first guess
      prev_rows_lo = lo;
      prev_rows_hi = hi;
      prev_lo = nl;
      prev_hi = 0;
      for (int c : {j, N + j}) {
        if (c >= b.W.cols()) continue;
        for (int g = 0; g < (em ? 2 : 1); ++g) {
          const int clo = b.col_lo[c * (em ? 2 : 1) + g], chi = b.col_hi[c * (em ? 2 : 1) + g];
          if (chi <= clo) continue;
          prev_lo = std::min(prev_lo, clo - g * nl);
          prev_hi = std::max(prev_hi, chi - g * nl);
        }
      }
      set_node_coefficients(nodes, j, em, b);
    }
    return b;
  }

  /// Rows [lo, hi) (0 <= lo < hi <= n, hi - lo >= 4 if n >= 4) around the maximum of the
  /// estimate f over 0..n-1 where f > level, found by golden-section search for the maximum
  /// and bisection for the edges (f assumed unimodal); a few rows around the maximum if f is
  /// below the level everywhere.
  template <class F>
  static void estimated_band(const F& f, int n, double level, int& lo, int& hi) {
    int a = 0, c = n - 1;
    // golden-section search on integers for the maximum
    while (c - a > 3) {
      const int p = a + static_cast<int>(0.381966 * (c - a));
      const int q = c - static_cast<int>(0.381966 * (c - a));
      if (f(p) < f(q))
        a = p;
      else
        c = q;
    }
    int peak = a;
    double fpeak = f(a);
    for (int i = a + 1; i <= c; ++i) {
      const double v = f(i);
      if (v > fpeak) fpeak = v, peak = i;
    }
    if (!(fpeak > level)) {
      lo = peak;
      hi = peak + 1;
    } else {
      // lowest row above the level: f(lo) > level, f(lo - 1) <= level
      int below = -1, above = peak;  // f(below) <= level (or out of range), f(above) > level
      while (above - below > 1) {
        const int mid = (below + above) / 2;
        (f(mid) > level ? above : below) = mid;
      }
      lo = above;
      int in = peak, out = n;
      while (out - in > 1) {
        const int mid = (in + out) / 2;
        (f(mid) > level ? in : out) = mid;
      }
      hi = out;
    }
    // at least 4 rows, so that both ends can be checked
    while (hi - lo < std::min(4, n)) {
      if (lo > 0) --lo;
      if (hi - lo < std::min(4, n) && hi < n) ++hi;
    }
  }

  LowRankBlock dynamic_block_full_range(int m, int lmax, const NodeSet& nodes,
                                        const MieLog& mie) const {
    const bool em = o_.field == FieldKind::kElectromagnetic;
    const int lmin = em ? std::max(1, m) : m;
    const int nl = lmax - lmin + 1;
    const int N = static_cast<int>(nodes.x.size());
    LowRankBlock b;
    const int dim = em ? 2 * nl : nl;
    const int q = em ? 2 * N : N;
    b.resize(dim, q);
    std::vector<double> log_a(nl);
    for (int l = lmin; l <= lmax; ++l) {
      double la = std::log(2.0 * l + 1.0) + std::lgamma(l - m + 1.0) - std::lgamma(l + m + 1.0);
      if (em) la -= std::log(double(l) * (l + 1.0));
      log_a[l - lmin] = 0.5 * la;
      if (em) {
        b.s[l - lmin] = mie.sign_te[l];
        b.s[nl + l - lmin] = -mie.sign_tm[l];
      } else {
        b.s[l - lmin] = mie.sign_te[l];
      }
    }
    BandedWriter w(b, em ? std::vector<int>{0, nl, 2 * nl} : std::vector<int>{0, nl});
    // Reference path (WBuild::kFullRange): per node, the whole column in log form
    // from the recurrences over all l, then the band of entries above the negligible level.
    Eigen::ArrayXd hte0(nl), htm0(nl);
    for (int i = 0; i < nl; ++i) {
      hte0[i] = log_a[i] + 0.5 * mie.log_abs_te[lmin + i];
      htm0[i] = log_a[i] + 0.5 * mie.log_abs_tm[lmin + i];
    }
    const Eigen::Map<const Eigen::ArrayXd> xs(nodes.x.data(), N);
    Eigen::ArrayXXd pm, pm1;
    special::legendre_log_many(xs, m, lmax, pm);
    if (em) special::legendre_log_many(xs, m + 1, lmax, pm1);
    Eigen::ArrayXd lt(nl), lp(nl), col(nl);
    for (int j = 0; j < N; ++j) {
      const double x = nodes.x[j];
      const double hw = nodes.half_log_w[j];
      const Eigen::Map<const Eigen::ArrayXd> P(&pm(lmin, j), nl);
      if (!em) {
        col = hte0 + hw + P;
        w.put_column(j, 0, 0, col);
        set_node_coefficients(nodes, j, em, b);
        continue;
      }
      const Eigen::Map<const Eigen::ArrayXd> P1(&pm1(lmin, j), nl);
      const double log_s = 0.5 * std::log((x - 1.0) * (x + 1.0));
      angular_logs(m, x, log_s, P, P1, lt, lp);
      col = hte0 + hw + lt;
      w.put_column(j, 0, 0, col);  // u_j, TE rows
      col = htm0 + hw + lp;
      w.put_column(j, nl, 1, col);  // u_j, TM rows
      col = hte0 + hw + lp;
      w.put_column(N + j, 0, 0, col);  // v_j, TE rows
      col = htm0 + hw + lt;
      w.put_column(N + j, nl, 1, col);  // v_j, TM rows
      set_node_coefficients(nodes, j, em, b);
    }
    return b;
  }

  void prepare_static(double gap, int lmax, double tol, NodeSet& nodes, StaticSphere& st) const {
    const bool em = o_.field == FieldKind::kElectromagnetic;
    const StaticLimit sm = o_.medium->static_limit();
    const StaticLimit ss = em ? o_.sphere->static_limit() : StaticLimit{};
    st = static_sphere(o_.field, ss, sm.static_eps, o_.radius, lmax);
    // Integrands t^{l+l'} e^{-t} rho: the same sqrt(t)-panel rule as at xi > 0.
    const auto& gl = momentum_rule_for(lmax, tol, -1.0);
    const int N = static_cast<int>(gl.nodes.size());
    const double D = o_.radius + gap;
    std::unique_ptr<PlanarAtFrequency> plate;
    if (em) plate = o_.plate->at(0.0, *o_.medium);
    nodes.resize(N);
    nodes.x = gl.nodes;
    for (int j = 0; j < N; ++j) {
      const double t = gl.nodes[j];
      nodes.half_log_w[j] = 0.5 * gl.log_weights[j];
      nodes.f1[j] = -t / D;  // d/dL e^{-2kD} = -2k e^{-2kD}, k = t/(2D)
      nodes.f2[j] = t * t / (D * D);
      if (em) {
        const Reflection r = plate->reflect(t / (2.0 * D));
        nodes.c_te[j] = -r.te;
        nodes.c_tm[j] = r.tm;
      } else {
        nodes.c_te[j] = 1.0;  // Dirichlet: -r = 1; Neumann: r = 1
      }
    }
  }

  /// with_tm = false: the TE channel alone (electromagnetic field; TE and TM decouple at xi = 0).
  LowRankBlock static_block(int m, double gap, int lmax, const NodeSet& nodes,
                            const StaticSphere& st, bool with_tm) const {
    const bool em = o_.field == FieldKind::kElectromagnetic && with_tm;
    const bool em_field = o_.field == FieldKind::kElectromagnetic;
    const int lmin = em_field ? std::max(1, m) : m;
    const int nl = lmax - lmin + 1;
    const int N = static_cast<int>(nodes.x.size());
    const int dim = em ? 2 * nl : nl;
    const int q = em ? 2 * N : N;
    LowRankBlock b;
    b.resize(dim, q);
    b.W.setZero();  // TE rows x TM columns and TM rows x TE columns stay zero
    const double log_ratio = std::log(o_.radius / (2.0 * (o_.radius + gap)));
    std::vector<double> row_log(dim, kNegInf);
    for (int l = lmin; l <= lmax; ++l) {
      const int i = l - lmin;
      const double common =
          (l + 0.5) * log_ratio - 0.5 * (std::lgamma(l - m + 1.0) + std::lgamma(l + m + 1.0));
      const double g2te = st.g2_te[l], g2tm = st.g2_tm[l];
      b.s[i] = g2te > 0 ? 1.0 : (g2te < 0 ? -1.0 : 0.0);
      if (g2te != 0.0) row_log[i] = common + 0.5 * std::log(std::abs(g2te));
      if (em) {
        b.s[nl + i] = g2tm > 0 ? 1.0 : (g2tm < 0 ? -1.0 : 0.0);
        if (g2tm != 0.0) row_log[nl + i] = common + 0.5 * std::log(std::abs(g2tm));
      }
    }
    BandedWriter w(b, em ? std::vector<int>{0, nl, 2 * nl} : std::vector<int>{0, nl});
    const Eigen::Map<const Eigen::ArrayXd> log_te(row_log.data(), nl);
    const Eigen::ArrayXd ls = Eigen::ArrayXd::LinSpaced(nl, lmin, lmax);
    Eigen::ArrayXd col(nl);
    for (int j = 0; j < N; ++j) {
      throw_if_cancelled();
      const double log_t = std::log(nodes.x[j]), hw = nodes.half_log_w[j];
      col = log_te + hw + ls * log_t;
      w.put_column(j, 0, 0, col);
      if (em) {
        col = Eigen::Map<const Eigen::ArrayXd>(row_log.data() + nl, nl) + hw + ls * log_t;
        w.put_column(N + j, nl, 1, col);
      }
      set_node_coefficients(nodes, j, em, b);
    }
    return b;
  }

  SpherePlateOptions o_;
  std::unique_ptr<PlatePlate> pfa_plates_;
  double pfa_scale_ = 1.0;
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
    if (!sphere) return "sphere material is missing";
    if (!plate) return "plate is missing";
  }
  return {};
}

std::shared_ptr<Geometry> make_sphere_plate(const SpherePlateOptions& options) {
  const std::string why = options.validate();
  if (!why.empty()) throw std::invalid_argument("sphere-plate: " + why);
  return std::make_shared<SpherePlate>(options);
}

}  // namespace roundtrip
