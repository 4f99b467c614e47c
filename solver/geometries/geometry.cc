// Default cost model of a geometry (geometry.h): blocked plane-wave round trips.
#include "solver/geometries/geometry.h"

#include <algorithm>
#include <cmath>

namespace roundtrip {
namespace {

constexpr double kMBatch = 8.0;  // the first batch of m blocks (solver/blocks/m_walk.h)

// Blocks the m sum computes. It reaches m = 0 .. m_est: cut when its geometric tail is below
// rel_tol, and the terms fall off beyond m ~ sqrt(R/L) (measured on sphere-plate): m_est =
// 8 ceil(sqrt(R/L) ln(10/rel_tol) / 16), at most l_max + 1. Beyond the first batch the walk of
// solver/blocks/m_walk.h samples m: panels of 4 blocks whose stride doubles from 2 while the
// interpolation is easy, so 8 + 4k blocks reach m = 7 + 8 (2^k - 1); one panel more for
// refinements (measured 24 ... 44 blocks at R/L = 150 ... 1000, rel_tol 1e-4 and 1e-5; this
// gives 28 ... 32). In double: at R/L ~ 1e8 and beyond, l_max and the block count leave the
// int range (such plans are refused, solver/plan.h).
double estimated_blocks(std::optional<double> R, double gap, double lmax, double rel_tol) {
  if (!R) return lmax + 1.0;
  const double m = std::sqrt(*R / gap) * std::log(10.0 / rel_tol) / 2.0;
  const double batches = std::max(1.0, std::ceil(m / kMBatch));
  const double reach = std::min(lmax + 1.0, batches * kMBatch);
  if (reach <= kMBatch) return reach;
  const double panels = std::ceil(std::log2((reach - 7.0) / 8.0 + 1.0)) + 1.0;
  return std::min(reach, kMBatch + 4.0 * panels);
}

}  // namespace

double max_multipole_order(const std::map<std::string, double>& t) {
  double l = 0.0;
  for (const char* k : {"l_max", "l_max1", "l_max2"})
    if (const auto it = t.find(k); it != t.end()) l = std::max(l, it->second);
  return l;
}

FrequencyCost Geometry::cost(double gap, DerivativeOrder order, double rel_tol) const {
  const auto t = truncation(gap);
  FrequencyCost c;
  const double lmax = max_multipole_order(t);
  if (!(lmax > 0.0 && t.count("quadrature_nodes"))) return c;
  const double q = 2.0 * t.at("quadrature_nodes");
  const double blocks = estimated_blocks(pfa_length(), gap, lmax, rel_tol);
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
  // ~4 q nb^2, two block-bidiagonal solves for the gradient, each only over the blocks it
  // needs (from the band's first row down, or down to the diagonal block): 2 q^2 nb. The columns
  // (Legendre recurrences and exp) are computed over their bands only: ~50 flops per entry. Two
  // spheres ("l_max1", "l_max2") are costed as one sphere of the larger l_max: the mirror path of
  // equal spheres factorises twice, unequal ones once in LU (sphere_sphere.cc).
  constexpr double kNodeSpaceInefficiency = 6.0;
  constexpr double kNodeBand = 100.0;
  const double band = std::min(1.0, 8.0 / std::sqrt(lmax));
  const double nb = std::min(q, kNodeBand);
  const double stride = blocks <= kMaxListedBlocks ? 1.0 : std::ceil(blocks / 1000.0);
  c.blocks = blocks;
  c.block_flops.clear();
  for (double m = 0.0; m < blocks; m += stride) {
    const double n = 2.0 * (lmax - std::max(1.0, m) + 1.0);
    double flops = 0.0;
    if (q < n) {
      double f = band * n * q * nb + q * nb * nb + 50.0 * band * n * q;
      if (order != DerivativeOrder::kEnergy) f += 4.0 * q * nb * nb;
      if (order == DerivativeOrder::kGradient) f += 2.0 * q * q * nb;
      flops = kNodeSpaceInefficiency * f;
    } else {
      flops = 4.0 * n * n * q + n * n * n / 3.0;
      if (order == DerivativeOrder::kGradient) flops += 2.0 * n * q * q;
    }
    c.block_flops.push_back(stride * flops);
  }
  // Memory per thread: W (n x q) and three q x q work matrices, 8 bytes each.
  c.memory_bytes = 8.0 * (2.0 * lmax * q + 3.0 * q * q);
  return c;
}

}  // namespace roundtrip
