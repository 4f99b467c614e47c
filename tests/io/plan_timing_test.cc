// The robust parts of `check`'s time estimate (solver/plan_timing.h): the lower-half mean of
// repeated CPU times, and the marginal share of a scan point computed together with the first
// (shared_marginal_share), measured on a stand-in geometry whose calls burn a known amount of
// this thread's CPU time, with some calls disturbed by an extra burn as the load of other
// programs disturbs them. Derived: the stand-in's share is (shared - alone) / alone by
// construction.
#include "solver/plan_timing.h"

#include <gtest/gtest.h>

#include <ctime>
#include <string>
#include <vector>

namespace roundtrip {
namespace {

double thread_cpu() {
  timespec ts{};
  clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
  return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
}

// Busy until this thread has used `seconds` of CPU time.
void burn(double seconds) {
  const double t0 = thread_cpu();
  volatile double sink = 0.0;
  while (thread_cpu() - t0 < seconds) sink = sink + 1.0;
}

// Alone: kAlone s of CPU time; together with n companions: kAlone (1 + kShare n). Every
// `disturb_every`-th call (counted over both kinds) burns kDisturbance x its time more.
constexpr double kAlone = 4e-3, kShare = 0.6, kDisturbance = 1.0;

class StandIn final : public Geometry {
 public:
  explicit StandIn(int disturb_every) : every_(disturb_every) {}
  Spectral at_frequency(double, double, DerivativeOrder) const override {
    work(kAlone);
    return {};
  }
  Spectral at_frequency_within(double xi, double gap, DerivativeOrder o, double) const override {
    return at_frequency(xi, gap, o);
  }
  std::vector<Spectral> at_frequency_shared(
      double, double, DerivativeOrder, double,
      const std::vector<const Geometry*>& others) const override {
    work(kAlone * (1.0 + kShare * static_cast<double>(others.size())));
    return std::vector<Spectral>(others.size() + 1);
  }
  ResultScale scale() const override { return ResultScale::kTotal; }
  double frequency_scale(double gap) const override { return 1.5e8 / gap; }
  std::string kind() const override { return "stand-in"; }
  std::string describe() const override { return "stand-in"; }

 private:
  void work(double seconds) const {
    ++calls_;
    burn(every_ > 0 && calls_ % every_ == 0 ? seconds * (1.0 + kDisturbance) : seconds);
  }
  int every_;
  mutable int calls_ = 0;
};

TEST(PlanTiming, LowerHalfMean) {
  EXPECT_EQ(lower_half_mean({}), 0.0);
  EXPECT_DOUBLE_EQ(lower_half_mean({5.0}), 5.0);
  // Sorted 1, 2, 3, 10, 20: the lower ceil(5/2) = 3 values.
  EXPECT_DOUBLE_EQ(lower_half_mean({10.0, 2.0, 20.0, 1.0, 3.0}), 2.0);
  EXPECT_DOUBLE_EQ(lower_half_mean({4.0, 1.0, 3.0, 2.0}), 1.5);
}

// The burn loop overshoots by one clock_gettime call (< 1 us) and the call overhead is
// microseconds against 4-10 ms calls: 3 % of the share is room for both.
constexpr double kShareTol = 0.03;

TEST(PlanTiming, MarginalShareOfACompanion) {
  RunOptions options;
  const StandIn quiet(0), other(0);
  EXPECT_EQ(shared_marginal_share(quiet, {}, 1e-6, options), 1.0);
  EXPECT_NEAR(shared_marginal_share(quiet, {&other}, 1e-6, options, 0.1), kShare, kShareTol);
  // Two companions: the share is per companion.
  EXPECT_NEAR(shared_marginal_share(quiet, {&other, &other}, 1e-6, options, 0.1), kShare,
              kShareTol);
}

TEST(PlanTiming, MarginalShareUnderDisturbedCalls) {
  // Every third call doubled (fewer than half of each kind over the alternating pairs): a
  // median of per-pair differences or a plain mean would move; the lower halves do not.
  RunOptions options;
  const StandIn loaded(3), other(0);
  EXPECT_NEAR(shared_marginal_share(loaded, {&other}, 1e-6, options, 0.1), kShare, kShareTol);
}

}  // namespace
}  // namespace roundtrip
