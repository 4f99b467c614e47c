// Debye-Hueckel screened static TM reflection (solver/planar/screened.h): its limits, the Debye
// length of a doped semiconductor, the crossover of the thermal atom-surface term between the
// dielectric and the conductor limits, the case key and its bad input.
#include "solver/planar/screened.h"

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

constexpr double kExact = 1e-14;  // a few ulps

Reflection static_r(const PlanarPtr& p, double k, const MaterialPtr& medium = make_vacuum()) {
  return p->at(0.0, *medium)->reflect(k);
}

TEST(Screening, VanishingKappaGivesTheDielectricStaticTermAndLargeKappaTheDrudeTerm) {
  // Pitaevskii, PRL 101, 163202 (2008); Dalvit & Lamoreaux, PRL 101, 163203 (2008): kappa_D -> 0
  // is the dielectric r_TM = (eps - 1)/(eps + 1), kappa_D -> inf the conductor r_TM = 1.
  const auto si = builtin_material("silicon");
  const double eps0 = si->static_limit().static_eps;
  const auto plain = make_half_space(si), drude = make_half_space(make_drude("d", 1e16, 1e13));
  for (double k : {1e3, 1e6, 1e9}) {
    Screening weak;
    weak.debye_length = 1e3;  // kappa = 1e-3 /m: (kappa/k)^2 <= 1e-12
    const auto rw = static_r(make_screened_half_space(si, weak), k);
    EXPECT_NEAR(rw.tm, static_r(plain, k).tm, 1e-12) << k;
    EXPECT_NEAR(rw.tm, (eps0 - 1) / (eps0 + 1), 1e-12) << k;
    EXPECT_EQ(rw.te, 0.0);
    Screening strong;
    strong.debye_length = 1e-20;  // kappa = 1e20 /m: 1 - r = 2k/(eps q) + ... <= 2e-11 / eps
    EXPECT_NEAR(static_r(make_screened_half_space(si, strong), k).tm, static_r(drude, k).tm,
                2e-11 / eps0)
        << k;
  }
  // Closed form at kappa = k: q = sqrt(2) k, r = (eps sqrt2 - 1)/(eps sqrt2 + 1) (derived from the
  // formula), and in water (eps_m(0) from the built-in) the medium's eps in place of 1.
  Screening s;
  s.debye_length = 1e-7;
  const auto sc = make_screened_half_space(si, s);
  const double r2 = std::sqrt(2.0);
  EXPECT_NEAR(static_r(sc, 1e7).tm, (eps0 * r2 - 1) / (eps0 * r2 + 1), kExact);
  const auto water = builtin_material("water");
  const double em = water->static_limit().static_eps;
  EXPECT_NEAR(static_r(sc, 1e7, water).tm, (eps0 * r2 - em) / (eps0 * r2 + em), kExact);
  // At xi > 0 the plate is the plain Fresnel half-space (the carriers are only screening).
  for (double k : {0.0, 1e6, 1e8}) {
    const auto a = sc->at(1e14, *make_vacuum())->reflect(k);
    const auto b = plain->at(1e14, *make_vacuum())->reflect(k);
    EXPECT_EQ(a.te, b.te);
    EXPECT_EQ(a.tm, b.tm);
  }
}

TEST(Screening, DebyeLengthOfDopedSiliconFromCarrierDensityAndTemperature) {
  // kappa_D^2 = n e^2/(eps_0 eps_s k_B T) (standard). Silicon, 1e16 cm^-3, 300 K: L_D ~ 0.04 um
  // (Sze & Ng, Physics of Semiconductor Devices (2007), extrinsic Debye length, from memory);
  // eps_s = 11.9 there, 11.87 here: 2 % tolerance covers the figure's rounding.
  Screening s;
  s.carrier_density = 1e22;
  s.temperature_K = 300.0;
  EXPECT_NEAR(1.0 / std::sqrt(s.kappa_sq(11.87)) / 4.0e-8, 1.0, 0.03);
  // Scaling: kappa^2 ~ n/T (definition); T = 0 is infinite screening, n = 0 none.
  Screening s2 = s;
  s2.carrier_density *= 4.0;
  s2.temperature_K *= 2.0;
  EXPECT_NEAR(s2.kappa_sq(11.87) / s.kappa_sq(11.87), 2.0, kExact);
  s2.temperature_K = 0.0;
  EXPECT_TRUE(std::isinf(s2.kappa_sq(11.87)));
  s2.carrier_density = 0.0;
  EXPECT_EQ(s2.kappa_sq(11.87), 0.0);
  // The planar body is bound to a temperature by with_temperature.
  const auto p = make_screened_half_space(builtin_material("silicon"), s);
  const auto p0 = p->with_temperature(0.0);
  ASSERT_TRUE(p0);
  EXPECT_EQ(static_r(p0, 1e6).tm, 1.0);
}

