// An atom in an electrolyte ([medium] ionic_strength; solver/geometries/atom_plate.h): the ions
// screen the zero-frequency term only. Checked against the closed form for a Drude conductor
// (derived), the kappa -> 0 limit (the unscreened term, with its leading correction derived),
// the dilute limit of the screened plate-plate n = 0 term (the derivation itself, through the
// independent PlatePlate engine), finite differences of the analytic z-derivatives, and the
// case file, CLI and HDF5 attributes (ionic_strength, debye_length, read back by h5py).
#include <fmt/format.h>
#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <limits>
#include <string>
#include <vector>

#include "common/scratch.h"
#include "io/case_file.h"
#include "io/errors.h"
#include "solver/atoms/polarizability.h"
#include "solver/constants.h"
#include "solver/geometries/atom_plate.h"
#include "solver/geometries/plate_plate.h"
#include "solver/materials/library.h"
#include "solver/materials/models.h"
#include "solver/planar/electrolyte.h"
#include "solver/planar/screened.h"

namespace roundtrip {
namespace {

constexpr double kAlpha = 300 * kBohrVolume;  // invented static polarizability, m^3
constexpr double kEpsWater = 78.5;            // static eps of the invented solvent
// The k integral runs to a relative 1e-11 per component (atom_plate.cc): 1e-10 leaves room for
// the closed forms' own rounding (a few ulps).
constexpr double kQuadrature = 1e-10;

Spectral static_term(const PlanarPtr& plate, const MaterialPtr& medium, double kappa, double z,
                     DerivativeOrder order = DerivativeOrder::kGradient) {
  return make_atom_plate(make_constant_polarizability(kAlpha), plate, medium, kappa)
      ->at_frequency(0.0, z, order);
}

TEST(AtomElectrolyte, DrudeConductorIsTheClosedForm) {
  // Derived (atom_plate.h): r' = 1 and k dk = q dq give
  //   s(0; z) = -(alpha/eps_m) G(z),  G = int_kappa^inf (2 q^2 - kappa^2) e^{-2qz} dq
  //           = e^{-2 kappa z} H(z),  H = kappa^2/(2z) + kappa/z^2 + 1/(2 z^3),
  // from int_kappa^inf q^2 e^{-2qz} dq = e^{-2 kappa z}(kappa^2/(2z) + kappa/(2z^2) + 1/(4z^3)),
  // checked against mpmath quadrature (30 digits) at kappa z = 0.6, 1, 5: agreement to 6e-16
  // (the quadrature's own error). G' = e^{-2 kappa z}(H' - 2 kappa H),
  // G'' = e^{-2 kappa z}(H'' - 4 kappa H' + 4 kappa^2 H) (derived).
  const auto gold = make_half_space(builtin_material("gold-drude"));
  const auto water = make_constant("eps=78.5", kEpsWater);
  const double z = 10e-9;
  for (double kz : {0.0, 0.01, 0.3, 1.0, 5.0, 20.0}) {
    const double k = kz / z;
    const double h = k * k / (2 * z) + k / (z * z) + 1 / (2 * z * z * z);
    const double h1 = -k * k / (2 * z * z) - 2 * k / (z * z * z) - 3 / (2 * std::pow(z, 4));
    const double h2 = k * k / (z * z * z) + 6 * k / std::pow(z, 4) + 6 / std::pow(z, 5);
    const double e = std::exp(-2 * kz), pre = -kAlpha / kEpsWater;
    const Spectral s = static_term(gold, water, k, z);
    EXPECT_NEAR(s.value / (pre * e * h), 1.0, kQuadrature) << kz;
    EXPECT_NEAR(s.d1 / (pre * e * (h1 - 2 * k * h)), 1.0, kQuadrature) << kz;
    EXPECT_NEAR(s.d2 / (pre * e * (h2 - 4 * k * h1 + 4 * k * k * h)), 1.0, kQuadrature) << kz;
  }
  // kappa = +inf (T = 0 with ions): no static term.
  const Spectral inf = static_term(gold, water, std::numeric_limits<double>::infinity(), z);
  EXPECT_EQ(inf.value, 0.0);
  EXPECT_EQ(inf.d1, 0.0);
}

TEST(AtomElectrolyte, SmallKappaTendsToTheUnscreenedTerm) {
  // kappa = 0 is the unscreened n = 0 term bitwise. A dielectric half-space (eps_b) in the
  // solvent (eps_m): expanding in kappa^2/k^2, k (2q^2 - kappa^2)/q = 2k^2 + O(kappa^4/k^2),
  // e^{-2qz} = e^{-2kz}(1 - kappa^2 z/k) and r' = r - eps_b eps_m kappa^2/((eps_b + eps_m)^2 k^2)
  // (k < kappa adds O((kappa z)^3)) give
  //   s(kappa)/s(0) - 1 = -(kappa z)^2 [1 + 2 eps_b eps_m/(eps_b^2 - eps_m^2)] + O((kappa z)^3)
  // (derived; -(kappa z)^2 for a conductor, as the closed form above), so the deviation over
  // this prediction tends to 1 as kappa z falls.
  const auto water = make_constant("eps=78.5", kEpsWater);
  const double z = 10e-9;
  for (double eps_b : {3.8, 200.0}) {
    const auto plate = make_half_space(make_constant("eps_b", eps_b));
    const Spectral s0 = static_term(plate, water, 0.0, z);
    const auto unscreened = make_atom_plate(make_constant_polarizability(kAlpha), plate, water)
                                ->at_frequency(0.0, z, DerivativeOrder::kGradient);
    EXPECT_EQ(s0.value, unscreened.value);
    EXPECT_EQ(s0.d2, unscreened.d2);
    double previous = std::numeric_limits<double>::infinity();
    for (double kz : {1e-1, 1e-2, 1e-3}) {
      const double predicted =
          -kz * kz * (1 + 2 * eps_b * kEpsWater / (eps_b * eps_b - kEpsWater * kEpsWater));
      const double rest =
          std::abs((static_term(plate, water, kz / z, z).value / s0.value - 1) / predicted - 1);
      EXPECT_LT(rest, 0.6 * previous) << eps_b << " " << kz;  // falls with kappa z
      std::printf("[ info ] eps_b = %g, kappa z = %g: deviation/prediction - 1 = %.3g\n", eps_b, kz,
                  rest);
      previous = rest;
    }
    EXPECT_LT(previous, 0.05) << eps_b;
  }
}

TEST(AtomElectrolyte, IsTheDiluteLimitOfTheScreenedPlatePlateTerm) {
  // The derivation (atom_plate.h) through the independent PlatePlate engine: plate 2 a dilute
  // dielectric of eps_2 = eps_m (1 + delta) holding the same ions (a screened half-space whose
  // Debye constant is kappa_2 = kappa sqrt(eps_m/eps_2): the ions' charge response does not
  // depend on eps; Parsegian (2006)), N = (eps_2 - eps_m)/(4 pi alpha); then
  //   s_atom(0; L) = -(1/N) ds_pp(0; L)/dL
  // to first order in delta; the next orders (r_2 at second order, the log's second term) are
  // below delta relative (derived): tolerance delta, and the deviation scales with delta.
  // ds_pp/dL analytic, and by central differences (step 1e-3 L: truncation ~1e-6, integration
  // error 1e-13 L/h ~ 1e-10; tolerance 1e-5).
  const auto water = make_constant("eps=78.5", kEpsWater);
  const double L = 20e-9, kappa = 1.0 / 8e-9;  // kappa L = 2.5
  const std::vector<PlanarPtr> plates{make_half_space(builtin_material("gold-drude")),
                                      make_half_space(make_constant("eps=3.8", 3.8))};
  for (const auto& plate : plates) {
    const double atom = static_term(plate, water, kappa, L).value;
    double deviation[2] = {0.0, 0.0};
    for (int i = 0; i < 2; ++i) {
      const double delta = i == 0 ? 1e-3 : 1e-4;
      Screening same_ions;
      same_ions.debye_length = std::sqrt(1 + delta) / kappa;
      const auto dilute =
          make_screened_half_space(make_constant("dilute", kEpsWater * (1 + delta)), same_ions);
      const auto pp = make_plate_plate(plate, dilute, water, kappa);
      const double density = kEpsWater * delta / (4 * kPi * kAlpha);  // N, 1/m^3
      const Spectral s = pp->at_frequency(0.0, L, DerivativeOrder::kForce);
      const double from_pp = -s.d1 / density;
      deviation[i] = std::abs(from_pp / atom - 1);
      EXPECT_LT(deviation[i], delta) << plate->describe() << " " << delta;
      const double h = 1e-3 * L;
      const double fd = (pp->at_frequency(0.0, L + h, DerivativeOrder::kEnergy).value -
                         pp->at_frequency(0.0, L - h, DerivativeOrder::kEnergy).value) /
                        (2 * h);
      EXPECT_NEAR(fd / s.d1, 1.0, 1e-5);
    }
    EXPECT_GT(deviation[0] / deviation[1], 5.0);  // first order in delta: 10
    EXPECT_LT(deviation[0] / deviation[1], 15.0);
  }
}

TEST(AtomElectrolyte, ForceAndGradientAreTheDerivativesOfTheEnergy) {
  // Central differences, step h = 2e-4 z: truncation (h^2/6) f'''/f' with each z-derivative
  // bringing about 2 kappa + 4/z, i.e. (h/z)^2 (2 kappa z + 4)^2/6 <= 7e-7 at kappa z = 3;
  // quadrature error 1e-11 z/h = 5e-8: tolerance 1e-5. Silica-like and Drude plates.
  const auto water = make_constant("eps=78.5", kEpsWater);
  const double z = 10e-9, h = 2e-4 * z;
  for (const auto& plate : {make_half_space(builtin_material("gold-drude")),
                            make_half_space(make_constant("eps=3.8", 3.8))})
    for (double kz : {0.5, 3.0}) {
      const double k = kz / z;
      const Spectral s = static_term(plate, water, k, z);
      const Spectral up = static_term(plate, water, k, z + h);
      const Spectral down = static_term(plate, water, k, z - h);
      EXPECT_NEAR((up.value - down.value) / (2 * h) / s.d1, 1.0, 1e-5) << kz;
      EXPECT_NEAR((up.d1 - down.d1) / (2 * h) / s.d2, 1.0, 1e-5) << kz;
    }
}

TEST(AtomElectrolyte, OnlyTheStaticTermIsScreened) {
  // Ions cannot follow xi_n > 0 (electrolyte.h; Parsegian 2006): every xi > 0 term is the
  // unscreened one bitwise.
  const auto plate = make_half_space(builtin_material("silica"));
  const auto water = builtin_material("water");
  const auto atom = builtin_polarizability("rubidium");
  const auto ions = make_atom_plate(atom, plate, water, 1e9);
  const auto none = make_atom_plate(atom, plate, water);
  for (double xi : {1e13, 2.5e14, 1e16}) {
    EXPECT_EQ(ions->at_frequency(xi, 20e-9, DerivativeOrder::kGradient).value,
              none->at_frequency(xi, 20e-9, DerivativeOrder::kGradient).value);
    EXPECT_EQ(ions->at_frequency(xi, 20e-9, DerivativeOrder::kGradient).d2,
              none->at_frequency(xi, 20e-9, DerivativeOrder::kGradient).d2);
  }
}

const std::string kCase = R"(geometry = "atom-plate"
[plate]
material = "gold-drude"
[atom]
species = "hydrogen"
[medium]
material = "water"
ionic_strength = "10 mM"
[separations]
values = ["2 nm", "5 nm"]
[conditions]
temperature = "300 K"
)";

TEST(AtomElectrolyte, CaseFileCliAndHdf5Attributes) {
  const auto dir = testing::fresh_dir("atom_electrolyte");
  std::ofstream(dir / "case.toml") << kCase;
  const io::CaseSpec c = io::parse_case(kCase, dir / "case.toml");
  EXPECT_EQ(c.ionic_strength, 10.0);  // mol/m^3
  const auto g = io::build_geometry(c);
  const auto* ap = dynamic_cast<const AtomPlate*>(g.get());
  ASSERT_NE(ap, nullptr);
  const double eps_w = builtin_material("water")->static_limit().static_eps;
  const double kappa = std::sqrt(electrolyte_kappa_sq(10.0, eps_w, 300.0));
  EXPECT_EQ(ap->kappa_ion(), kappa);
  EXPECT_NE(ap->describe().find("with ions (Debye length"), std::string::npos);

  const std::string cmd =
      fmt::format("cd '{}' && '{}' run case.toml -o out.h5 --quiet > out.txt 2> err.txt",
                  dir.string(), ROUNDTRIP_CLI);
  ASSERT_EQ(std::system(cmd.c_str()), 0) << testing::slurp(dir / "err.txt");
  // README "HDF5 results": ionic_strength (mol/m^3) and debye_length (m) with their units.
  std::ofstream(dir / "check.py") << fmt::format(R"PY(import h5py
f = h5py.File("out.h5", "r")
a = f.attrs
assert abs(float(a["ionic_strength"]) - 10.0) == 0.0, a["ionic_strength"]
assert a["ionic_strength_units"] == "mol/m^3"
assert abs(float(a["debye_length"]) / {:.17g} - 1) < 1e-15, a["debye_length"]
assert a["debye_length_units"] == "m"
assert "with ions" in a["description"]
print("OK")
)PY",
                                                 1.0 / kappa);
  const std::string py =
      fmt::format("cd '{}' && /usr/bin/python3 check.py > py.txt 2>&1", dir.string());
  EXPECT_EQ(std::system(py.c_str()), 0) << testing::slurp(dir / "py.txt");
  EXPECT_EQ(testing::slurp(dir / "py.txt"), "OK\n");
  // 10 mM in water at 300 K: 1/kappa = 0.304 nm/sqrt(0.01) = 3.04 nm at 25 C, eps 78.4
  // (Israelachvili 2011); here eps(0) = 78.5, T = 300 K: sqrt(300 78.5/(298.15 78.4)) = 1.004.
  EXPECT_NEAR(1e9 / kappa, 3.04 * 1.004, 0.01);
}

}  // namespace
}  // namespace roundtrip
