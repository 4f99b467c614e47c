#include "solver/blocks/plane_wave_nodes.h"

#include <fmt/format.h>

#include <stdexcept>

#include "solver/guards.h"

#if defined(__GLIBC__)
#include <malloc.h>
#endif

#include <algorithm>
#include <cmath>
#include <mutex>

#include "solver/special/momentum_rule.h"

namespace roundtrip::blocks {

void fill_dynamic_nodes(const special::GaussLaguerreRule& gl, double tau, double dtau_dl,
                        NodeSet& nodes) {
  const int N = static_cast<int>(gl.nodes.size());
  nodes.resize(N);
  for (int j = 0; j < N; ++j) {
    const double t = gl.nodes[j];
    const double x = 1.0 + t / tau;
    nodes.x[j] = x;
    // \int_1^inf dx e^{-tau x} f(x) = (e^{-tau}/tau) \int_0^inf dt e^{-t} f(1 + t/tau)
    nodes.half_log_w[j] = 0.5 * (gl.log_weights[j] - tau - std::log(tau));
    nodes.f1[j] = -dtau_dl * x;
    nodes.f2[j] = dtau_dl * dtau_dl * x * x;
  }
}

void fill_static_nodes(const special::GaussLaguerreRule& gl, double length, NodeSet& nodes) {
  const int N = static_cast<int>(gl.nodes.size());
  nodes.resize(N);
  nodes.x = gl.nodes;
  for (int j = 0; j < N; ++j) {
    const double t = gl.nodes[j];
    nodes.half_log_w[j] = 0.5 * gl.log_weights[j];
    nodes.f1[j] = -t / length;  // d/dL e^{-k path} at fixed k, k = t / path
    nodes.f2[j] = t * t / (length * length);
  }
}

const special::GaussLaguerreRule& momentum_rule_for(int lmax, double tol, double u,
                                                    int fixed_per_unit) {
  return special::momentum_rule(2 * lmax, nodes_per_unit_for(tol, u, fixed_per_unit));
}

int nodes_per_unit_for(double tol, double u, int fixed_per_unit) {
  int per_unit = tol >= 1e-5 ? 3 : (tol >= 1e-7 ? 4 : 6);
  if (u >= 0.1 && tol >= 1e-4) per_unit = 2;
  if (fixed_per_unit > 0) per_unit = fixed_per_unit;
  return per_unit;
}

double momentum_node_count(double lmax, double tol, double u, int fixed_per_unit) {
  if (lmax <= kMaxMultipoleOrder)
    return double(momentum_rule_for(static_cast<int>(lmax), tol, u, fixed_per_unit).nodes.size());
  // The node count of momentum_rule (solver/special/momentum_rule.cc: panels of 10
  // Gauss-Legendre nodes, nodes_per_unit per unit of sqrt(t), up to sqrt(2 l_max + 1/2) + 8),
  // without building a rule that large.
  const double per_unit = nodes_per_unit_for(tol, u, fixed_per_unit);
  return 10.0 * std::ceil((std::sqrt(2.0 * lmax + 0.5) + 8.0) * per_unit / 10.0);
}

int sphere_plate_lmax_model(double radius, double gap, double u, double tol,
                            DerivativeOrder order) {
  const double lmax = sphere_plate_lmax_required(radius, gap, u, tol, order);
  if (!(lmax <= kMaxMultipoleOrder))
    throw std::runtime_error(
        fmt::format("a sphere of R = {:.6g} m at L = {:.6g} m (R/L = {:.3g}) needs l_max = {:.3g} "
                    "multipoles, beyond the {:.0e} this program can handle",
                    radius, gap, radius / gap, lmax, kMaxMultipoleOrder));
  return static_cast<int>(lmax);
}

double sphere_plate_lmax_required(double radius, double gap, double u_in, double tol,
                                  DerivativeOrder order) {
  const double u = std::min(u_in, 10.0);
  constexpr double kA[3] = {2.0, 1.85, 1.7};
  constexpr double kC[3] = {1.0, 8.0, 20.0};
  const int k = static_cast<int>(order);
  const double log_b_over_tol = std::log(std::max(kC[k], 1.2 * (1.0 + u) * (1.0 + u)) / tol);
  const double near = log_b_over_tol * (1.0 + u / 40.0) / kA[k] * radius / gap;
  const double far = log_b_over_tol / std::acosh(1.0 + gap / radius);
  return std::max(3.0, std::ceil(std::max(near, far)) + 3.0);  // double: no int overflow
}

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

BandedWriter::BandedWriter(LowRankBlock& b, std::vector<int> group_start, bool write_zeros)
    : b_(b), write_zeros_(write_zeros) {
  b_.zero_outside_ranges = write_zeros;
  groups_ = static_cast<int>(group_start.size()) - 1;
  b_.group_start = std::move(group_start);
  b_.col_lo.assign(b_.W.cols() * groups_, std::numeric_limits<int>::max());
  b_.col_hi.assign(b_.W.cols() * groups_, 0);
}

void BandedWriter::put_column(int col, int row0, int group, const Eigen::ArrayXd& logs) {
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

void BandedWriter::put_values(int col, int row0, int group, const Eigen::ArrayXd& v) {
  static const double kNegligible = std::exp(kLogNegligible);
  const Eigen::Index n = v.size();
  Eigen::Index first = 0, last = n;
  while (first < n && !(v[first] > kNegligible)) ++first;
  while (last > first && !(v[last - 1] > kNegligible)) --last;
  auto dst = b_.W.col(col).segment(row0, n);
  if (write_zeros_) {
    dst.head(first).setZero();
    dst.tail(n - last).setZero();
  }
  if (last > first) {
    dst.segment(first, last - first) = v.segment(first, last - first).matrix();
    int& lo = b_.col_lo[col * groups_ + group];
    int& hi = b_.col_hi[col * groups_ + group];
    lo = std::min<int>(lo, row0 + static_cast<int>(first));
    hi = std::max<int>(hi, row0 + static_cast<int>(last));
  }
}

void keep_large_blocks_in_heap() {
#if defined(__GLIBC__)
  static std::once_flag once;
  std::call_once(once, [] {
    mallopt(M_MMAP_THRESHOLD, 1 << 30);
    mallopt(M_TRIM_THRESHOLD, 1 << 30);
  });
#endif
}

}  // namespace roundtrip::blocks
