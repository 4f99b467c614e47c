#include "solver/logdet/low_rank.h"

#include <algorithm>
#include <cmath>
#include <limits>

namespace roundtrip {

namespace {

// A -= Ws^T Ws on and below the diagonal, skipping the rows where a column is zero: columns are
// taken in blocks of kColumnBlock, each block pair multiplies only the rows where both blocks
// have non-zeros (per row group). Exact up to the dropped zeros; same result as rankUpdate.
void subtract_banded_gram(const LowRankBlock& b, const Eigen::MatrixXd& Ws, Eigen::MatrixXd& A) {
  constexpr int kColumnBlock = 24;
  const int q = static_cast<int>(Ws.cols());
  const int groups = static_cast<int>(b.group_start.size()) - 1;
  const int nb = (q + kColumnBlock - 1) / kColumnBlock;
  std::vector<int> lo(nb * groups, std::numeric_limits<int>::max()), hi(nb * groups, -1);
  for (int c = 0; c < q; ++c)
    for (int g = 0; g < groups; ++g) {
      const int l0 = b.col_lo[c * groups + g], h0 = b.col_hi[c * groups + g];
      if (h0 <= l0) continue;
      int& L = lo[(c / kColumnBlock) * groups + g];
      int& H = hi[(c / kColumnBlock) * groups + g];
      L = std::min(L, l0);
      H = std::max(H, h0);
    }
  for (int I = 0; I < nb; ++I) {
    const int i0 = I * kColumnBlock, ni = std::min(kColumnBlock, q - i0);
    for (int J = 0; J <= I; ++J) {
      const int j0 = J * kColumnBlock, nj = std::min(kColumnBlock, q - j0);
      for (int g = 0; g < groups; ++g) {
        const int r0 = std::max(lo[I * groups + g], lo[J * groups + g]);
        const int r1 = std::min(hi[I * groups + g], hi[J * groups + g]);
        if (r1 <= r0) continue;
        A.block(i0, j0, ni, nj).noalias() -=
            Ws.block(r0, i0, r1 - r0, ni).transpose() * Ws.block(r0, j0, r1 - r0, nj);
      }
    }
  }
}

// Sylvester's identity det(1 - sigma W C W^T) = det(1 - K), K = (sigma C)^{1/2} W^T W
// (sigma C)^{1/2} (q x q), for sigma c_i >= 0. With B = (1 - K)^{-1} and dC/dL = F1 C:
//   d log det/dL   = -Tr[B F1 K] = -sum_i f1_i (B_ii - 1),
//   d2 log det/dL2 = -sum_i f2_i (B_ii - 1) - sum_ij f1_i f1_j (B - 1)_ij^2.
LogDetResult logdet_node_space(const LowRankBlock& b, double sigma, DerivativeOrder order) {
  LogDetResult out;
  out.dimension = static_cast<int>(b.W.cols());
  const Eigen::VectorXd sq = (sigma * b.c).cwiseSqrt();
  const Eigen::MatrixXd Ws = b.W * sq.asDiagonal();
  const Eigen::Index q = b.W.cols();
  Eigen::MatrixXd A = Eigen::MatrixXd::Identity(q, q);
  if (b.group_start.size() >= 2)
    subtract_banded_gram(b, Ws, A);
  else
    A.selfadjointView<Eigen::Lower>().rankUpdate(Ws.transpose(), -1.0);
  Eigen::LLT<Eigen::MatrixXd, Eigen::Lower> llt(A);
  if (llt.info() != Eigen::Success) {
    out.ok = false;
    out.message = "1 - M is not positive definite (Cholesky failed); truncation too small?";
    return out;
  }
  double ld = 0.0;
  for (Eigen::Index i = 0; i < q; ++i) ld += std::log(llt.matrixLLT()(i, i));
  out.s.value = 2.0 * ld;
  if (order == DerivativeOrder::kEnergy) return out;
  const Eigen::MatrixXd B = llt.solve(Eigen::MatrixXd::Identity(q, q));
  double d1 = 0.0;
  for (Eigen::Index i = 0; i < q; ++i) d1 -= b.f1[i] * (B(i, i) - 1.0);
  out.s.d1 = d1;
  if (order == DerivativeOrder::kForce) return out;
  double d2 = 0.0;
  for (Eigen::Index i = 0; i < q; ++i) d2 -= b.f2[i] * (B(i, i) - 1.0);
  // K B = B - 1 and B is symmetric, so Tr[(B F1 K)^2] = Tr[F1 (B-1) F1 (B-1)]
  //   = sum_ij f1_i f1_j (B-1)_ij^2   (no further matrix product).
  Eigen::MatrixXd Bm1 = B - Eigen::MatrixXd::Identity(q, q);
  d2 -= (b.f1.asDiagonal() * Bm1.cwiseAbs2() * b.f1.asDiagonal()).sum();
  out.s.d2 = d2;
  return out;
}

}  // namespace

LogDetResult logdet_one_minus(const LowRankBlock& b, DerivativeOrder order) {
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
  if (positive && q < n) return logdet_node_space(b, sigma, order);

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
    const auto& LU = lu.matrixLU();
    double ld = 0.0;
    int negatives = 0;
    for (Eigen::Index i = 0; i < n; ++i) {
      ld += std::log(std::abs(LU(i, i)));
      if (LU(i, i) < 0) ++negatives;
    }
    if (negatives % 2 != 0 || !std::isfinite(ld)) {
      out.ok = false;
      out.message = "det(1 - M) <= 0: truncation too small or unphysical input";
      return out;
    }
    out.s.value = ld;
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

}  // namespace roundtrip
