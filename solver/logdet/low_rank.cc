#include "solver/logdet/low_rank.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>

namespace roundtrip {

namespace {

// A -= Ws^T Ws on and below the diagonal, Ws = W(:, perm) diag(scale), skipping the rows where
// a column is zero. Columns are taken in blocks of kColumnBlock; each block's non-zero rows per
// row group (the union of its columns' ranges) are gathered once, scaled, into a small dense
// matrix, and each block pair multiplies only the rows where both have non-zeros. Exact up to
// the dropped zeros (same result as a rank update), and only the band of W is read.
// Row ranges: column c is zero outside [col_lo[c * groups + g], col_hi[...]) in row group g.
// add = true: A += Ws^T Ws instead (same band logic).
void subtract_banded_gram(const LowRankBlock& b, const std::vector<int>& perm,
                          const Eigen::VectorXd& scale, Eigen::MatrixXd& A, bool add = false) {
  constexpr int kColumnBlock = 24;
  const int q = static_cast<int>(perm.size());
  const int groups = static_cast<int>(b.group_start.size()) - 1;
  const int nb = (q + kColumnBlock - 1) / kColumnBlock;
  std::vector<int> lo(nb * groups, std::numeric_limits<int>::max()), hi(nb * groups, -1);
  for (int k = 0; k < q; ++k)
    for (int g = 0; g < groups; ++g) {
      const int c = perm[k];
      const int l0 = b.col_lo[c * groups + g], h0 = b.col_hi[c * groups + g];
      if (h0 <= l0) continue;
      int& L = lo[(k / kColumnBlock) * groups + g];
      int& H = hi[(k / kColumnBlock) * groups + g];
      L = std::min(L, l0);
      H = std::max(H, h0);
    }
  std::vector<Eigen::MatrixXd> gathered(nb * groups);
  for (int I = 0; I < nb; ++I) {
    const int i0 = I * kColumnBlock, ni = std::min(kColumnBlock, q - i0);
    for (int g = 0; g < groups; ++g) {
      const int r0 = lo[I * groups + g], r1 = hi[I * groups + g];
      if (r1 <= r0) continue;
      Eigen::MatrixXd& G = gathered[I * groups + g];
      G.resize(r1 - r0, ni);
      for (int k = 0; k < ni; ++k) {
        // Only the column's own range is read (outside it W may be unset).
        const int c = perm[i0 + k];
        const int c0 = std::max(r0, b.col_lo[c * groups + g]);
        const int c1 = std::min(r1, b.col_hi[c * groups + g]);
        G.col(k).setZero();
        if (c1 > c0)
          G.col(k).segment(c0 - r0, c1 - c0) = b.W.col(c).segment(c0, c1 - c0) * scale[i0 + k];
      }
    }
  }
  for (int I = 0; I < nb; ++I) {
    const int i0 = I * kColumnBlock, ni = std::min(kColumnBlock, q - i0);
    for (int J = 0; J <= I; ++J) {
      const int j0 = J * kColumnBlock, nj = std::min(kColumnBlock, q - j0);
      for (int g = 0; g < groups; ++g) {
        const int r0 = std::max(lo[I * groups + g], lo[J * groups + g]);
        const int r1 = std::min(hi[I * groups + g], hi[J * groups + g]);
        if (r1 <= r0) continue;
        const Eigen::MatrixXd& GI = gathered[I * groups + g];
        const Eigen::MatrixXd& GJ = gathered[J * groups + g];
        if (add)
          A.block(i0, j0, ni, nj).noalias() +=
              GI.middleRows(r0 - lo[I * groups + g], r1 - r0).transpose() *
              GJ.middleRows(r0 - lo[J * groups + g], r1 - r0);
        else
          A.block(i0, j0, ni, nj).noalias() -=
              GI.middleRows(r0 - lo[I * groups + g], r1 - r0).transpose() *
              GJ.middleRows(r0 - lo[J * groups + g], r1 - r0);
      }
    }
  }
}

constexpr const char* kNotPositive =
    "1 - M is not positive definite (Cholesky failed); truncation too small?";

/// Largest |i - j| with A_ij != 0 (lower triangle).
int lower_bandwidth(const Eigen::MatrixXd& A) {
  const Eigen::Index q = A.rows();
  int w = 0;
  for (Eigen::Index j = 0; j < q; ++j)
    for (Eigen::Index i = q - 1; i > j + w; --i)
      if (A(i, j) != 0.0) {
        w = static_cast<int>(i - j);
        break;
      }
  return w;
}

// Dense path. With B = (1 - K)^{-1} and dK/dL = (F1 K + K F1)/2 (K_ij ~ sqrt(c_i c_j)):
//   d log det/dL   = -Tr[B dK] = -sum_i f1_i (B_ii - 1),
//   d2 log det/dL2 = -sum_i f2_i (B_ii - 1) - sum_ij f1_i f1_j (B - 1)_ij^2.
LogDetResult logdet_dense(const Eigen::MatrixXd& A, const Eigen::VectorXd& f1,
                          const Eigen::VectorXd& f2, DerivativeOrder order) {
  LogDetResult out;
  const Eigen::Index q = A.rows();
  out.dimension = static_cast<int>(q);
  Eigen::LLT<Eigen::MatrixXd, Eigen::Lower> llt(A);
  if (llt.info() != Eigen::Success) {
    out.ok = false;
    out.message = kNotPositive;
    return out;
  }
  double ld = 0.0;
  for (Eigen::Index i = 0; i < q; ++i) ld += std::log(llt.matrixLLT()(i, i));
  out.s.value = 2.0 * ld;
  if (order == DerivativeOrder::kEnergy) return out;
  // B - 1 = B K: its diagonal from sum_j B_ij K_ij, since B_ii - 1 would lose the digits of
  // the small (B K)_ii of weakly coupled nodes (whose f1, f2 are the largest); off the
  // diagonal (B - 1)_ij = B_ij.
  // B = L^{-T} L^{-1}: L^{-1} column block by column block, each solved only from its own
  // diagonal block down (the rows above are zero: L^{-1} is lower triangular; q^3/3 flops),
  // then the triangular product (q^3/3 for the lower half), instead of two triangular solves
  // with the full identity as right-hand side (2 q^3). Same B up to rounding.
  const auto& L = llt.matrixLLT();
  Eigen::MatrixXd Li = Eigen::MatrixXd::Identity(q, q);
  constexpr Eigen::Index kCols = 64;
  for (Eigen::Index a = 0; a < q; a += kCols) {
    const Eigen::Index n = std::min(kCols, q - a);
    L.bottomRightCorner(q - a, q - a)
        .triangularView<Eigen::Lower>()
        .solveInPlace(Li.block(a, a, q - a, n));
  }
  // B(r, c) = sum_{k >= max(r, c)} Li(k, r) Li(k, c): for the columns of block a.., rows >= a,
  // an upper-triangular times a dense block; the rows above come from the symmetry.
  Eigen::MatrixXd Bm1(q, q);
  for (Eigen::Index a = 0; a < q; a += kCols) {
    const Eigen::Index n = std::min(kCols, q - a);
    Bm1.block(a, a, q - a, n).noalias() =
        Li.bottomRightCorner(q - a, q - a).transpose().triangularView<Eigen::Upper>() *
        Li.block(a, a, q - a, n);
  }
  Bm1.triangularView<Eigen::StrictlyUpper>() = Bm1.transpose();
  const Eigen::VectorXd bk =
      (Bm1.array() * (Eigen::MatrixXd::Identity(q, q) - A).array()).rowwise().sum().matrix();
  Bm1.diagonal() = bk;
  double d1 = 0.0;
  for (Eigen::Index i = 0; i < q; ++i) d1 -= f1[i] * bk[i];
  out.s.d1 = d1;
  if (order == DerivativeOrder::kForce) return out;
  double d2 = 0.0;
  for (Eigen::Index i = 0; i < q; ++i) d2 -= f2[i] * bk[i];
  // K B = B - 1 and B is symmetric, so Tr[(B F1 K)^2] = Tr[F1 (B-1) F1 (B-1)]
  //   = sum_ij f1_i f1_j (B-1)_ij^2   (no further matrix product).
  d2 -= (f1.asDiagonal() * Bm1.cwiseAbs2() * f1.asDiagonal()).sum();
  out.s.d2 = d2;
  return out;
}

// Banded path: A_ij = 0 for |i - j| > w. In blocks of size nb >= w, A is block tridiagonal and
// its Cholesky factor block bidiagonal: diagonal blocks L_I, sub-diagonal blocks S_I = A_{I+1,I}
// L_I^{-T}, with A_{I+1,I+1} <- A_{I+1,I+1} - S_I S_I^T (Golub & Van Loan, Matrix Computations,
// 4th ed. (2013), sec. 4.3). Cost O(q nb^2) instead of O(q^3).
//   d1: diag of B = A^{-1} from the blocks of B on the band only (selected inversion; Takahashi,
//       Fagan, Chin (1973)): from L^T B = L^{-1},
//       B_{I+1,I} = -B_{I+1,I+1} S_I L_I^{-1},  B_{I,I} = L_I^{-T} (L_I^{-1} - S_I^T B_{I+1,I}).
//   d2 = -Tr[B d2K] - Tr[(B dK)^2], with d2K_ij = [(f1_i + f1_j)^2/4 + (g_i + g_j)/2] K_ij,
//       g = f2 - f1^2 (band only, so the band of B suffices), and Tr[(B dK)^2] = ||Z||_F^2,
//       Z = L^{-1} dK L^{-T} (two block-bidiagonal solves, O(q^2 nb)).
class BandedCholesky {
 public:
  BandedCholesky(const Eigen::MatrixXd& A, int w) {
    const int q = static_cast<int>(A.rows());
    const int nb = std::max(w, 16);
    for (int s = 0; s < q; s += nb) {
      start_.push_back(s);
      size_.push_back(std::min(nb, q - s));
    }
    const int n = static_cast<int>(start_.size());
    L_.resize(n);
    S_.resize(n > 0 ? n - 1 : 0);
    Eigen::MatrixXd D = A.block(0, 0, size_[0], size_[0]);
    for (int I = 0; I < n; ++I) {
      Eigen::LLT<Eigen::MatrixXd, Eigen::Lower> llt(D);
      if (llt.info() != Eigen::Success) return;
      L_[I] = llt.matrixL();
      for (int i = 0; i < size_[I]; ++i) log_det_ += 2.0 * std::log(L_[I](i, i));
      if (I + 1 == n) break;
      Eigen::MatrixXd S = A.block(start_[I + 1], start_[I], size_[I + 1], size_[I]);
      L_[I].triangularView<Eigen::Lower>().transpose().solveInPlace<Eigen::OnTheRight>(S);
      D = A.block(start_[I + 1], start_[I + 1], size_[I + 1], size_[I + 1]);
      D.selfadjointView<Eigen::Lower>().rankUpdate(S, -1.0);
      D.triangularView<Eigen::StrictlyUpper>() = D.transpose();
      S_[I] = std::move(S);
    }
    ok_ = true;
  }
  bool ok() const { return ok_; }
  double log_det() const { return log_det_; }
  int blocks() const { return static_cast<int>(start_.size()); }
  int start(int I) const { return start_[I]; }
  int size(int I) const { return size_[I]; }

