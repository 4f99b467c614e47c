// Separation sweeps: signs, units, determinism across thread counts, progress, input checks.
#include "solver/run.h"

#include <gtest/gtest.h>

#include <atomic>
#include <cmath>

#include "solver/constants.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

std::vector<double> gaps() {
  std::vector<double> g;
  for (int i = 0; i < 9; ++i) g.push_back(100e-9 * std::pow(1.5, i));
  return g;
}

TEST(RunSweep, PecForceIsCasimirPressure) {
  // force = -dE/dL = P = -pi^2 hbar c/(240 L^4) (Casimir 1948), gradient = dP/dL = 4 pi^2 hbar c
  // /(240 L^5) (derived); energy -pi^2 hbar c/(720 L^3).
  auto pec = make_half_space(make_perfect_conductor());
  auto geometry = make_plate_plate(pec, pec, nullptr);
  RunOptions o;
  o.frequency.rel_tol = 1e-12;
  o.quantities.gradient = true;
  const RunResult r = run_sweep(*geometry, gaps(), o);
  ASSERT_EQ(r.points.size(), gaps().size());
  EXPECT_EQ(r.scale, ResultScale::kPerArea);
  EXPECT_EQ(r.kind, "plate-plate");
  constexpr double kTol = 1e-10;  // as for the plate-plate PEC check
  for (const auto& p : r.points) {
    const double L = p.gap;
    const double c = kPi * kPi * kHbarC;
    EXPECT_NEAR(p.energy / (-c / (720.0 * std::pow(L, 3))), 1.0, kTol);
    EXPECT_NEAR(p.force / (-c / (240.0 * std::pow(L, 4))), 1.0, kTol);
    EXPECT_NEAR(p.gradient / (4.0 * c / (240.0 * std::pow(L, 5))), 1.0, kTol);
    EXPECT_TRUE(p.frequencies.converged);
    EXPECT_FALSE(p.pfa.has_value());  // plates have no separate PFA
  }
}

TEST(RunSweep, ResultsAreIdenticalForOneAndTwoThreads) {
  auto gold = make_half_space(
      make_drude("gold-drude", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv));
  auto geometry = make_plate_plate(gold, gold, nullptr);
  RunOptions o;
  o.frequency.temperature_K = 300.0;
  o.quantities.gradient = true;
  o.threads = 1;
  const RunResult one = run_sweep(*geometry, gaps(), o);
  o.threads = 2;
  const RunResult two = run_sweep(*geometry, gaps(), o);
  ASSERT_EQ(one.points.size(), two.points.size());
  for (std::size_t i = 0; i < one.points.size(); ++i) {
    EXPECT_EQ(one.points[i].energy, two.points[i].energy);  // bitwise
    EXPECT_EQ(one.points[i].force, two.points[i].force);
    EXPECT_EQ(one.points[i].gradient, two.points[i].gradient);
    EXPECT_TRUE(std::isfinite(one.points[i].energy));
  }
}

TEST(RunSweep, ProgressReachesTotalAndUnitsFollowPerArea) {
  auto pec = make_half_space(make_perfect_conductor());
  auto geometry = make_plate_plate(pec, pec, nullptr);
  RunOptions o;
  std::atomic<int> calls{0}, last{0};
  o.progress = [&](int done, int total) {
    ++calls;
    EXPECT_EQ(total, 9);
    last = std::max(last.load(), done);
  };
  run_sweep(*geometry, gaps(), o);
  EXPECT_EQ(calls, 9);
  EXPECT_EQ(last, 9);
  // SI units of each result scale (solver/result_scale.h; standard).
  EXPECT_EQ(scale_units(ResultScale::kPerArea).force, "Pa");
  EXPECT_EQ(scale_units(ResultScale::kPerArea).energy, "J/m^2");
  EXPECT_EQ(scale_units(ResultScale::kPerArea).gradient, "Pa/m");
  EXPECT_EQ(scale_units(ResultScale::kTotal).energy, "J");
  EXPECT_EQ(scale_units(ResultScale::kTotal).force, "N");
  EXPECT_EQ(scale_units(ResultScale::kTotal).gradient, "N/m");
  EXPECT_EQ(scale_units(ResultScale::kPerLength).energy, "J/m");
  EXPECT_EQ(scale_units(ResultScale::kPerLength).force, "N/m");
  EXPECT_EQ(scale_units(ResultScale::kPerLength).gradient, "N/m^2");
  for (auto s : {ResultScale::kTotal, ResultScale::kPerArea, ResultScale::kPerLength})
    EXPECT_EQ(result_scale_from_string(to_string(s)), s);
}

TEST(RunSweep, RejectsNonPositiveGapNamingIt) {
  auto pec = make_half_space(make_perfect_conductor());
  auto geometry = make_plate_plate(pec, pec, nullptr);
  try {
    run_sweep(*geometry, {1e-7, 0.0}, RunOptions{});
    FAIL() << "no exception";
  } catch (const std::invalid_argument& e) {
    EXPECT_NE(std::string(e.what()).find("gaps[1]"), std::string::npos) << e.what();
  }
}

}  // namespace
}  // namespace roundtrip
