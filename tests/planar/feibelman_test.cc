// Feibelman d-parameters on a half-space (solver/planar/feibelman.h): d -> 0 is Fresnel exactly,
// the first order equals a finite-difference derivative of the rational boundary-value form,
// d_perp = d_par = d is the interface moved by d (to first order), the static conductor and
// atom-image-plane limits, the pole model, the case key and its bad input.
#include "solver/planar/feibelman.h"

#include <gtest/gtest.h>

#include <cmath>
#include <string>
#include <vector>

#include "io/case_file.h"
#include "io/errors.h"
#include "solver/atoms/polarizability.h"
#include "solver/constants.h"
#include "solver/geometries/atom_plate.h"
#include "solver/materials/library.h"
#include "solver/materials/models.h"

namespace roundtrip {
namespace {

constexpr double kRounding = 1e-13;  // a few ulps of O(1) reflection coefficients

PlanarPtr with_d(const MaterialPtr& m, double dp, double dl) {
  FeibelmanParameters d;
  d.perpendicular = {dp, dp, 0.0};
  d.parallel = {dl, dl, 0.0};
  return make_feibelman_half_space(m, d);
}

TEST(Feibelman, ZeroParametersGiveFresnelExactly) {
  const auto vac = make_vacuum();
  for (const std::string name : {"gold-drude", "gold-plasma", "silica", "silicon"}) {
    const auto m = builtin_material(name);
    const auto f = make_half_space(m), d0 = with_d(m, 0.0, 0.0);
    for (double xi : {0.0, 1e12, 1e15, 1e17})
      for (double k : {0.0, 1e5, 1e8, 1e10}) {
        const auto a = f->at(xi, *vac)->reflect(k), b = d0->at(xi, *vac)->reflect(k);
        EXPECT_EQ(a.te, b.te) << name << " " << xi << " " << k;
        EXPECT_EQ(a.tm, b.tm) << name << " " << xi << " " << k;
      }
  }
  // The rational form at d = 0 is the Fresnel form (planar.h).
  const double eb = 7.5, em = 1.8, xi = 3e15, k = 2e7;
  const auto r = feibelman_rational(eb, em, xi, k, 0.0, 0.0);
  const double q = xi / kSpeedOfLight, km = std::sqrt(k * k + em * q * q),
               kb = std::sqrt(k * k + eb * q * q);
  EXPECT_NEAR(r.tm, (eb * km - em * kb) / (eb * km + em * kb), kRounding);
  EXPECT_NEAR(r.te, (km - kb) / (km + kb), kRounding);
}

TEST(Feibelman, FirstOrderIsTheDerivativeOfTheRationalForm) {
  // Central differences of the rational form in d_perp and d_par at d = 0 with a step h =
  // 1e-5/kappa_max (kappa_max = kappa_b, the largest wave number in it: truncation ~(kappa h)^2 =
  // 1e-10, rounding ~1e-16/(kappa h) = 1e-11, both relative) against the slope (r(d) - r(0))/d of
  // the linearised plate, exact for a linear function up to rounding (d = 1e-3/kappa_max:
  // ~1e-13): relative 1e-8.
  const auto m = make_constant("eps=7.5", 7.5);
  const auto medium = make_constant("eps=1.8", 1.8);
  for (double xi : {1e13, 3e15})
    for (double k : {1e6, 2e7, 1e9}) {
      const double kmax = std::sqrt(k * k + 7.5 * (xi / kSpeedOfLight) * (xi / kSpeedOfLight));
      const double h = 1e-5 / kmax, d = 1e-3 / kmax;
      const auto fd = [&](bool perp) {
        const auto p = feibelman_rational(7.5, 1.8, xi, k, perp ? h : 0, perp ? 0 : h);
        const auto n = feibelman_rational(7.5, 1.8, xi, k, perp ? -h : 0, perp ? 0 : -h);
        return Reflection{(p.te - n.te) / (2 * h), (p.tm - n.tm) / (2 * h)};
      };
      const auto r0 = make_half_space(m)->at(xi, *medium)->reflect(k);
      const auto rp = with_d(m, d, 0.0)->at(xi, *medium)->reflect(k);
      const auto rl = with_d(m, 0.0, d)->at(xi, *medium)->reflect(k);
      const auto dp = fd(true), dl = fd(false);
      EXPECT_NEAR((rp.tm - r0.tm) / d / dp.tm, 1.0, 1e-8) << xi << " " << k;
      EXPECT_NEAR((rl.tm - r0.tm) / d / dl.tm, 1.0, 1e-8) << xi << " " << k;
      EXPECT_NEAR((rl.te - r0.te) / d / dl.te, 1.0, 1e-8) << xi << " " << k;
      EXPECT_EQ(rp.te, r0.te);  // d_perp does not touch TE (no normal E field)
    }
}

TEST(Feibelman, EqualParametersMoveTheInterfaceByD) {
  // d_perp = d_par = d is the local interface displaced by d towards the medium:
  // r = r_F e^{2 kappa_m d} (derived). The linearised plate is r_F (1 + 2 kappa_m d) to
  // rounding; the rational form differs from e^{2 kappa_m d} r_F at O(d^2): halving d quarters
  // the difference (ratio 3.5-4.5 accepted, the next order shifts it by O(kappa d)).
  const auto m = make_constant("eps=7.5", 7.5);
  const auto vac = make_vacuum();
  for (double xi : {1e13, 3e15})
    for (double k : {1e6, 2e7, 1e9}) {
      const double km = std::sqrt(k * k + (xi / kSpeedOfLight) * (xi / kSpeedOfLight));
      const auto r0 = make_half_space(m)->at(xi, *vac)->reflect(k);
      const double d = 1e-3 / km;
      const auto r = with_d(m, d, d)->at(xi, *vac)->reflect(k);
      EXPECT_NEAR(r.tm, r0.tm * (1 + 2 * km * d), kRounding) << xi << " " << k;
      EXPECT_NEAR(r.te, r0.te * (1 + 2 * km * d), kRounding) << xi << " " << k;
      const auto gap = [&](double dd) {
        const auto f = feibelman_rational(7.5, 1.0, xi, k, dd, dd);
        return std::abs(f.tm - r0.tm * std::exp(2 * km * dd));
      };
      const double ratio = gap(1e-2 / km) / gap(0.5e-2 / km);
      EXPECT_GT(ratio, 3.5) << xi << " " << k;
      EXPECT_LT(ratio, 4.5) << xi << " " << k;
    }
}

TEST(Feibelman, StaticConductorAndAtomImagePlane) {
  // A conductor at xi = 0 (eps -> inf): r_TM = 1 + 2 k d_perp (the first order of the image
  // plane moved to d_perp; derived from the rational form); d_par drops out.
  const auto gold = builtin_material("gold-drude");
  const auto vac = make_vacuum();
  const double dp = 0.1e-9, dl = 0.05e-9;
  const auto p = with_d(gold, dp, dl);
  for (double k : {1e6, 1e8, 1e9})
    EXPECT_NEAR(p->at(0.0, *vac)->reflect(k).tm, 1 + 2 * k * dp, kRounding) << k;
  // An atom's n = 0 term over it: s(0) = -alpha \int 2k^2 e^{-2kz}(1 + 2k d_perp) dk
  // = -(alpha/2z^3)(1 + 3 d_perp/z): the 1/(z - d_perp)^3 law to first order (image plane at
  // d_perp; Zaremba & Kohn, PRB 13, 2270 (1976), from memory). Tolerance: the exp-sinh rule's
  // 1e-11.
  const auto atom = make_constant_polarizability(300 * kBohrVolume);
  for (double z : {1e-9, 1e-8}) {
    const double s = make_atom_plate(atom, p)->at_frequency(0.0, z, DerivativeOrder::kEnergy).value;
    EXPECT_NEAR(s / (-(300 * kBohrVolume) / (2 * z * z * z) * (1 + 3 * dp / z)), 1.0, 1e-10) << z;
  }
}

TEST(Feibelman, PoleModelRunsFromStaticToHighFrequencyValue) {
  // d(i xi) = d_inf + (d_0 - d_inf) W^2/(W^2 + xi^2) (feibelman.h; definition).
  const SurfaceParameter d{-0.2e-9, 0.1e-9, 5 * kRadPerSecondPerEv};
  EXPECT_NEAR(d.at(0.0), -0.2e-9, 1e-24);
  EXPECT_NEAR(d.at(5 * kRadPerSecondPerEv), -0.05e-9, 1e-24);
  EXPECT_NEAR(d.at(1e22), 0.1e-9, 1e-18);
}

std::string d_case(const std::string& d, const std::string& material = "gold-drude",
                   const std::string& extra = "") {
  return "geometry = \"atom-plate\"\n"  // 1
         "[plate]\n"                    // 2
         "material = \"" +
         material +
         "\"\n"  // 3
         "d_parameters = " +
         d + "\n" +  // 4
         extra +
         "[separations]\nvalues = [\"1 nm\"]\n"
         "[conditions]\ntemperature = \"300 K\"\n"
         "[atom]\nspecies = \"hydrogen\"\n";
}

TEST(Feibelman, CaseKeyBuildsThePlateAndNamesBadValues) {
  const io::CaseSpec c = io::parse_case(
      d_case("{ perpendicular = { static = \"-0.2 nm\", high_frequency = \"0.1 nm\", frequency = "
             "\"5 eV\" }, parallel = \"0 nm\" }"),
      "a.toml");
  EXPECT_NE(c.body("plate").plate->describe().find("Feibelman"), std::string::npos);
  struct Bad {
    std::string d, material, extra, expect;
  };
  const std::vector<Bad> bad{
      {"{ perpendicular = \"20 nm\" }", "gold-drude", "",
       "a.toml:4: plate.d_parameters.perpendicular = \"20 nm\": |d| must be at most 10 nm"},
      {"{ perpendicular = \"0.1 nm\" }", "perfect-conductor", "", "a perfect conductor has no"},
      {"{ perp = \"0.1 nm\" }", "gold-drude", "", "plate.d_parameters.perp"},
      {"{ parallel = \"0.1 nm\" }", "gold-drude", "", "plate.d_parameters.perpendicular: missing"},
      {"{ perpendicular = { static = \"0.1 nm\", high_frequency = \"0 nm\", frequency = \"-1 eV\" "
       "} }",
       "gold-drude", "", "plate.d_parameters.perpendicular.frequency"},
      {"{ perpendicular = \"0.1 nm\" }", "gold-drude",
       "layers = [{ material = \"silica\", thickness = \"2 nm\" }]\n",
       "d_parameters with layers is not built yet"},
  };
  for (const auto& b : bad) {
    std::string m = "no error";
    try {
      (void)io::parse_case(d_case(b.d, b.material, b.extra), "a.toml");
    } catch (const io::CaseError& e) {
      m = e.what();
    }
    EXPECT_NE(m.find(b.expect), std::string::npos) << m << "\n  expected: " << b.expect;
  }
}

}  // namespace
}  // namespace roundtrip
