// Layered planar bodies (solver/planar/layered.h): limits in the thickness, identities of the
// recursive Airy formula, and static limits consistent with the half-space.
#include "solver/planar/layered.h"

#include <gtest/gtest.h>

#include <cmath>

#include "solver/constants.h"
#include "solver/materials/library.h"
#include "solver/materials/models.h"

namespace roundtrip {
namespace {

constexpr double kRoundoff = 1e-13;
const MaterialPtr kVacuum = make_vacuum();
const double kXis[] = {1e12, 1e14, 1e15, 1e16, 1e17};
const double kKs[] = {0.0, 1e5, 1e6, 1e7, 1e8};

Reflection stack(std::vector<Layer> layers, MaterialPtr substrate, double xi, double k,
                 const Material& medium = *kVacuum) {
  return make_layered(std::move(layers), std::move(substrate))->at(xi, medium)->reflect(k);
}
Reflection half(MaterialPtr m, double xi, double k, const Material& medium = *kVacuum) {
  return make_half_space(std::move(m))->at(xi, medium)->reflect(k);
}
double kappa(const Material& m, double xi, double k) {
  const double q = xi / kSpeedOfLight;
  return std::sqrt(k * k + m.epsilon(xi) * q * q);
}

TEST(Layered, SingleFilmMatchesAiryFormula) {
  // r = (r12 + r23 e^{-2 kappa_2 t})/(1 + r12 r23 e^{-2 kappa_2 t}) (Airy formula; standard, e.g.
  // Born & Wolf, Principles of Optics), evaluated here independently of the library's recursion.
  const MaterialPtr au = builtin_material("gold-drude"), si = builtin_material("silicon");
  const double t = 20e-9;
  for (double xi : kXis)
    for (double k : kKs) {
      const double e1 = 1.0, e2 = au->epsilon(xi), e3 = si->epsilon(xi);
      const double k1 = kappa(*kVacuum, xi, k), k2 = kappa(*au, xi, k), k3 = kappa(*si, xi, k);
      const double ex = std::exp(-2 * k2 * t);
      const double te12 = (k1 - k2) / (k1 + k2), te23 = (k2 - k3) / (k2 + k3);
      const double tm12 = (e2 * k1 - e1 * k2) / (e2 * k1 + e1 * k2);
      const double tm23 = (e3 * k2 - e2 * k3) / (e3 * k2 + e2 * k3);
      const Reflection r = stack({{au, t}}, si, xi, k);
      EXPECT_NEAR(r.te, (te12 + te23 * ex) / (1 + te12 * te23 * ex), kRoundoff);
      EXPECT_NEAR(r.tm, (tm12 + tm23 * ex) / (1 + tm12 * tm23 * ex), kRoundoff);
    }
}

// Independent reference: surface admittance Y = F'/(w F) carried up from the substrate
// (F = E_y, w = 1 for TE; F = H_y, w = eps for TM; continuity of F and F'/w; standard, e.g.
// Born & Wolf, Principles of Optics, §1.6). In a layer F = a e^{-kappa u} + b e^{kappa u}, so
// rho = (b/a) e^{2 kappa u} = (1 + wY/kappa)/(1 - wY/kappa) and rho(top) = rho(bottom) e^{-2 kappa
// t}; in the medium r = rho(0).
double admittance_reflection(const std::vector<Layer>& layers, const Material& substrate, double xi,
                             double k, bool tm) {
  const auto w = [&](const Material& m) { return tm ? m.epsilon(xi) : 1.0; };
  double Y = -kappa(substrate, xi, k) / w(substrate);
  for (std::size_t j = layers.size(); j-- > 0;) {
    const Material& m = *layers[j].material;
    const double kj = kappa(m, xi, k), x = w(m) * Y / kj;
    const double rho = (1 + x) / (1 - x) * std::exp(-2 * kj * layers[j].thickness);
    Y = kj / w(m) * (rho - 1) / (rho + 1);
  }
  const double x = w(*kVacuum) * Y / kappa(*kVacuum, xi, k);
  return (1 + x) / (1 - x);
}

TEST(Layered, FourLayerStackMatchesAdmittanceMethod) {
  const std::vector<Layer> layers = {{builtin_material("silica"), 7e-9},
                                     {builtin_material("gold-drude"), 12e-9},
                                     {builtin_material("water"), 30e-9},
                                     {builtin_material("polystyrene"), 55e-9}};
  const MaterialPtr si = builtin_material("silicon");
  constexpr double kMethodsAgree = 1e-12;  // two exact forms, rounding only
  for (double xi : kXis)
    for (double k : {1e5, 1e6, 1e7, 1e8}) {
      const Reflection r = stack(layers, si, xi, k);
      EXPECT_NEAR(r.te, admittance_reflection(layers, *si, xi, k, false), kMethodsAgree);
      EXPECT_NEAR(r.tm, admittance_reflection(layers, *si, xi, k, true), kMethodsAgree);
    }
}

TEST(Layered, ThickFilmTendsToFilmHalfSpace) {
  // |R - r12| <= e/(1 - e), e = e^{-2 kappa_2 t}, since |r| <= 1 (derived from the Airy formula).
  const MaterialPtr silica = builtin_material("silica"), au = builtin_material("gold-drude");
  for (double t : {1e-7, 1e-6, 1e-5})
    for (double xi : kXis)
      for (double k : kKs) {
        const double e = std::exp(-2 * kappa(*silica, xi, k) * t);
        const Reflection r = stack({{silica, t}}, au, xi, k), h = half(silica, xi, k);
        EXPECT_LE(std::abs(r.te - h.te), e / (1 - e) + kRoundoff) << t << " " << xi << " " << k;
        EXPECT_LE(std::abs(r.tm - h.tm), e / (1 - e) + kRoundoff) << t << " " << xi << " " << k;
      }
}

TEST(Layered, VanishingFilmTendsToSubstrate) {
  // At t = 0 the Airy formula composes to the film-free r13 (standard); by the mean-value
  // theorem |R(t) - r13| <= 2 kappa_2 t / (1 - |r12 r23|)^2 (derived).
  const MaterialPtr au = builtin_material("gold-drude"), si = builtin_material("silicon");
  for (double t : {1e-12, 1e-14, 1e-16})
    for (double xi : kXis)
      for (double k : kKs) {
        const Reflection r = stack({{au, t}}, si, xi, k), h = half(si, xi, k);
        const Reflection r12 = half(au, xi, k), r23 = half(si, xi, k, *au);
        const double bound_te =
            2 * kappa(*au, xi, k) * t / std::pow(1 - std::abs(r12.te * r23.te), 2);
        const double bound_tm =
            2 * kappa(*au, xi, k) * t / std::pow(1 - std::abs(r12.tm * r23.tm), 2);
        EXPECT_LE(std::abs(r.te - h.te), bound_te + kRoundoff) << t << " " << xi << " " << k;
        EXPECT_LE(std::abs(r.tm - h.tm), bound_tm + kRoundoff) << t << " " << xi << " " << k;
      }
}

TEST(Layered, FilmOfSubstrateMaterialChangesNothing) {
  // r_23 = 0 for equal media (standard), so R = r_12 = half-space, at xi > 0 and xi = 0.
  for (const char* name : {"gold-drude", "gold-plasma", "silica", "silicon"}) {
    const MaterialPtr m = builtin_material(name);
    for (double xi : {0.0, 1e13, 1e15, 1e17})
      for (double k : kKs) {
        const Reflection r = stack({{m, 37e-9}, {m, 5e-9}}, m, xi, k), h = half(m, xi, k);
        EXPECT_NEAR(r.te, h.te, kRoundoff) << name << " " << xi << " " << k;
        EXPECT_NEAR(r.tm, h.tm, kRoundoff) << name << " " << xi << " " << k;
      }
  }
}

TEST(Layered, SplitLayerEqualsOneLayerOfTheSumThickness) {
  // Two adjacent layers of one material are one layer of the summed thickness (derived).
  const MaterialPtr au = builtin_material("gold-drude"), silica = builtin_material("silica"),
                    si = builtin_material("silicon");
  for (double xi : {0.0, 1e13, 1e15, 1e17})
    for (double k : kKs) {
      const Reflection a = stack({{silica, 30e-9}, {au, 15e-9}, {au, 25e-9}}, si, xi, k);
      const Reflection b = stack({{silica, 30e-9}, {au, 40e-9}}, si, xi, k);
      EXPECT_NEAR(a.te, b.te, kRoundoff);
      EXPECT_NEAR(a.tm, b.tm, kRoundoff);
    }
}

TEST(Layered, StaticLimitsMatchHalfSpaceAndSmallFrequency) {
  // xi = 0 (layered.h): a Drude film is TE-transparent (kappa = k), so the stack shows its
  // substrate's TE displaced by t, r_TE e^{-2 k t};
  // TM is +1 once a conductor is on top. A plasma film on a dielectric reflects TE with
  // r12 (1 - e)/(1 - r12^2 e), r12 = (k - q)/(k + q), q = sqrt(k^2 + k_p^2), e = e^{-2 q t}
  // (derived from the Airy formula with r23 = -r12).
  const MaterialPtr drude = builtin_material("gold-drude"),
                    plasma = builtin_material("gold-plasma"), si = builtin_material("silicon"),
                    silica = builtin_material("silica");
  const double t = 10e-9;
  for (double k : {1e5, 1e7, 1e8}) {
    const Reflection d = stack({{drude, t}}, plasma, 0.0, k);
    EXPECT_NEAR(d.te, half(plasma, 0.0, k).te * std::exp(-2 * k * t), kRoundoff);
    EXPECT_EQ(d.tm, 1.0);
    const double kp2 = plasma->static_limit().plasma_wavenumber_sq, q = std::sqrt(k * k + kp2);
    const double r12 = (k - q) / (k + q), e = std::exp(-2 * q * t);
    const Reflection p = stack({{plasma, t}}, si, 0.0, k);
    EXPECT_NEAR(p.te, r12 * (1 - e) / (1 - r12 * r12 * e), kRoundoff);
    EXPECT_EQ(p.tm, 1.0);
    // Dielectric film over a conductor: TM = (r12 + e)/(1 + r12 e), r12 = (eps-1)/(eps+1), e =
    // e^{-2 k t} (electrostatics, derived); TE = 0 for a Drude substrate.
    const double eps0 = silica->static_limit().static_eps, s12 = (eps0 - 1) / (eps0 + 1);
    const double ek = std::exp(-2 * k * t);
    const Reflection sd = stack({{silica, t}}, drude, 0.0, k);
    EXPECT_NEAR(sd.tm, (s12 + ek) / (1 + s12 * ek), kRoundoff);
    EXPECT_EQ(sd.te, 0.0);
    // Continuity: the static values are the xi -> 0+ limits (dielectric film, plasma film).
    constexpr double kXiSmall = 1e2;  // rad/s: (xi/c)^2 and xi/gamma corrections < 1e-9
    const Reflection ps = stack({{plasma, t}}, si, kXiSmall, k);
    EXPECT_NEAR(ps.te, p.te, 1e-9);
    EXPECT_NEAR(ps.tm, p.tm, 1e-9);
    const Reflection ss = stack({{silica, t}}, plasma, kXiSmall, k);
    const Reflection s0 = stack({{silica, t}}, plasma, 0.0, k);
    EXPECT_NEAR(ss.te, s0.te, 1e-9);
    EXPECT_NEAR(ss.tm, s0.tm, 1e-6);  // silica's IR term: eps(xi) - eps(0) ~ 1.7 (xi/w_IR)^2
  }
}

TEST(Layered, PerfectConductorLayerHidesWhatLiesBelow) {
  // Below a perfect conductor nothing is seen (standard): a PEC film is a PEC half-space.
  const MaterialPtr pec = make_perfect_conductor(), si = builtin_material("silicon");
  const auto body = make_layered({{pec, 1e-9}}, si);
  EXPECT_TRUE(body->is_perfect_conductor());
  for (double xi : {0.0, 1e15})
    for (double k : kKs) {
      const Reflection r = body->at(xi, *kVacuum)->reflect(k);
      EXPECT_EQ(r.te, -1.0);
      EXPECT_EQ(r.tm, 1.0);
    }
  // Silica on PEC: TE from r23 = -1 (Airy formula with a perfect mirror, derived).
  const MaterialPtr silica = builtin_material("silica");
  const double xi = 1e15, k = 1e7, t = 50e-9;
  const double k1 = kappa(*kVacuum, xi, k), k2 = kappa(*silica, xi, k);
  const double r12 = (k1 - k2) / (k1 + k2), e = std::exp(-2 * k2 * t);
  EXPECT_NEAR(stack({{silica, t}}, pec, xi, k).te, (r12 - e) / (1 - r12 * e), kRoundoff);
}

TEST(Layered, RejectsNonPositiveThickness) {
  const MaterialPtr au = builtin_material("gold-drude");
  EXPECT_THROW(make_layered({{au, 0.0}}, au), std::invalid_argument);
  EXPECT_THROW(make_layered({{au, std::nan("")}}, au), std::invalid_argument);
  EXPECT_THROW(make_layered({{nullptr, 1e-9}}, au), std::invalid_argument);
}

}  // namespace
}  // namespace roundtrip
