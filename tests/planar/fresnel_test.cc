// Half-space Fresnel coefficients at imaginary frequency (solver/planar/half_space.cc), their
// limits and the effect of a medium between the plates.
#include <gtest/gtest.h>

#include <cmath>

#include "solver/constants.h"
#include "solver/materials/library.h"
#include "solver/materials/models.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

constexpr double kEv = kRadPerSecondPerEv;
constexpr double kRoundoff = 1e-14;
const MaterialPtr kVacuum = make_vacuum();

Reflection reflect(const MaterialPtr& body, double xi, double k,
                   const Material& medium = *kVacuum) {
  return make_half_space(body)->at(xi, medium)->reflect(k);
}

TEST(Fresnel, TmTendsToPlusOneAndTeToMinusOneAsEpsGrows) {
  // Standard: r_TE = (kappa - kappa_1)/(kappa + kappa_1) -> -1, r_TM -> +1 as eps -> inf,
  // with 1 + r_TE ~ 2 kappa/kappa_1 = O(eps^-1/2) (derived).
  const double xi = 1e15, k = 2e6;
  const double kappa = std::sqrt(k * k + xi * xi / (kSpeedOfLight * kSpeedOfLight));
  for (double eps : {1e4, 1e8, 1e12, 1e16}) {
    const Reflection r = reflect(make_constant("c", eps), xi, k);
    const double kappa1 = std::sqrt(k * k + eps * xi * xi / (kSpeedOfLight * kSpeedOfLight));
    EXPECT_NEAR(r.te, -1.0, 2.0 * kappa / kappa1 * 1.0001) << eps;
    EXPECT_NEAR(r.tm, 1.0, 2.0 * kappa1 / (eps * kappa) * 1.0001) << eps;
  }
  const Reflection pec = reflect(make_perfect_conductor(), xi, k);
  EXPECT_EQ(pec.te, -1.0);
  EXPECT_EQ(pec.tm, 1.0);
}

TEST(Fresnel, DrudeStaticTeVanishesAndTmIsOne) {
  // Drude: xi^2 eps -> 0, so r_TE(0, k) = 0, r_TM(0, k) = 1 (derived from the Lifshitz
  // n = 0 term; Lifshitz, Sov. Phys. JETP 2, 73 (1956)); the xi -> 0+ values approach them.
  const MaterialPtr au = builtin_material("gold-drude");
  for (double k : {1e5, 1e7, 1e9}) {
    const Reflection r0 = reflect(au, 0.0, k);
    EXPECT_EQ(r0.te, 0.0);
    EXPECT_EQ(r0.tm, 1.0);
    const Reflection small = reflect(au, 1e3, k);  // xi = 1e3 rad/s << gamma
    EXPECT_NEAR(small.te, 0.0, 1e-3);
    EXPECT_NEAR(small.tm, 1.0, 1e-6);
  }
}

TEST(Fresnel, PlasmaStaticTeHasClosedForm) {
  // r_TE(0, k) = (k - sqrt(k^2 + wp^2/c^2))/(k + sqrt(k^2 + wp^2/c^2)) (derived from the
  // plasma-model Fresnel coefficient).
  const double wp = 9.0 * kEv, kp = wp / kSpeedOfLight;
  const MaterialPtr au = builtin_material("gold-plasma");
  for (double k : {1e5, 1e7, 1e9}) {
    const double q = std::sqrt(k * k + kp * kp);
    const Reflection r0 = reflect(au, 0.0, k);
    EXPECT_NEAR(r0.te, (k - q) / (k + q), kRoundoff);
    EXPECT_EQ(r0.tm, 1.0);
    EXPECT_NEAR(reflect(au, 1e3, k).te, r0.te, 1e-9);  // continuous as xi -> 0+
  }
}

TEST(Fresnel, DielectricStaticLimits) {
  // r_TM(0) = (eps_0 - eps_m)/(eps_0 + eps_m), r_TE(0) = 0 (planar.h; standard electrostatics).
  const Reflection r = reflect(builtin_material("silicon"), 0.0, 1e7);
  EXPECT_NEAR(r.tm, (11.87 - 1) / (11.87 + 1), 1e-12);
  EXPECT_EQ(r.te, 0.0);
}

TEST(Fresnel, MediumOfThePlatesOwnEpsCancelsReflection) {
  // r = 0 exactly when eps_body = eps_medium (standard): no interaction across the medium.
  const MaterialPtr silica = builtin_material("silica");
  for (double xi : {0.0, 1e13, 1e15, 1e17})
    for (double k : {0.0, 1e6, 1e8}) {
      const Reflection r = reflect(silica, xi, k, *silica);
      EXPECT_EQ(r.te, 0.0) << xi << " " << k;
      EXPECT_EQ(r.tm, 0.0) << xi << " " << k;
    }
}

TEST(Fresnel, MediumBetweenThePlatesPermittivitiesMakesReflectionProductNegative) {
  // Lifshitz: eps_a < eps_m < eps_b gives r_a r_b < 0 in both polarisations, hence repulsion
  // (Dzyaloshinskii, Lifshitz, Pitaevskii, Adv. Phys. 10, 165 (1961); observed by Munday,
  // Capasso, Parsegian, Nature 457, 170 (2009)).
  const MaterialPtr a = make_constant("a", 2.0), m = make_constant("m", 3.0),
                    b = make_constant("b", 5.0);
  for (double xi : {0.0, 1e13, 1e15, 1e17})
    for (double k : {1e4, 1e6, 1e8}) {
      const Reflection ra = reflect(a, xi, k, *m), rb = reflect(b, xi, k, *m);
      EXPECT_LT(ra.tm * rb.tm, 0.0) << xi << " " << k;
      if (xi > 0.0) EXPECT_LT(ra.te * rb.te, 0.0) << xi << " " << k;  // r_TE(0) = 0
    }
}

TEST(Fresnel, ReflectionIsBoundedByOneOnImaginaryAxis) {
  // Passive media on the imaginary axis: |r| <= 1 (standard; kappa, eps real positive).
  for (const auto& n : builtin_material_names())
    for (double xi : {0.0, 1e12, 1e14, 1e16, 1e18})
      for (double k : {0.0, 1e5, 1e7, 1e9}) {
        const Reflection r = reflect(builtin_material(n), xi, k);
        ASSERT_TRUE(std::isfinite(r.te) && std::isfinite(r.tm)) << n;
        EXPECT_LE(std::abs(r.te), 1.0) << n;
        EXPECT_LE(std::abs(r.tm), 1.0) << n;
      }
}

}  // namespace
}  // namespace roundtrip
