#pragma once
// Modified Bessel functions of the first kind of integer order, I_nu(z) (DLMF 10.25), in log
// form for arguments up to ~1e6 and orders up to ~1e4 without overflow.
//   I_0 from Boost.Math for z <= 700, beyond from the large-argument expansion
//     I_0(z) ~ e^z / sqrt(2 pi z) sum_k [(2k-1)!!]^2 / (k! (8z)^k)   (DLMF 10.40.1);
//   the ratios r_k = I_{k+1}/I_k from the backward recurrence r_k = 1/(2(k+1)/z + r_{k+1})
//     (DLMF 10.29.1; the minimal-solution ratio, stable downward: Gautschi, SIAM Rev. 9, 24
//     (1967)), started 6 sqrt(z) + 20 orders above the highest one needed, where the start
//     error has been damped by the product of r_k^2 < e^-36.
#include <vector>

namespace roundtrip::special {

/// out[m] = log I_{2m}(z), m = 0..m_cap (out resized). z > 0. scratch is a work buffer.
void log_bessel_i_even(double z, int m_cap, std::vector<double>& out, std::vector<double>& scratch);

/// log I_0(z), z > 0.
double log_bessel_i0(double z);

/// log(I_0(z) - 1), z > 0 (series for small z, where the difference would cancel).
double log_bessel_i0_minus_one(double z);

}  // namespace roundtrip::special
