#include "solver/special/bessel.h"

#include <cassert>
#include <cmath>

namespace roundtrip::special {

SphericalBesselLog spherical_bessel_log(double x, int lmax) {
  assert(x > 0.0 && lmax >= 0);
  SphericalBesselLog b;
  b.x = x;
  b.log_i.resize(lmax + 1);
  b.log_k.resize(lmax + 1);
  b.ratio_i.resize(lmax + 1);
  b.ratio_k.resize(lmax + 1);

  // k_{l+1}/k_l from k_{l+1} = k_{l-1} + (2l+1)/x k_l, started at k_1/k_0 = 1 + 1/x.
  b.ratio_k[0] = 1.0 + 1.0 / x;
  for (int l = 1; l <= lmax; ++l) b.ratio_k[l] = 1.0 / b.ratio_k[l - 1] + (2.0 * l + 1.0) / x;
  b.log_k[0] = -x - std::log(x);
  for (int l = 1; l <= lmax; ++l) b.log_k[l] = b.log_k[l - 1] + std::log(b.ratio_k[l - 1]);

  // i_{l+1}/i_l by the backward recurrence r_{l-1} = 1/((2l+1)/x + r_l), started far above lmax
  // where r_l ~ x/(2l+3) -> the start value's error is damped by the recurrence.
  const int extra = 20 + static_cast<int>(std::sqrt(40.0 * (lmax + x))) + static_cast<int>(x);
  const int ltop = lmax + extra;
  double r = x / (2.0 * ltop + 3.0);
  for (int l = ltop; l > lmax; --l) r = 1.0 / ((2.0 * l + 1.0) / x + r);
  b.ratio_i[lmax] = r;
  for (int l = lmax; l >= 1; --l) b.ratio_i[l - 1] = 1.0 / ((2.0 * l + 1.0) / x + b.ratio_i[l]);

  // i_l = 1 / (x^2 k_l (k_{l+1}/k_l + i_{l+1}/i_l)) from the Wronskian.
  for (int l = 0; l <= lmax; ++l)
    b.log_i[l] = -2.0 * std::log(x) - b.log_k[l] - std::log(b.ratio_k[l] + b.ratio_i[l]);
  return b;
}

}  // namespace roundtrip::special
