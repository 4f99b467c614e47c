// Electrolyte gap medium (electrolyte.h).
#include "solver/planar/electrolyte.h"

#include <cmath>
#include <limits>

#include "solver/constants.h"
#include "solver/planar/sheet.h"  // kVacuumPermittivity

namespace roundtrip {

double electrolyte_kappa_sq(double ionic_strength, double eps_w, double temperature_K) {
  if (ionic_strength == 0.0) return 0.0;
  if (!(temperature_K > 0.0)) return std::numeric_limits<double>::infinity();
  return 2.0 * kAvogadro * kElementaryCharge * kElementaryCharge * ionic_strength /
         (kVacuumPermittivity * eps_w * kBoltzmann * temperature_K);
}

double screened_static_tm(double r, double k, double q) {
  if (q == k) return r;
  // [(k - q) + r (k + q)] / [(k + q) + r (k - q)] = (a - b)/(a + b), a = k (1 + r),
  // b = q (1 - r): no difference of k and q (which cancels for k << q and for k >> kappa), and
  // r = 1 (a conductor) gives 1 at every k > 0. a + b = 0 only at k = 0 with r = 1: the
  // conductor's limit 1.
  const double a = k * (1.0 + r), b = q * (1.0 - r);
  if (a + b == 0.0) return 1.0;
  return (a - b) / (a + b);
}

}  // namespace roundtrip
