// log I_nu(z) against mpmath 1.2 (besseli at 40 digits, /usr/bin/python3; values generated
// once and pasted here) over the orders and arguments the n = 0 sphere-plate kernel uses
// (z up to 2e5, nu up to 3000).
#include "solver/special/bessel_i_log.h"

#include <gtest/gtest.h>

#include <cmath>
#include <vector>

namespace roundtrip::special {
namespace {

struct Ref {
  double z;
  int nu;
  double log_i;
};

// mpmath: log(besseli(nu, z)).
const Ref kRefs[] = {
    {0.01, 0, 0.000024999843751736088732}, {0.01, 2, -11.289773580331365867},
    {0.01, 10, -68.087583965828824563},    {0.01, 100, -893.57111196284240571},
    {0.01, 1000, -11210.445545011225001},  {0.01, 3000, -36918.976952681327177},
    {0.5, 0, 0.061549719185481303941},     {0.5, 2, -3.4449565235755461209},
    {0.5, 10, -28.961675710436745888},     {0.5, 100, -502.36819285754844762},
    {0.5, 1000, -7298.4224771704934755},   {0.5, 3000, -25182.907915578828427},
    {3, 0, 1.5853076218134209155},         {3, 2, 0.8088001451938186983},
    {3, 10, -10.846923737386671661},       {3, 100, -323.17058994904299362},
    {3, 1000, -5506.6608226302723599},     {3, 3000, -19807.628778971064875},
    {50, 0, 47.127575501871804584},        {50, 2, 47.087172212708122125},
    {50, 10, 46.120852067835628501},       {50, 100, -35.837833823878304186},
    {50, 1000, -2692.6281723677035786},    {50, 3000, -11367.189121752408273},
    {700, 0, 695.80569999844344908},       {700, 2, 695.80284081355625671},
    {700, 10, 695.73422154738797445},      {700, 100, 688.66985848673949856},
    {700, 1000, 61.705644959258871458},    {700, 3000, -3409.6782807318872394},
    {701.5, 0, 697.30462933381293614},     {701.5, 2, 697.30177626700933245},
    {701.5, 10, 697.23330382734028645},    {701.5, 100, 690.18400564800410723},
    {701.5, 1000, 64.319105374217487685},  {701.5, 3000, -3403.083781655202972},
    {5000, 0, 4994.8224898735877295},      {5000, 2, 4994.8220898335843966},
    {5000, 10, 4994.8124888767063233},     {5000, 100, 4993.8224232012542773},
    {5000, 1000, 4895.1420858812829751},   {5000, 3000, 4119.2228043239511233},
    {200000, 0, 199992.9780257690318},     {200000, 2, 199992.9780157690068},
    {200000, 10, 199992.97777576840685},   {200000, 100, 199992.95302570705231},
    {200000, 1000, 199990.47802472737034}, {200000, 3000, 199970.47839137158068},
};

// mpmath: log(besseli(0, z) - 1).
const double kMinusOne[][2] = {
    {0.001, -15.20180485658416494}, {0.3, -3.7886167275819198291}, {0.99, -1.3453472133123553746},
    {1.5, -0.43583691254733527692}, {20, 17.589610405286527733},
};

// Double precision on log I ~ z: relative 1e-14 of max(1, |log I|), the rounding of ~6 sqrt(z)
// recurrence steps and the running product of ratios.
constexpr double kRelTol = 1e-13;

TEST(BesselILog, EvenOrdersMatchMpmath) {
  std::vector<double> out, scratch;
  for (const Ref& r : kRefs) {
    if (r.nu % 2 != 0) continue;
    log_bessel_i_even(r.z, r.nu / 2 + 3, out, scratch);
    EXPECT_NEAR(out[r.nu / 2], r.log_i, kRelTol * std::max(1.0, std::abs(r.log_i)))
        << "z = " << r.z << ", nu = " << r.nu;
  }
}

TEST(BesselILog, MinusOneAvoidsCancellation) {
  for (const auto& r : kMinusOne)
    EXPECT_NEAR(log_bessel_i0_minus_one(r[0]), r[1], kRelTol * std::max(1.0, std::abs(r[1])))
        << "z = " << r[0];
}

TEST(BesselILog, ResultDoesNotDependOnTheHighestOrderAsked) {
  // The backward recurrence starts above the highest order: asking for more orders must not
  // change the lower ones beyond rounding (common practice for Miller-type recurrences).
  std::vector<double> a, b, scratch;
  for (double z : {0.2, 40.0, 3000.0, 1.5e5}) {
    log_bessel_i_even(z, 10, a, scratch);
    log_bessel_i_even(z, 800, b, scratch);
    for (int m = 0; m <= 10; ++m)
      EXPECT_NEAR(a[m], b[m], kRelTol * std::max(1.0, std::abs(a[m]))) << z << " " << m;
  }
}

}  // namespace
}  // namespace roundtrip::special
