// Built-in materials (solver/materials/library.h) against the parameters they cite.
#include "solver/materials/library.h"

#include <gtest/gtest.h>

#include <cmath>

#include "solver/constants.h"
#include "solver/materials/models.h"

namespace roundtrip {
namespace {

constexpr double kEv = kRadPerSecondPerEv;
constexpr double kRoundoff = 1e-13;  // closed-form models, double rounding only

TEST(MaterialLibrary, EveryBuiltinResolvesAndStatesItsSource) {
  const auto names = builtin_material_names();
  for (const char* want : {"vacuum", "perfect-conductor", "gold-drude", "gold-plasma", "silicon",
                           "silica", "polystyrene", "water"})
    EXPECT_NE(std::find(names.begin(), names.end(), want), names.end()) << want;
  for (const auto& n : names) {
    const MaterialPtr m = builtin_material(n);
    ASSERT_NE(m, nullptr) << n;
    EXPECT_EQ(m->name(), n);
    EXPECT_FALSE(m->source().empty()) << n;
    EXPECT_NE(m->source(), "user defined") << n;
    EXPECT_FALSE(m->description().empty()) << n;
  }
  EXPECT_EQ(builtin_material("unobtainium"), nullptr);
  EXPECT_EQ(builtin_material("gold-drude"), builtin_material("gold-drude"));  // shared instance
}

TEST(MaterialLibrary, RecalledParametersAreMarkedFromMemory) {
  // RULES.md: values recalled and not verified say so.
  for (const char* n : {"silicon", "silica", "polystyrene", "water"})
    EXPECT_NE(builtin_material(n)->source().find("from memory"), std::string::npos) << n;
}

TEST(MaterialLibrary, PassiveMediaDecreaseMonotonicallyToOne) {
  // Landau & Lifshitz, Electrodynamics of Continuous Media, §123: eps(i xi) real, >= 1,
  // decreasing in xi, -> 1 as xi -> inf.
  for (const auto& n : builtin_material_names()) {
    const MaterialPtr m = builtin_material(n);
    if (m->is_perfect_conductor()) continue;
    double prev = std::numeric_limits<double>::infinity();
    for (double xi = 1e8; xi < 1e21; xi *= 1.5) {
      const double e = m->epsilon(xi);
      ASSERT_TRUE(std::isfinite(e)) << n;
      EXPECT_GE(e, 1.0) << n;
      EXPECT_LE(e, prev) << n << " at " << xi;
      prev = e;
    }
    // The limit is the model's eps_inf: 1, except silicon's fitted eps_inf = 1.035.
    const auto* dl = dynamic_cast<const DrudeLorentz*>(m.get());
    ASSERT_NE(dl, nullptr) << n;
    EXPECT_NEAR(m->epsilon(1e21), dl->params().eps_inf, 1e-3) << n;
    EXPECT_LE(dl->params().eps_inf, 1.035) << n;
  }
}

TEST(MaterialLibrary, GoldDrudeAndPlasmaUseNineEvAnd35MeV) {
  // Common practice: wp = 9.0 eV, gamma = 35 meV (Svetovoy et al., PRB 77, 035439 (2008)).
  const double wp = 9.0 * kEv, g = 0.035 * kEv, xi = 1e15;
  EXPECT_NEAR(builtin_material("gold-drude")->epsilon(xi) / (1 + wp * wp / (xi * (xi + g))), 1.0,
              kRoundoff);
  EXPECT_NEAR(builtin_material("gold-plasma")->epsilon(xi) / (1 + wp * wp / (xi * xi)), 1.0,
              kRoundoff);
  EXPECT_EQ(builtin_material("gold-drude")->static_limit().kind, StaticClass::kDrudeConductor);
  const StaticLimit s = builtin_material("gold-plasma")->static_limit();
  EXPECT_EQ(s.kind, StaticClass::kPlasmaConductor);
  EXPECT_NEAR(s.plasma_wavenumber_sq * kSpeedOfLight * kSpeedOfLight / (wp * wp), 1.0, kRoundoff);
}

TEST(MaterialLibrary, DielectricsMatchTheirCitedForms) {
  // Silicon: eps_inf + (eps_0 - eps_inf) w0^2/(w0^2 + xi^2), 11.87 / 1.035 / 6.6e15 rad/s
  // (from memory; form used by Lambrecht and co-workers).
  const double xi = 3e15, w0 = 6.6e15;
  EXPECT_NEAR(builtin_material("silicon")->epsilon(xi),
              1.035 + (11.87 - 1.035) * w0 * w0 / (w0 * w0 + xi * xi), kRoundoff * 12);
  EXPECT_NEAR(builtin_material("silicon")->static_limit().static_eps, 11.87, kRoundoff * 12);
  // Silica, Ninham-Parsegian form (Bergstrom 1997; values from memory).
  const double si =
      1 + 1.71 / (1 + std::pow(xi / 1.88e14, 2)) + 1.098 / (1 + std::pow(xi / 2.034e16, 2));
  EXPECT_NEAR(builtin_material("silica")->epsilon(xi), si, kRoundoff * 4);
  // Static permittivities: polystyrene 2.55, water 78.5 (handbook values, from memory).
  EXPECT_NEAR(builtin_material("polystyrene")->static_limit().static_eps, 2.55, 1e-12);
  EXPECT_NEAR(builtin_material("water")->static_limit().static_eps, 78.497, 1e-9);
  // Water's Debye term d/(1 + xi/rate) (Parsegian 2006): at xi = rate it is halved.
  const double w = builtin_material("water")->epsilon(1.05e11);
  EXPECT_NEAR(w, 1 + 74.8 / 2 + 1.92 + 0.777, 1e-5);
}

}  // namespace
}  // namespace roundtrip