  /// Columns c0 .. c0 + nc - 1 of X, rows of blocks I0 .. I1: X <- L^{-1} X there, given that
  /// these columns of X are zero in the rows above block I0 (so are those of L^{-1} X: L is
  /// lower triangular). Rows below block I1 are left as they were (not solved).
  void solve_lower_part(Eigen::MatrixXd& X, Eigen::Index c0, Eigen::Index nc, int I0,
                        int I1) const {
    for (int I = I0; I <= I1; ++I) {
      auto XI = X.block(start_[I], c0, size_[I], nc);
      if (I > I0) XI.noalias() -= S_[I - 1] * X.block(start_[I - 1], c0, size_[I - 1], nc);
      L_[I].triangularView<Eigen::Lower>().solveInPlace(XI);
    }
  }
  /// Block holding row r.
  int block_of(Eigen::Index r) const {
    return static_cast<int>(std::upper_bound(start_.begin(), start_.end(), r) - start_.begin()) - 1;
  }

  /// Blocks of B = A^{-1} on the band: Bd[I] = B_{I,I}, Bs[I] = B_{I+1,I}.
  void band_of_inverse(std::vector<Eigen::MatrixXd>& Bd, std::vector<Eigen::MatrixXd>& Bs) const {
    const int n = blocks();
    Bd.assign(n, {});
    Bs.assign(std::max(n - 1, 0), {});
    for (int I = n - 1; I >= 0; --I) {
      Eigen::MatrixXd T = Eigen::MatrixXd::Identity(size_[I], size_[I]);
      L_[I].triangularView<Eigen::Lower>().solveInPlace(T);  // T = L_I^{-1}
      Eigen::MatrixXd R = T;
      if (I + 1 < n) {
        Bs[I].noalias() = -(Bd[I + 1] * S_[I]) * T;
        R.noalias() -= S_[I].transpose() * Bs[I];
      }
      Bd[I].noalias() = T.transpose() * R;
    }
  }

