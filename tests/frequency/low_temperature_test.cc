// The Matsubara sum tends to the T = 0 integral as T -> 0, by the amount the low-T expansion of
// ideal plates predicts.
#include <gtest/gtest.h>

#include <cmath>

#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

FrequencySum pec_plates(double gap, double temperature, double rel_tol,
                        ThermalRule rule = ThermalRule::kAuto) {
  auto pec = make_half_space(make_perfect_conductor());
  const PlatePlate pp(pec, pec, nullptr);
  FrequencyRuleOptions o;
  o.temperature_K = temperature;
  o.rel_tol = rel_tol;
  o.thermal_rule = temperature > 0.0 ? rule : ThermalRule::kAuto;
  return sum_over_frequencies(
      [&](double xi) { return pp.at_frequency(xi, gap, DerivativeOrder::kEnergy); },
      pp.frequency_scale(gap), o);
}

TEST(MatsubaraSum, TendsToZeroTemperatureResultAsTemperatureFalls) {
  // F(T)/E(0) - 1 = (45 zeta(3)/pi^3) t^3 - t^4, t = 2 k_B T L/(hbar c) (ideal plates at low T;
  // from memory, classic result; corrections ~exp(-pi/t)). L = 100 nm: t = 8.7e-5 at 1 K and
  // 8.7e-4 at 10 K, i.e. thermal shifts of 1.2e-12 and 1.2e-9 of the energy.
  const double L = 100e-9;
  const FrequencySum zero = pec_plates(L, 0.0, 1e-14);
  ASSERT_TRUE(zero.converged) << zero.message;
  for (double T : {1.0, 10.0}) {
    const FrequencySum r = pec_plates(L, T, 1e-14, ThermalRule::kMatsubara);
    ASSERT_TRUE(r.converged) << r.message;
    const double t = 2.0 * kBoltzmann * T * L / kHbarC;
    const double expected = 45.0 * kZeta3 / (kPi * kPi * kPi) * t * t * t - t * t * t * t;
    // Both sums are asked for 1e-14 and summed with compensation; 6e-14 is 5 % of the 1 K shift.
    constexpr double kTol = 6e-14;
    EXPECT_NEAR(r.total.value / zero.total.value - 1.0, expected, kTol) << "T = " << T;
    EXPECT_GT(r.terms.size(), 1000u);  // the low-T sum really is long (xi_1 << c/2L)
  }
}

}  // namespace
}  // namespace roundtrip
