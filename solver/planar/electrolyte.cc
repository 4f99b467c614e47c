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
  // [(k - q) + r (k + q)] / [(k + q) + r (k - q)]; k - q = -kappa^2/(k + q) without cancellation.
  const double kpq = k + q;
  const double kmq = k - q;
  return (kmq + r * kpq) / (kpq + r * kmq);
}

}  // namespace roundtrip
