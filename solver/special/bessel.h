#pragma once
// Modified spherical Bessel functions of the first and third kind, in log form so that no order
// l or argument x > 0 overflows or underflows.
//   i_l(x) = sqrt(pi/(2x)) I_{l+1/2}(x),   k_l(x) = sqrt(2/(pi x)) K_{l+1/2}(x),
//   i_0 = sinh(x)/x, k_0 = exp(-x)/x  (so k_l here is 2/pi times the DLMF 10.47.9 function).
// Wronskian used to get i_l from ratios: i_l k_{l+1} + i_{l+1} k_l = 1/x^2 (DLMF 10.50).
// Upward recurrence is stable for k_l; the ratio i_{l+1}/i_l comes from the backward
// recurrence (continued fraction), stable for i_l (DLMF 10.51, Gautschi SIAM Rev. 9, 24 (1967)).
#include <vector>

namespace roundtrip::special {

struct SphericalBesselLog {
  double x = 0.0;
  std::vector<double> log_i;    ///< log i_l(x), l = 0..lmax
  std::vector<double> log_k;    ///< log k_l(x), l = 0..lmax
  std::vector<double> ratio_i;  ///< i_{l+1}(x)/i_l(x), l = 0..lmax
  std::vector<double> ratio_k;  ///< k_{l+1}(x)/k_l(x), l = 0..lmax
  /// d log i_l / dx = i_l'/i_l = l/x + i_{l+1}/i_l
  double dlog_i(int l) const { return l / x + ratio_i[l]; }
  /// d log k_l / dx = k_l'/k_l = l/x - k_{l+1}/k_l
  double dlog_k(int l) const { return l / x - ratio_k[l]; }
};

/// All orders 0..lmax at x > 0.
SphericalBesselLog spherical_bessel_log(double x, int lmax);

}  // namespace roundtrip::special
