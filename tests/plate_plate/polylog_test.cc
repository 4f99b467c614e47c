// Li_2 and Li_3 on the real axis against mpmath 1.x polylog (30 digits):
//   /usr/bin/python3 -c "from mpmath import *; mp.dps=30; print(polylog(2, mpf('0.9')))"
#include "solver/special/polylog.h"

#include <gtest/gtest.h>

#include <cmath>
#include <stdexcept>

namespace roundtrip::special {
namespace {

struct PolylogCase {
  double x, li2, li3;  // li3 unused (0) for x < -1
};

constexpr PolylogCase kCases[] = {
    {-50, -9.2769951853326218401, 0.0},
    {-3, -1.9393754207667089531, 0.0},
    {-1, -0.82246703342411321824, -0.90154267736969571405},
    {-0.7, -0.60515840233770528397, -0.64866632128523549351},
    {-0.2, -0.19080013777753561904, -0.19527359293105427595},
    {1e-8, 1.0000000025000000111e-8, 1.0000000012500000037e-8},
    {0.3, 0.32612951007547606953, 0.31240017789289262076},
    {0.5, 0.5822405264650125059, 0.53721319360804020094},
    {0.6, 0.72758630771633338951, 0.65600251363298068323},
    {0.9, 1.2997147230049587252, 1.0496589501864398696},
    {0.999, 1.6370226052761177427, 1.2004153539954643452},
    {0.99999999, 1.6449338726414180509, 1.2020568867102545307},
    {1, 1.6449340668482264365, 1.2020569031595942854},
};

// A few ulp of double precision: the series are summed to ~1e-17 relative.
constexpr double kRelTol = 4e-15;

TEST(Polylog, DilogMatchesMpmath) {
  for (const auto& c : kCases) EXPECT_NEAR(dilog(c.x) / c.li2, 1.0, kRelTol) << "x = " << c.x;
}

TEST(Polylog, TrilogMatchesMpmath) {
  for (const auto& c : kCases)
    if (c.x >= -1.0) EXPECT_NEAR(trilog(c.x) / c.li3, 1.0, kRelTol) << "x = " << c.x;
}

TEST(Polylog, RejectsArgumentsOutsideTheRealBranch) {
  EXPECT_THROW(dilog(1.5), std::domain_error);
  EXPECT_THROW(dilog(std::nan("")), std::domain_error);
  EXPECT_THROW(trilog(-2.0), std::domain_error);
}

}  // namespace
}  // namespace roundtrip::special
