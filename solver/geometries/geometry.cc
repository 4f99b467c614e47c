// Default cost model of a geometry (geometry.h): blocked plane-wave round trips.
#include "solver/geometries/geometry.h"

#include <algorithm>
#include <cmath>

namespace roundtrip {
namespace {

constexpr int kMBatch = 8;  // m blocks are computed in batches of 8 (solver/geometries)

// Blocks m = 0 .. m_est: the m sum is cut when its geometric tail is below rel_tol, and the
// terms fall off beyond m ~ sqrt(R/L) (measured on sphere-plate): m_est = 8 ceil(sqrt(R/L)
// ln(10/rel_tol) / 16), at most l_max + 1.
int estimated_blocks(std::optional<double> R, double gap, int lmax, double rel_tol) {
  if (!R) return lmax + 1;
  const double m = std::sqrt(*R / gap) * std::log(10.0 / rel_tol) / 2.0;
  const double batches = std::max(1.0, std::ceil(m / kMBatch));
  return static_cast<int>(std::min<double>(lmax + 1, batches * kMBatch));
}

}  // namespace

FrequencyCost Geometry::cost(double gap, DerivativeOrder order, double rel_tol) const {
  const auto t = truncation(gap);
  FrequencyCost c;
  if (!(t.count("l_max") && t.count("quadrature_nodes"))) return c;
  const int lmax = static_cast<int>(t.at("l_max"));
  const double q = 2.0 * t.at("quadrature_nodes");
  const int blocks = estimated_blocks(pfa_length(), gap, lmax, rel_tol);
  // Cost model of solver/logdet/low_rank.cc for a block M = S W C W^T (n multipole rows, q node
  // columns). Node space (q < n): banded Gram (a node couples to ~8/sqrt(l_max) of the
  // multipoles; measured 0.22 at l_max = 1109), Cholesky, inverse for the derivatives, and the
  // column assembly (Legendre recurrences, exp inside the band). Otherwise the dense
  // multipole-space factorisation. The factor kNodeSpaceInefficiency = 6 converts to
  // "gemm-equivalent" flops: measured at R/L = 200 and 1000 (gold, rel_tol 1e-4) against the
  // timed 384 x 384 product; the small blocked products and transcendental functions run well
  // below the large-gemm rate.
  // The node-space matrix is banded (nodes couple to nodes within a fixed distance in sqrt(t);
  // so the Gram pairs each column only with ~nb others over its band of rows; measured
  // half-width ~50-100, kNodeBand): banded Cholesky q nb^2, selected inversion for the force
  // ~4 q nb^2, two block-bidiagonal solves 4 q^2 nb for the gradient. The columns (Legendre
  // recurrences and exp) are computed over their bands only: ~50 flops per entry.
  constexpr double kNodeSpaceInefficiency = 6.0;
  constexpr double kNodeBand = 100.0;
  const double band = std::min(1.0, 8.0 / std::sqrt(double(lmax)));
  const double nb = std::min(q, kNodeBand);
  c.block_flops.assign(blocks, 0.0);
  for (int m = 0; m < blocks; ++m) {
    const double n = 2.0 * (lmax - std::max(1, m) + 1);
    double flops = 0.0;
    if (q < n) {
      double f = band * n * q * nb + q * nb * nb + 50.0 * band * n * q;
      if (order != DerivativeOrder::kEnergy) f += 4.0 * q * nb * nb;
      if (order == DerivativeOrder::kGradient) f += 4.0 * q * q * nb;
      flops = kNodeSpaceInefficiency * f;
    } else {
      flops = 4.0 * n * n * q + n * n * n / 3.0;
      if (order == DerivativeOrder::kGradient) flops += 2.0 * n * q * q;
    }
    c.block_flops[m] = flops;
  }
  // Memory per thread: W (n x q) and three q x q work matrices, 8 bytes each.
  const double n = 2.0 * lmax;
  c.memory_bytes = 8.0 * (n * q + 3.0 * q * q);
  return c;
}

}  // namespace roundtrip
