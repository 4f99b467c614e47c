// Conducting sheets (solver/planar/sheet.h): the limits sigma -> inf (perfect mirror) and
// sigma -> 0 (bare substrate), and a thin Drude film through the layered (Airy) path as an
// independent check of the sheet formula.
#include "solver/planar/sheet.h"

#include <gtest/gtest.h>

#include <cmath>

#include "solver/atoms/polarizability.h"
#include "solver/constants.h"
#include "solver/frequency/frequency_rule.h"
#include "solver/geometries/atom_plate.h"
#include "solver/materials/models.h"
#include "solver/planar/layered.h"

namespace roundtrip {
namespace {

const double kWp = 9.0 * kRadPerSecondPerEv, kGamma = 0.035 * kRadPerSecondPerEv;

TEST(Sheet, InfiniteConductanceIsAPerfectMirror) {
  // sigma -> inf: r_TE -> -1, r_TM -> +1 (sheet.h, derived). sigma_0 = 1e30 S leaves
  // 2 eps_0 xi/(sigma kappa) and 2 kappa/(mu_0 sigma xi) below 1e-12 at these xi, k.
  SheetConductivity s;
  s.sigma0 = 1e30;
  const auto vac = make_vacuum();
  for (MaterialPtr sub : {MaterialPtr(), make_constant("glass", 3.8)}) {
    const auto p = make_sheet(s, sub);
    for (double xi : {0.0, 1e12, 1e15, 1e17})
      for (double k : {1e3, 1e7, 1e10}) {
        const Reflection r = p->at(xi, *vac)->reflect(k);
        EXPECT_NEAR(r.tm, 1.0, 1e-12) << xi << " " << k;
        if (xi > 0.0) EXPECT_NEAR(r.te, -1.0, 1e-12) << xi << " " << k;
      }
  }
  // Static TE of a plasma-like sheet (gamma = 0): mu_0 D -> inf is a perfect static TE mirror.
  SheetConductivity plasma;
  plasma.drude_weight = 1e30;
  EXPECT_NEAR(make_sheet(plasma, nullptr)->at(0.0, *vac)->reflect(1e6).te, -1.0, 1e-12);
  // A Drude sheet (gamma > 0) has no static TE response (sheet.h; as Drude bulk metals).
  SheetConductivity drude = plasma;
  drude.damping = kGamma;
  EXPECT_EQ(make_sheet(drude, nullptr)->at(0.0, *vac)->reflect(1e6).te, 0.0);
}

TEST(Sheet, ZeroConductanceIsTheBareSubstrate) {
  // sigma = 0: the Fresnel coefficients of the substrate (planar.h), to rounding; a free-standing
  // sheet of sigma = 0 reflects nothing. Water as the medium.
  const SheetConductivity none;
  const auto water = make_constant("water-ish", 1.77);
  for (MaterialPtr sub :
       {make_constant("glass", 3.8), make_drude("gold", kWp, kGamma), make_plasma("gold-p", kWp)}) {
    const auto p = make_sheet(none, sub);
    const auto h = make_half_space(sub);
    for (double xi : {0.0, 1e13, 1e15, 1e16})
      for (double k : {0.0, 1e4, 1e7, 1e9}) {
        const Reflection a = p->at(xi, *water)->reflect(k), b = h->at(xi, *water)->reflect(k);
        EXPECT_NEAR(a.te, b.te, 1e-13) << sub->name() << " " << xi << " " << k;
        EXPECT_NEAR(a.tm, b.tm, 1e-13) << sub->name() << " " << xi << " " << k;
      }
  }
  const auto free = make_sheet(none, nullptr)->at(1e15, *water)->reflect(1e7);
  EXPECT_NEAR(free.te, 0.0, 1e-15);  // rounding (fused multiply-add may contract a - b)
  EXPECT_NEAR(free.tm, 0.0, 1e-15);
}

TEST(Sheet, ThinDrudeFilmIsASheetOfConductanceEps0WpSquaredTimesThickness) {
  // A film of thickness d with kappa_film d << 1 acts as a sheet of sigma(i xi) = eps_0 (eps - 1)
  // xi d = eps_0 w_p^2 d/(xi + gamma) for Drude (standard thin-film limit; derived from the
  // polarisation current). Independent path: the layered (Airy) formula of a film on vacuum.
  // Corrections O(kappa_film d) ~ 4e-3 at most here (d = 0.1 nm): tolerance 1e-2 relative.
  const double d = 1e-10;
  SheetConductivity s;
  s.drude_weight = kVacuumPermittivity * kWp * kWp * d;
  s.damping = kGamma;
  const auto vac = make_vacuum();
  const auto sheet = make_sheet(s, nullptr);
  const auto film = make_layered({Layer{make_drude("gold", kWp, kGamma), d}}, vac);
  for (double xi : {1e13, 1e14, 1e15})
    for (double k : {1e5, 1e6, 1e7}) {
      const Reflection a = sheet->at(xi, *vac)->reflect(k), b = film->at(xi, *vac)->reflect(k);
      EXPECT_NEAR(a.te / b.te, 1.0, 1e-2) << xi << " " << k;
      EXPECT_NEAR(a.tm / b.tm, 1.0, 1e-2) << xi << " " << k;
    }
}

TEST(Sheet, AtomOverAnIdealSheetIsCasimirPolder) {
  // Through the atom-plate geometry: sigma -> inf on glass gives -3 hbar c alpha/(8 pi z^4)
  // (Casimir & Polder 1948) for a constant alpha at T = 0. Tolerance 1e-7 (sheet residue 1e-12,
  // frequency rule at rel_tol 1e-9).
  SheetConductivity s;
  s.sigma0 = 1e30;
  const double alpha = 1e-29, z = 1e-7;
  const auto g = make_atom_plate(make_constant_polarizability(alpha),
                                 make_sheet(s, make_constant("glass", 3.8)));
  FrequencyRuleOptions fo;
  fo.rel_tol = 1e-9;
  const auto sum = sum_over_frequencies(
      [&](double xi) { return g->at_frequency(xi, z, DerivativeOrder::kEnergy); },
      g->frequency_scale(z), fo);
  EXPECT_NEAR(sum.total.value / (-3.0 * kHbarC * alpha / (8.0 * kPi * std::pow(z, 4))), 1.0, 1e-7);
}

}  // namespace
}  // namespace roundtrip
