#pragma once
// Associated Legendre functions off the cut, x >= 1, without the Condon-Shortley phase:
//   Pt_l^m(x) = (x^2 - 1)^{m/2} d^m P_l(x) / dx^m   (Hobson's "type 3" functions),
// all positive for x > 1. Values in log form: log Pt_l^m grows like l*acosh(x).
// Recurrence in l at fixed m (DLMF 14.10.3): (l-m+1) P_{l+1} = (2l+1) x P_l - (l+m) P_{l-1},
// started at Pt_m^m = (2m-1)!! (x^2-1)^{m/2}, Pt_{m+1}^m = (2m+1) x Pt_m^m; for x > 1 Pt is the
// dominant solution, so the upward recurrence (on the ratio Pt_{l+1}/Pt_l) is stable.
#include <Eigen/Core>
#include <vector>

namespace roundtrip::special {

/// log Pt_l^m(x) for l = m..lmax into out[l] (out resized to lmax + 1; entries l < m = -inf).
/// x > 1 (at x == 1, m > 0 gives -inf).
void legendre_log(double x, int m, int lmax, std::vector<double>& out);

/// log Pt_l^m(x_j) for many x_j > 1 at once: out(l, j), l = 0..lmax (rows l < m = -inf). The
/// recurrences of the different x_j run side by side (SIMD across nodes), which hides the latency
/// of the division in each step. Same values as legendre_log to the last bits.
void legendre_log_many(const Eigen::ArrayXd& x, int m, int lmax, Eigen::ArrayXXd& out);

/// log((2m-1)!!), with (-1)!! = 1.
double log_double_factorial_odd(int m);

}  // namespace roundtrip::special
