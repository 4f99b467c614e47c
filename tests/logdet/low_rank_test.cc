// log det(1 - K) and its gap derivatives: the banded factorisation against the dense one and
// both against central finite differences of log det (common practice), on node-space matrices
// of the sphere-plate form K_ij(L) = sqrt(c_i(L) c_j(L)) G_ij, c_i = c_i0 exp(-a_i L)
// (so f1 = -a, f2 = a^2), G a positive banded Gaussian kernel.
#include "solver/logdet/low_rank.h"

#include <gtest/gtest.h>

#include <Eigen/Dense>
#include <cmath>

namespace roundtrip {
namespace {

struct Case {
  Eigen::MatrixXd G;
  Eigen::VectorXd c0, a;
};

// q nodes u_i = i / 3 with the kernel exp(-(u_i - u_j)^2 / 2), cut to zero beyond |i - j| > w,
// scaled so that 1 - K is positive definite with eigenvalues down to ~0.05.
Case make_case(int q, int w) {
  Case k;
  k.G = Eigen::MatrixXd::Zero(q, q);
  for (int i = 0; i < q; ++i)
    for (int j = std::max(0, i - w); j <= std::min(q - 1, i + w); ++j) {
      const double du = (i - j) / 3.0;
      k.G(i, j) = std::exp(-0.5 * du * du) * (1.0 + 0.3 * std::sin(0.1 * (i + j)));
    }
  k.G = 0.5 * (k.G + k.G.transpose());
  const double lmax = Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd>(k.G).eigenvalues().maxCoeff();
  k.G /= 1.05 * lmax;
  k.c0 = Eigen::VectorXd::Constant(q, 1.0);
  k.a.resize(q);
  for (int i = 0; i < q; ++i) k.a[i] = 0.5 + 2.0 * i / q;
  return k;
}

Eigen::MatrixXd one_minus_k(const Case& k, double L) {
  const Eigen::VectorXd s = (k.c0.array() * (-k.a.array() * L).exp()).sqrt().matrix();
  return Eigen::MatrixXd::Identity(k.G.rows(), k.G.cols()) - s.asDiagonal() * k.G * s.asDiagonal();
}

double logdet(const Eigen::MatrixXd& A) {
  Eigen::LLT<Eigen::MatrixXd> llt(A);
  return 2.0 * llt.matrixL().toDenseMatrix().diagonal().array().log().sum();
}

TEST(NodeMatrixLogDet, BandedEqualsDenseAndFiniteDifferences) {
  for (int q : {40, 200, 333}) {
    const Case k = make_case(q, 12);
    const Eigen::VectorXd f1 = -k.a, f2 = k.a.cwiseAbs2();
    const double L = 0.2;
    const LogDetResult dense = logdet_node_matrix(
        one_minus_k(k, L), f1, f2, DerivativeOrder::kGradient, NodeSpaceSolver::kDense);
    const LogDetResult banded = logdet_node_matrix(
        one_minus_k(k, L), f1, f2, DerivativeOrder::kGradient, NodeSpaceSolver::kBanded);
    ASSERT_TRUE(dense.ok && banded.ok);
    // Two factorisations of the same matrix: rounding only (1e-12 of the value's size).
    EXPECT_NEAR(banded.s.value, dense.s.value, 1e-12 * std::abs(dense.s.value)) << q;
    EXPECT_NEAR(banded.s.d1, dense.s.d1, 1e-11 * std::abs(dense.s.d1)) << q;
    EXPECT_NEAR(banded.s.d2, dense.s.d2, 1e-11 * std::abs(dense.s.d2)) << q;
    // Five-point central differences, h = 1e-3 (common practice). 1 - K has eigenvalues down to
    // ~0.05, so high derivatives are large: measured (NumPy slogdet) the five-point d1 error
    // falls from 1e-6 at h = 1e-2 to 1e-10 at h = 1e-3; rounding in d2 is ~1e-16 |f| / h^2.
    const double h = 1e-3;
    double f[5];
    for (int s = -2; s <= 2; ++s) f[s + 2] = logdet(one_minus_k(k, L + s * h));
    const double fd1 = (f[0] - 8 * f[1] + 8 * f[3] - f[4]) / (12 * h);
    const double fd2 = (-f[0] + 16 * f[1] - 30 * f[2] + 16 * f[3] - f[4]) / (12 * h * h);
    EXPECT_NEAR(banded.s.value, f[2], 1e-12 * std::abs(f[2]));
    EXPECT_NEAR(banded.s.d1, fd1, 1e-8 * std::abs(banded.s.d1)) << q;
    EXPECT_NEAR(banded.s.d2, fd2, 1e-6 * std::abs(banded.s.d2)) << q;
  }
}

TEST(NodeMatrixLogDet, AutoPicksBandedOnlyForNarrowBands) {
  // Same results either way; the choice only changes the cost.
  for (int w : {5, 150}) {
    const Case k = make_case(300, w);
    const Eigen::VectorXd f1 = -k.a, f2 = k.a.cwiseAbs2();
    const LogDetResult a = logdet_node_matrix(one_minus_k(k, 0.1), f1, f2,
                                              DerivativeOrder::kGradient, NodeSpaceSolver::kAuto);
    const LogDetResult d = logdet_node_matrix(one_minus_k(k, 0.1), f1, f2,
                                              DerivativeOrder::kGradient, NodeSpaceSolver::kDense);
    EXPECT_NEAR(a.s.value, d.s.value, 1e-12 * std::abs(d.s.value));
    EXPECT_NEAR(a.s.d2, d.s.d2, 1e-11 * std::abs(d.s.d2));
  }
}

// The derivatives against the textbook formulas with an explicit inverse (Jacobi's formula,
// standard): d log det(1 - K)/dL = -Tr[B dK], d2/dL2 = -Tr[B d2K] - Tr[(B dK)^2], B = (1 - K)^{-1},
// here with K_ij = G_ij sqrt(c_i c_j) e^{-(a_i + a_j) L / 2}, so dK_ij = -(a_i + a_j)/2 K_ij and
// d2K_ij = (a_i + a_j)^2/4 K_ij. Sizes that are not multiples of the solvers' column blocks
// (64 dense; the band width banded), bands from narrow to a third of q: the partial solves of
// both paths (only the rows and blocks that are needed) must give the full result.
// Tolerance: rounding of a q x q inverse with condition ~20 (1e-11 relative).
TEST(NodeMatrixLogDet, DerivativesEqualTheExplicitInverseFormulas) {
  for (int q : {37, 130, 257}) {
    for (int w : {3, 17, q / 3}) {
      const Case k = make_case(q, w);
      const double L = 0.15;
      const Eigen::VectorXd f1 = -k.a, f2 = k.a.cwiseAbs2();
      const Eigen::MatrixXd A = one_minus_k(k, L);
      const Eigen::MatrixXd K = Eigen::MatrixXd::Identity(q, q) - A;
      Eigen::MatrixXd dK(q, q), d2K(q, q);
      for (int i = 0; i < q; ++i)
        for (int j = 0; j < q; ++j) {
          const double s = 0.5 * (k.a[i] + k.a[j]);
          dK(i, j) = -s * K(i, j);
          d2K(i, j) = s * s * K(i, j);
        }
      const Eigen::MatrixXd B = A.partialPivLu().inverse();
      const double d1 = -(B * dK).trace();
      const Eigen::MatrixXd BdK = B * dK;
      const double d2 = -(B * d2K).trace() - (BdK * BdK).trace();
      for (auto solver : {NodeSpaceSolver::kDense, NodeSpaceSolver::kBanded}) {
        const LogDetResult r = logdet_node_matrix(A, f1, f2, DerivativeOrder::kGradient, solver);
        ASSERT_TRUE(r.ok) << q << " " << w;
        EXPECT_NEAR(r.s.d1, d1, 1e-11 * std::abs(d1)) << q << " " << w;
        EXPECT_NEAR(r.s.d2, d2, 1e-11 * std::abs(d2)) << q << " " << w;
      }
    }
  }
}

TEST(NodeMatrixLogDet, NotPositiveDefiniteIsReported) {
  Case k = make_case(100, 10);
  k.G *= 1.2 * 1.05;  // largest eigenvalue of K now above 1
  const Eigen::VectorXd f1 = -k.a, f2 = k.a.cwiseAbs2();
  for (auto s : {NodeSpaceSolver::kDense, NodeSpaceSolver::kBanded}) {
    const LogDetResult r =
        logdet_node_matrix(one_minus_k(k, 0.0), f1, f2, DerivativeOrder::kEnergy, s);
    EXPECT_FALSE(r.ok);
    EXPECT_NE(r.message.find("positive definite"), std::string::npos);
  }
}

}  // namespace
}  // namespace roundtrip
