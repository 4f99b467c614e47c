#pragma once
// The convergence test in the diffraction order count N shared by the grating kinds
// (grating-plate, grating-grating), at xi* = frequency_scale(L) (c/2L in vacuum).
// Orders: N = N_0, then factors ~sqrt(2) (4, 6, 8, 11, 16, 23, ...); each level is evaluated
// together with the previous one on the same Bloch nodes, d_k = s(N_k) - s(N_{k-1}); the
// observed algebraic rate p_k solves d_{k-1}/d_k = (N_{k-2}^-p - N_{k-1}^-p)/(N_{k-1}^-p -
// N_k^-p) (s = s_inf + a N^-p), and Richardson's extrapolation is R_k = s(N_k) + d_k/(r^p_k - 1),
// r = N_k/N_{k-1} (Richardson, Phil. Trans. R. Soc. A 210, 307 (1911)). Accepted at the first k
// where either the plain value's error estimate 1.25 |d_k|/(r^p_k - 1) (Roache's grid
// convergence index with safety factor 1.25, Roache, J. Fluids Eng. 116, 405 (1994)) is
// <= 0.3 rel_tol |s|, or two successive extrapolations agree, |R_k - R_{k-1}| <= 0.3 rel_tol |R_k|
// with |p_k - p_{k-1}| <= 0.5; in the second case every frequency is computed at N_{k-1} and N_k
// on the same Bloch nodes and extrapolated with p_k (weights -c, 1 + c, c = 1/((N_k/N_{k-1})^p
// - 1)). Relative errors are those of s(xi*), taken to hold for E. Lamellar edges make the
// convergence algebraic (Li, JOSA A 13, 1870 (1996)); observed rates 1.6-1.7.
#include <functional>
#include <map>
#include <string>
#include <utility>
#include <vector>

namespace roundtrip {

/// The cut-offs of one gap chosen by the convergence tests (slices: grating-plate only).
struct GratingStudy {
  int orders = 0;      ///< N used (the finer of the pair when extrapolating)
  int orders_low = 0;  ///< the coarser N of the pair (0: no extrapolation)
  double rate = 0.0;   ///< observed algebraic rate p in N (0: not observed)
  double error = 0.0;  ///< estimated relative truncation error in orders (of E at xi*)
  int slices = 0;      ///< staircase slices (0: lamellar)
  double slice_rate = 0.0;
  double slice_error = 0.0;
  bool verified = false;                       ///< both estimates within their share of rel_tol
  std::vector<std::pair<int, double>> levels;  ///< (N, s(xi*)) of the order study
};

/// Observed algebraic rate p from three levels n1 < n2 < n3 with s(n) = s_inf + a n^-p and the
/// differences d_prev = s2 - s1, d = s3 - s2 (bisection on [0.1, 8]); 0 when the differences do
/// not shrink with the same sign or p falls outside.
double observed_rate(double n1, double n2, double n3, double d_prev, double d);

/// The next level of the order sequence (factor ~sqrt(2)).
int next_orders(int n);

/// The damping model of N at gap L: orders |n| G > ln(1e6)/(2L) are damped by
/// e^{-2 kappa_n L} < 1e-6 on the round trip; at least 8 (the grating's own algebraic
/// convergence), at most 100.
int model_orders(double period, double gap);

/// The order part of the study (header): `single(N)` gives s(xi*) at N alone, `pair(n_lo, n)`
/// s(xi*) at both levels on the same Bloch nodes. `st` carries the slices already chosen (their
/// error enters `verified` at 0.2 rel_tol); returns it with the orders filled in.
GratingStudy study_orders(GratingStudy st, double period, double gap, double rel_tol,
                          int max_orders, const std::function<double(int)>& single,
                          const std::function<std::pair<double, double>(int, int)>& pair);

/// Levels and weights of a frequency's evaluation for a study: {N} with {1}, or the Richardson
/// pair {N_low, N} with {-c, 1 + c}.
std::pair<std::vector<int>, std::vector<double>> study_levels(const GratingStudy& st);

/// The truncation map of a study for reports and HDF5 (/results/truncation): "orders",
/// "orders_low", "order_rate", "order_error", "bloch_rel_tol" (and the slice keys when `slices`).
std::map<std::string, double> study_truncation(const GratingStudy& st, double bloch_rel_tol,
                                               bool slices);

/// Why a study's truncation is not verified (empty if it is): orders set by hand, or the study
/// stopped at max_orders with its estimate.
std::string study_unverified(const GratingStudy& st, bool orders_set, int max_orders);

}  // namespace roundtrip