 private:
  std::vector<int> start_, size_;
  std::vector<Eigen::MatrixXd> L_, S_;
  double log_det_ = 0.0;
  bool ok_ = false;
};

LogDetResult logdet_banded(const Eigen::MatrixXd& A, int w, const Eigen::VectorXd& f1,
                           const Eigen::VectorXd& f2, DerivativeOrder order) {
  LogDetResult out;
  const Eigen::Index q = A.rows();
  out.dimension = static_cast<int>(q);
  const BandedCholesky ch(A, w);
  if (!ch.ok()) {
    out.ok = false;
    out.message = kNotPositive;
    return out;
  }
  out.s.value = ch.log_det();
  if (order == DerivativeOrder::kEnergy) return out;
  std::vector<Eigen::MatrixXd> Bd, Bs;
  ch.band_of_inverse(Bd, Bs);
  // K = 1 - A on the band; dK_ij = (f1_i + f1_j)/2 K_ij.
  auto K = [&](Eigen::Index i, Eigen::Index j) { return (i == j ? 1.0 : 0.0) - A(i, j); };
  // d1 = -Tr[B dK] = -sum_i f1_i (B K)_ii, (B K)_ii = sum_j B_ij K_ij over the band (not
  // B_ii - 1, which loses the digits of weakly coupled nodes).
  Eigen::VectorXd bk = Eigen::VectorXd::Zero(q);
  for (int I = 0; I < ch.blocks(); ++I) {
    const int a = ch.start(I);
    for (int j = 0; j < ch.size(I); ++j)
      for (int i = 0; i < ch.size(I); ++i) bk[a + i] += Bd[I](i, j) * K(a + i, a + j);
    if (I + 1 < ch.blocks()) {
      const int b = ch.start(I + 1);
      for (int j = 0; j < ch.size(I); ++j)
        for (int i = 0; i < ch.size(I + 1); ++i) {
          const double v = Bs[I](i, j) * K(b + i, a + j);
          bk[b + i] += v;
          bk[a + j] += v;
        }
    }
  }
  out.s.d1 = -f1.dot(bk);
  if (order == DerivativeOrder::kForce) return out;
  const Eigen::VectorXd g = f2 - f1.cwiseAbs2();
  // Tr[B d2K] over the band: diagonal blocks and twice the sub-diagonal blocks.
  double tr = 0.0;
  for (int I = 0; I < ch.blocks(); ++I) {
    const int a = ch.start(I);
    for (int j = 0; j < ch.size(I); ++j)
      for (int i = j; i < ch.size(I); ++i) {
        const Eigen::Index r = a + i, c = a + j;
        const double h = 0.25 * (f1[r] + f1[c]) * (f1[r] + f1[c]) + 0.5 * (g[r] + g[c]);
        tr += (i == j ? 1.0 : 2.0) * Bd[I](i, j) * h * K(r, c);
      }
    if (I + 1 < ch.blocks()) {
      const int b = ch.start(I + 1);
      for (int j = 0; j < ch.size(I); ++j)
        for (int i = 0; i < ch.size(I + 1); ++i) {
          const Eigen::Index r = b + i, c = a + j;
          if (r - c > w) continue;  // outside the band K is zero
          const double h = 0.25 * (f1[r] + f1[c]) * (f1[r] + f1[c]) + 0.5 * (g[r] + g[c]);
          tr += 2.0 * Bs[I](i, j) * h * K(r, c);
        }
    }
  }
  // Z = L^{-1} dK L^{-T}; dK is symmetric, so Z^T = L^{-1} (L^{-1} dK)^T.
  Eigen::MatrixXd X = Eigen::MatrixXd::Zero(q, q);
  for (Eigen::Index j = 0; j < q; ++j)
    for (Eigen::Index i = std::max<Eigen::Index>(0, j - w); i <= std::min(q - 1, j + w); ++i)
      X(i, j) = 0.5 * (f1[i] + f1[j]) * (i >= j ? K(i, j) : K(j, i));
  // Each solve only where it is needed (half the work of two full block solves): column j of
  // dK is zero above row j - w, so L^{-1} dK is solved from that row's block down; Z is
  // symmetric, so of Z = L^{-1} X^T only the blocks on and above the diagonal block are solved
  // (forward substitution for rows up to block J needs only the rows up to J) and
  // ||Z||_F^2 = sum over I < J of 2 ||Z_IJ||^2 plus the diagonal blocks ||Z_JJ||^2.
  const int nblk = ch.blocks();
  for (int J = 0; J < nblk; ++J)
    ch.solve_lower_part(X, ch.start(J), ch.size(J), ch.block_of(std::max(0, ch.start(J) - w)),
                        nblk - 1);
  X.transposeInPlace();
  double z2 = 0.0;
  for (int J = 0; J < nblk; ++J) {
    ch.solve_lower_part(X, ch.start(J), ch.size(J), 0, J);
    for (int I = 0; I <= J; ++I)
      z2 += (I == J ? 1.0 : 2.0) *
            X.block(ch.start(I), ch.start(J), ch.size(I), ch.size(J)).squaredNorm();
  }
  out.s.d2 = -tr - z2;
  return out;
}

}  // namespace

LogDetResult logdet_node_matrix(Eigen::MatrixXd A, const Eigen::VectorXd& f1,
                                const Eigen::VectorXd& f2, DerivativeOrder order,
                                NodeSpaceSolver solver) {
  const Eigen::Index q = A.rows();
  if (q == 0) return {};
  A.triangularView<Eigen::StrictlyUpper>() = A.transpose();
  const int w = solver == NodeSpaceSolver::kDense ? static_cast<int>(q) : lower_bandwidth(A);
  // Banded when the band is at most a quarter of the dimension: its O(q nb^2) factorisation and
  // O(q^2 nb) second derivative then beat the dense O(q^3).
  const bool banded =
      solver == NodeSpaceSolver::kBanded || (solver == NodeSpaceSolver::kAuto && 4 * w <= q);
  return banded ? logdet_banded(A, std::min<int>(w, static_cast<int>(q)), f1, f2, order)
                : logdet_dense(A, f1, f2, order);
}

namespace {

// Sylvester's identity det(1 - sigma W C W^T) = det(1 - K), K = (sigma C)^{1/2} W^T W
// (sigma C)^{1/2} (q x q), for sigma c_i >= 0. With dC/dL = F1 C, K_ij ~ sqrt(c_i c_j): the form
// of logdet_node_matrix. When W's row ranges are known, the columns are first ordered by the
// centre of their range, so that columns far apart in that order share no rows: K is then
// banded (momentum nodes couple only to nearby nodes; measured half-width ~ 50 of 680 nodes at
// R/L = 1000).
// plus = true: det(1 + K) instead (K = C^{1/2} W^T W C^{1/2}, sigma = 1).
LogDetResult logdet_node_space(const LowRankBlock& b, double sigma, DerivativeOrder order,
                               NodeSpaceSolver solver, bool plus = false) {
  const Eigen::Index q = b.W.cols();
  const bool ranges = b.group_start.size() >= 2;
  const int groups = ranges ? static_cast<int>(b.group_start.size()) - 1 : 0;
  std::vector<int> perm(q);
  std::iota(perm.begin(), perm.end(), 0);
  if (ranges) {
    std::vector<double> key(q, 0.0);
    for (Eigen::Index c = 0; c < q; ++c) {
      double sum = 0.0;
      int used = 0;
      for (int g = 0; g < groups; ++g) {
        const int lo = b.col_lo[c * groups + g], hi = b.col_hi[c * groups + g];
        if (hi <= lo) continue;
        sum += 0.5 * (lo + hi) - b.group_start[g];
        ++used;
      }
      key[c] = used > 0 ? sum / used : 0.0;
    }
    std::stable_sort(perm.begin(), perm.end(), [&](int x, int y) { return key[x] < key[y]; });
  }
  Eigen::VectorXd f1(q), f2(q), scale(q);
  for (Eigen::Index k = 0; k < q; ++k) {
    const int c = perm[k];
    scale[k] = std::sqrt(sigma * b.c[c]);
    f1[k] = order >= DerivativeOrder::kForce ? b.f1[c] : 0.0;
    f2[k] = order >= DerivativeOrder::kGradient ? b.f2[c] : 0.0;
  }
  Eigen::MatrixXd A = Eigen::MatrixXd::Identity(q, q);
  if (ranges) {
    subtract_banded_gram(b, perm, scale, A, plus);
  } else {
    const Eigen::MatrixXd Ws = b.W * scale.asDiagonal();
    A.selfadjointView<Eigen::Lower>().rankUpdate(Ws.transpose(), plus ? 1.0 : -1.0);
  }
  return logdet_node_matrix(std::move(A), f1, f2, order, solver);
}

// A copy of b whose W is zero outside the recorded ranges.
LowRankBlock with_zeros_outside_ranges(const LowRankBlock& b) {
  LowRankBlock z = b;
  const int groups = static_cast<int>(b.group_start.size()) - 1;
  for (Eigen::Index c = 0; c < b.W.cols(); ++c)
    for (int g = 0; g < groups; ++g) {
      const int g0 = b.group_start[g], g1 = b.group_start[g + 1];
      const int lo = std::clamp(b.col_lo[c * groups + g], g0, g1);
      const int hi = std::clamp(b.col_hi[c * groups + g], lo, g1);
      z.W.col(c).segment(g0, lo - g0).setZero();
      z.W.col(c).segment(hi, g1 - hi).setZero();
    }
  z.zero_outside_ranges = true;
  return z;
}

}  // namespace

bool positive_lu_log_det(const Eigen::PartialPivLU<Eigen::MatrixXd>& lu, LogDetResult& out) {
  const auto& LU = lu.matrixLU();
  double ld = 0.0;
  int negatives = 0;
  for (Eigen::Index i = 0; i < LU.rows(); ++i) {
    ld += std::log(std::abs(LU(i, i)));
    if (LU(i, i) < 0) ++negatives;
  }
  if (negatives % 2 != 0 || !std::isfinite(ld)) {
    out.ok = false;
    out.message = "det(1 - M) <= 0: truncation too small or unphysical input";
    return false;
  }
  out.s.value = ld;
  return true;
}

LogDetResult logdet_one_minus(const LowRankBlock& b, DerivativeOrder order,
                              NodeSpaceSolver solver) {
  LogDetResult out;
  const Eigen::Index n = b.W.rows();
  out.dimension = static_cast<int>(n);
  if (n == 0) return out;

  // Uniform sign?
  double sigma = 0.0;
  bool uniform = true;
  for (Eigen::Index r = 0; r < n; ++r) {
    if (b.s[r] == 0.0) continue;
    if (sigma == 0.0) sigma = b.s[r];
    if (b.s[r] != sigma) uniform = false;
  }
  if (sigma == 0.0) return out;  // M = 0

  const Eigen::Index q = b.W.cols();
  bool positive = uniform;  // sigma c_i >= 0 for all i: M is positive semidefinite
  for (Eigen::Index i = 0; positive && i < q; ++i) positive = sigma * b.c[i] >= 0.0;
  if (positive && q < n && b.group_start.size() >= 2)
    return logdet_node_space(b, sigma, order, solver);
  if (!b.zero_outside_ranges) return logdet_one_minus(with_zeros_outside_ranges(b), order, solver);
  if (positive && q < n) return logdet_node_space(b, sigma, order, solver);

  Eigen::MatrixXd A = Eigen::MatrixXd::Identity(n, n);
  Eigen::MatrixXd Z;  // (1-M)^{-1} S W
  if (uniform) {
    // A = 1 - sum_i (sigma c_i) w_i w_i^T as two symmetric rank-k updates (by the sign of
    // sigma c_i) on columns scaled by sqrt|c_i|.
    Eigen::Index npos = 0, nneg = 0;
    for (Eigen::Index i = 0; i < b.c.size(); ++i) (sigma * b.c[i] > 0 ? npos : nneg) += 1;
    Eigen::MatrixXd Wp(n, npos), Wn(n, nneg);
    npos = nneg = 0;
    for (Eigen::Index i = 0; i < b.c.size(); ++i) {
      const double sc = std::sqrt(std::abs(b.c[i]));
      if (sigma * b.c[i] > 0)
        Wp.col(npos++) = b.W.col(i) * sc;
      else
        Wn.col(nneg++) = b.W.col(i) * sc;
    }
    if (npos > 0) A.selfadjointView<Eigen::Lower>().rankUpdate(Wp, -1.0);
    if (nneg > 0) A.selfadjointView<Eigen::Lower>().rankUpdate(Wn, 1.0);
    Eigen::LLT<Eigen::MatrixXd, Eigen::Lower> llt(A);
    if (llt.info() != Eigen::Success) {
      out.ok = false;
      out.message = "1 - M is not positive definite (Cholesky failed); truncation too small?";
      return out;
    }
    const auto& L = llt.matrixLLT();
    double ld = 0.0;
    for (Eigen::Index i = 0; i < n; ++i) ld += std::log(L(i, i));
    out.s.value = 2.0 * ld;
    if (order == DerivativeOrder::kEnergy) return out;
    Z = llt.solve(b.W) * sigma;
  } else {
    A.noalias() -= b.s.asDiagonal() * (b.W * b.c.asDiagonal()) * b.W.transpose();
    Eigen::PartialPivLU<Eigen::MatrixXd> lu(A);
    if (!positive_lu_log_det(lu, out)) return out;
    if (order == DerivativeOrder::kEnergy) return out;
    Z = lu.solve(b.s.asDiagonal() * b.W);
  }

  // G_ii = sum_r W_ri Z_ri
  const Eigen::VectorXd Gdiag = (b.W.array() * Z.array()).colwise().sum().transpose();
  double d1 = 0.0;
  for (Eigen::Index i = 0; i < q; ++i) d1 -= b.c[i] * b.f1[i] * Gdiag[i];
  out.s.d1 = d1;
  if (order == DerivativeOrder::kForce) return out;

  const Eigen::MatrixXd G = b.W.transpose() * Z;  // q x q
  double d2 = 0.0;
  for (Eigen::Index i = 0; i < q; ++i) d2 -= b.c[i] * b.f2[i] * Gdiag[i];
  const Eigen::VectorXd g = (b.c.array() * b.f1.array()).matrix();
  // sum_ik g_i G_ik g_k G_ki
  const Eigen::MatrixXd H = g.asDiagonal() * G;  // H_ik = g_i G_ik
  d2 -= (H.array() * H.transpose().array()).sum();
  out.s.d2 = d2;
  return out;
}

LogDetResult logdet_node_gram(const LowRankBlock& b, double sign, DerivativeOrder order,
                              NodeSpaceSolver solver) {
  for (Eigen::Index i = 0; i < b.c.size(); ++i)
    if (!(b.c[i] >= 0.0)) return {{}, false, "logdet_node_gram: c_i < 0", 0};
  if (b.W.rows() == 0 || b.W.cols() == 0) return {};
  return logdet_node_space(b, 1.0, order, solver, sign < 0.0);
}

}  // namespace roundtrip
