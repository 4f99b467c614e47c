// Derjaguin PFA from the plate-plate Lifshitz result (formulas and sources in pfa.h).
#include "solver/pfa/pfa.h"

#include <fmt/format.h>

#include <cmath>
#include <stdexcept>
#include <vector>

#include "solver/constants.h"
#include "solver/materials/models.h"
#include "solver/planar/layered.h"

namespace roundtrip {

PfaValues sphere_plate_pfa(const PlatePlate& pp, double radius, double gap,
                           const FrequencyRuleOptions& opts, FrequencySum* summary) {
  if (!std::isfinite(radius) || !(radius > 0.0))
    throw std::invalid_argument(fmt::format("PFA: radius = {} m must be finite and > 0", radius));
  if (!std::isfinite(gap) || !(gap > 0.0))
    throw std::invalid_argument(fmt::format("PFA: gap = {} m must be finite and > 0", gap));
  // total = {\int_L^inf E_pp dL', -E_pp, P_pp}; the gradient needs the second component.
  const FrequencySum sum = sum_over_frequencies(
      [&](double xi) { return pp.integrated_at_frequency(xi, gap, DerivativeOrder::kGradient); },
      pp.frequency_scale(gap), opts);
  const double c = 2.0 * kPi * radius;
  if (summary) *summary = sum;
  return {c * sum.total.value, -c * sum.total.d1, -c * sum.total.d2};
}

double pfa_effective_radius(double r1, double r2) {
  if (!(r1 > 0.0) || !(r2 > 0.0) || !std::isfinite(r1) || !std::isfinite(r2))
    throw std::invalid_argument(
        fmt::format("PFA: radii {} m and {} m must be finite and > 0", r1, r2));
  return r1 * r2 / (r1 + r2);
}

PlanarPtr sphere_pfa_partner(const SphereBody& sphere) {
  std::vector<Layer> films;
  for (const SphereShell& s : sphere.shells) films.push_back({s.material, s.thickness});
  return films.empty() ? make_half_space(sphere.core) : make_layered(films, sphere.core);
}

std::unique_ptr<PlatePlate> scalar_field_pfa_plates(MaterialPtr medium) {
  const PlanarPtr pec = make_half_space(make_perfect_conductor());
  return std::make_unique<PlatePlate>(pec, pec, std::move(medium));
}

}  // namespace roundtrip
