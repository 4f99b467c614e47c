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

/// log((l+m)!/l!) for l, m >= 0, to a few ulps of the result (Stirling series of the difference
/// of log-gammas for l >= 32, a direct sum below; DLMF 5.11.1). Two lgamma calls lose ~ulp of
/// lgamma(l+m+1) instead, ~1e-11 absolute at l ~ 1e4.
double log_rising_factorial(int l, int m);

/// log Pt_l^m(x) and log(Pt_{l+1}^m(x) / Pt_l^m(x)) for l > m >= 0, x > 1, without the recurrence
/// from l = m: Laplace's first integral for x > 1 (Hobson, The Theory of Spherical and
/// Ellipsoidal Harmonics (1931); DLMF §14.12), with s = sqrt(x^2 - 1),
///   Pt_l^m(x) = (l+m)!/(2 pi l!) \int_{-pi}^{pi} (x + s cos phi)^l e^{i m phi} dphi,
/// on the line phi = theta + i beta through the saddle point (l s sinh beta = m (x + s cosh beta)),
/// where the integrand is largest at theta = 0 and not oscillating there, by the trapezoid rule
/// (periodic entire integrand: exact for more than l + m + 1 points, spectrally accurate for
/// fewer that resolve the peak). Measured against mpmath (tests/special/legendre_band_test.cc):
/// log Pt within an ulp of the log for l - m >= 100, x - 1 >= 1e-7, l <= 8000. The ratio uses
/// the line placed for l: within a few steps of l = m and x -> 1 it loses up to ~1e-11 (start
/// there from l = m instead, as legendre_log_range_pair does).
void legendre_log_start(double x, int m, int l, double& log_p, double& log_ratio);

/// Leading saddle-point value of log Pt_l^m(x) (l >= m, x > 1) from the same integral: error
/// O(1/l) in the log, capped so that it never exceeds the bound |integral| <= its peak. For
/// locating where a product with Pt is negligible, not for values.
double legendre_log_estimate(double x, int m, int l);

/// log Pt_l^m(x) and log Pt_l^{m+1}(x) for l = l0 .. l0 + n - 1 into pm[0..n), pm1[0..n)
/// (-inf where l < m resp. l < m + 1). Each starts at max(l0, m) (max(l0, m+1)) by
/// legendre_log_start, or from l = m by the closed form if that is only a few steps below,
/// then the recurrence (DLMF 14.10.3) on values rescaled by powers of two: the cost is O(n)
/// whatever l0, and the rounding does not accumulate in a running sum of logs (near x = 1, where
/// both solutions grow alike, each step's ~1e-16 is carried along: ~2e-13 after 200 steps).
void legendre_log_range_pair(double x, int m, int l0, int n, double* pm, double* pm1);

}  // namespace roundtrip::special