TEST(Screening, ThermalAtomTermCrossesOverFromDielectricToConductorAsCarriersGrow) {
  // The n = 0 term of an atom at z: s(0) = -alpha \int 2k^2 e^{-2kz} r_TM(0, k) dk (atom_plate.h):
  // between the dielectric value and the conductor value, growing with n, and at the two ends the
  // limits above (kappa z = 1e-4: r within ~eps (kappa/k)^2 of the dielectric one).
  const auto si = builtin_material("silicon");
  const double eps0 = si->static_limit().static_eps;
  const auto atom = make_constant_polarizability(300.0 * kBohrVolume);
  const double z = 1e-6;
  const auto s0 = [&](PlanarPtr p) {
    return make_atom_plate(atom, p)->at_frequency(0.0, z, DerivativeOrder::kEnergy).value;
  };
  const double dielectric = s0(make_half_space(si));
  const double conductor = s0(make_half_space(make_drude("d", 1e16, 1e13)));
  EXPECT_NEAR(dielectric / conductor, (eps0 - 1) / (eps0 + 1), 1e-10);
  double previous = dielectric;
  for (double n : {1e10, 1e14, 1e18, 1e20, 1e22, 1e24, 1e26}) {
    Screening s;
    s.carrier_density = n;
    s.temperature_K = 300.0;
    const double v = s0(make_screened_half_space(si, s));
    EXPECT_LE(v, previous * (1 + 1e-12)) << n;  // more negative: stronger attraction
    EXPECT_GE(v, conductor * (1 + 1e-9)) << n;
    previous = v;
  }
  Screening few;
  few.carrier_density = 1e6;  // L_D ~ 4 m: kappa z ~ 2.5e-7
  few.temperature_K = 300.0;
  EXPECT_NEAR(s0(make_screened_half_space(si, few)) / dielectric, 1.0, 1e-9);
  Screening many;
  many.carrier_density = 1e29;  // L_D ~ 0.013 nm: 1 - r ~ k/(eps kappa) ~ 1e-5 at k ~ 1/z
  many.temperature_K = 300.0;
  EXPECT_NEAR(s0(make_screened_half_space(si, many)) / conductor, 1.0, 1e-4);
}

std::string screened_case(const std::string& screening, const std::string& material = "silicon") {
  return "geometry = \"atom-plate\"\n"  // 1
         "[plate]\n"                    // 2
         "material = \"" +
         material +
         "\"\n"  // 3
         "screening = " +
         screening +
         "\n"  // 4
         "[separations]\nvalues = [\"1 um\"]\n"
         "[conditions]\ntemperature = \"77 K\"\n"
         "[atom]\nspecies = \"helium\"\n";
}

TEST(Screening, CaseKeyBindsTheCaseTemperatureAndNamesBadValues) {
  const io::CaseSpec c =
      io::parse_case(screened_case("{ carrier_density = \"1e18 cm^-3\" }"), "a.toml");
  const std::string d = io::build_geometry(c)->describe();
  EXPECT_NE(d.find("carriers 1e+18 cm^-3 at 77 K"), std::string::npos) << d;
  struct Bad {
    std::string screening, material, expect;
  };
  const std::vector<Bad> bad{
      {"{ carrier_density = \"-1e18 cm^-3\" }", "silicon",
       "a.toml:4: plate.screening.carrier_density = \"-1e18 cm^-3\": must be >= 0"},
      {"{ carrier_density = \"1e18 cm^-2\" }", "silicon", "unknown unit \"cm^-2\""},
      {"{ carrier_density = \"1e40 cm^-3\" }", "silicon", "at most 1e30 m^-3"},
      {"{ debye_length = \"0 nm\" }", "silicon", "plate.screening.debye_length = \"0 nm\""},
      {"{ debye_length = \"1 nm\", carrier_density = \"1e18 cm^-3\" }", "silicon",
       "give exactly one"},
      {"{ carrier_density = \"1e18 cm^-3\" }", "gold-drude", "gold-drude is a conductor"},
      {"{ density = \"1e18 cm^-3\" }", "silicon", "plate.screening.density"},
  };
  for (const auto& b : bad) {
    std::string m = "no error";
    try {
      (void)io::parse_case(screened_case(b.screening, b.material), "a.toml");
    } catch (const io::CaseError& e) {
      m = e.what();
    }
    EXPECT_NE(m.find(b.expect), std::string::npos) << m << "\n  expected: " << b.expect;
  }
}

}  // namespace
}  // namespace roundtrip
