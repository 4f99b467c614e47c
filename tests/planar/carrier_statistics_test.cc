// Carrier statistics of the screened static term (solver/planar/screened.h): the Fermi-Dirac
// integrals against mpmath and the zeta function, the Boltzmann (Debye-Hueckel) and
// Thomas-Fermi limits of the Fermi-Dirac screening constant, and the case keys.
#include <fmt/format.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <boost/math/special_functions/zeta.hpp>
#include <cmath>
#include <string>
#include <vector>

#include "io/case_file.h"
#include "io/errors.h"
#include "solver/constants.h"
#include "solver/materials/library.h"
#include "solver/planar/screened.h"
#include "solver/special/fermi_dirac.h"

namespace roundtrip {
namespace {

TEST(FermiDirac, IntegralsMatchMpmathQuadrature) {
  // tests/planar/fermi_dirac_reference.py (mpmath, 30 digits); e^{-eta} F_j for eta <= 0.
  // Tolerance 1e-12: quadrature at 1e-14 and Sommerfeld's series (eta > 40) to e^{-40}.
  struct Row {
    double eta, half, minus_half;
  };
  const std::vector<Row> rows{
      {-30, 0.99999999999996691581, 0.99999999999993376825},
      {-5, 0.99762647515901727107, 0.99526161161232171788},
      {0, 0.76514702462540794537, 0.60489864342163034989},
      {3, 4.4875474213517089443, 1.8534850886015177248},
      {19.9, 66.988043687395472631, 5.0283468154895020303},
      {20.1, 67.996246320560406308, 5.0536581492114347658},
      {50, 266.09281252136259343, 7.9775308585818699146},
      {1e4, 752252.7873442217908, 112.83791624552390349},
  };
  for (const auto& r : rows) {
    EXPECT_NEAR(special::fermi_dirac_half(r.eta) / r.half, 1.0, 1e-12) << r.eta;
    EXPECT_NEAR(special::fermi_dirac_minus_half(r.eta) / r.minus_half, 1.0, 1e-12) << r.eta;
  }
}

TEST(FermiDirac, ValuesAtZeroAreDirichletEta) {
  // F_j(0) = (1 - 2^{-j}) zeta(j + 1) (standard), zeta from Boost.Math.
  EXPECT_NEAR(special::fermi_dirac_half(0.0), (1 - std::pow(2.0, -0.5)) * boost::math::zeta(1.5),
              1e-13);
  EXPECT_NEAR(special::fermi_dirac_minus_half(0.0), (1 - std::sqrt(2.0)) * boost::math::zeta(0.5),
              1e-13);
}

TEST(FermiDirac, InverseRecoversEta) {
  for (double eta : {-40.0, -3.0, 0.0, 2.0, 19.99, 20.01, 300.0, 1e6}) {
    const double r = std::exp(special::log_fermi_dirac(true, eta));
    EXPECT_NEAR(special::fermi_dirac_half_inverse(r), eta, 1e-12 * std::max(1.0, std::abs(eta)))
        << eta;
  }
}

double kappa_sq(CarrierStatistics st, double n, double T, double mass, double eps) {
  Screening s;
  s.carrier_density = n;
  s.statistics = st;
  s.mass_ratio = mass;
  s.temperature_K = T;
  return s.kappa_sq(eps);
}

TEST(CarrierStatistics, FermiDiracTendsToDebyeHueckelForDiluteCarriers) {
  // n << N_c: kappa^2/kappa_D^2 = 1 - (n/N_c)/2^{3/2} + O((n/N_c)^2) (derived from
  // F_j = e^eta - e^{2 eta}/2^{j+1} + ...). Checked: the deviation over the first-order term -> 1,
  // error O(n/N_c) (tolerance 2 n/N_c).
  const double eps = 11.7, T = 300.0, m = 0.26;
  const double nc =
      2 * std::pow(m * 9.1093837015e-31 * kBoltzmann * T / (2 * kPi * kHbar * kHbar), 1.5);
  for (double x : {1e-2, 1e-3, 1e-4}) {
    const double n = x * nc;
    const double ratio = kappa_sq(CarrierStatistics::kFermiDirac, n, T, m, eps) /
                         kappa_sq(CarrierStatistics::kBoltzmann, n, T, m, eps);
    EXPECT_NEAR((1.0 - ratio) * std::pow(2.0, 1.5) / x, 1.0, 2 * x) << x;
  }
}

TEST(CarrierStatistics, FermiDiracTendsToThomasFermiForDegenerateCarriers) {
  // E_F >> k_B T, t = k_B T/E_F: kappa^2/kappa_TF^2 = 1 - (pi^2/12) t^2 - (11 pi^4/360) t^4
  // - (17 pi^6/405) t^6 + ... (derived from Sommerfeld's expansion with sympy; Ashcroft & Mermin
  // (1976) for kappa_TF). Tolerance 50 t^6 (the t^6 coefficient is 40.4, plus room for t^8).
  const double eps = 1.0, m = 1.0,
               n = 5.9e28;  // free-electron gold (Ashcroft & Mermin, from memory)
  Screening s;
  s.carrier_density = n;
  s.mass_ratio = m;
  const double ef = s.fermi_energy();
  EXPECT_NEAR(ef / kElementaryCharge, 5.53, 0.02);  // E_F of gold 5.53 eV (Ashcroft & Mermin)
  // Thomas-Fermi length of gold ~0.59 Angstrom (kappa_TF^2 = 3 n e^2/(2 eps_0 E_F), derived).
  EXPECT_NEAR(1e10 / std::sqrt(kappa_sq(CarrierStatistics::kThomasFermi, n, 0, m, eps)), 0.59,
              0.01);
  for (double t : {0.05, 0.02, 0.01}) {  // k_B T / E_F
    const double T = t * ef / kBoltzmann;
    const double ratio = kappa_sq(CarrierStatistics::kFermiDirac, n, T, m, eps) /
                         kappa_sq(CarrierStatistics::kThomasFermi, n, T, m, eps);
    const double t2 = t * t, pi2 = kPi * kPi;
    EXPECT_NEAR(ratio, 1.0 - pi2 / 12 * t2 - 11 * pi2 * pi2 / 360 * t2 * t2, 50 * t2 * t2 * t2)
        << t;
  }
  EXPECT_EQ(kappa_sq(CarrierStatistics::kFermiDirac, n, 0.0, m, eps),
            kappa_sq(CarrierStatistics::kThomasFermi, n, 0.0, m, eps));  // T = 0
}

TEST(CarrierStatistics, FermiDiracScreeningLiesBelowBothLimits) {
  // dn/dmu of a Fermi gas is below both n/(k_B T) and 3n/(2E_F) (derived: F_{-1/2}/F_{1/2} < 1
  // and < 3/(2 eta_F)): silicon, m* = 0.26, 300 K, 1e15 ... 1e21 cm^-3.
  for (double n : {1e21, 1e24, 1e25, 1e26, 1e27}) {
    const double fd = kappa_sq(CarrierStatistics::kFermiDirac, n, 300, 0.26, 11.7);
    EXPECT_LT(fd, kappa_sq(CarrierStatistics::kBoltzmann, n, 300, 0.26, 11.7)) << n;
    EXPECT_LT(fd, kappa_sq(CarrierStatistics::kThomasFermi, n, 300, 0.26, 11.7)) << n;
  }
}

const std::string kCase = R"(geometry = "plate-plate"
[plate]
material = "silicon"
screening = { carrier_density = "1e20 cm^-3", statistics = "fermi-dirac", mass_ratio = 0.26 }
[plate2]
material = "gold-drude"
[separations]
values = ["1 um"]
[conditions]
temperature = "300 K"
)";

TEST(CarrierStatistics, CaseKeysBuildTheChosenStatistics) {
  const io::CaseSpec c = io::parse_case(kCase, "a.toml");
  const auto g = io::build_geometry(c);  // binds T = 300 K
  EXPECT_NE(g->describe().find("Fermi-Dirac m*/m_e = 0.26 at 300 K"), std::string::npos)
      << g->describe();
  const double eps = builtin_material("silicon")->static_limit().static_eps;
  const double kappa = std::sqrt(kappa_sq(CarrierStatistics::kFermiDirac, 1e26, 300, 0.26, eps));
  const std::string want = fmt::format("Debye length {:.4g} nm", 1e9 / kappa);
  EXPECT_NE(g->describe().find(want), std::string::npos) << g->describe() << "\n" << want;
}

TEST(CarrierStatistics, BadStatisticsInputIsNamed) {
  struct Bad {
    std::string from, to, expect;
  };
  const std::vector<Bad> bad{
      {"\"fermi-dirac\"", "\"quantum\"", "a.toml:4: plate.screening.statistics = \"quantum\""},
      {", mass_ratio = 0.26", "", "needs mass_ratio"},
      {"mass_ratio = 0.26", "mass_ratio = -1", "plate.screening.mass_ratio = -1: must be between"},
      {"statistics = \"fermi-dirac\", ", "", "applies to statistics"},
      {"carrier_density = \"1e20 cm^-3\"", "debye_length = \"4 nm\"", "needs carrier_density"},
  };
  for (const auto& b : bad) {
    std::string text = kCase;
    text.replace(text.find(b.from), b.from.size(), b.to);
    std::string m = "no error";
    try {
      (void)io::parse_case(text, "a.toml");
    } catch (const io::CaseError& e) {
      m = e.what();
    }
    EXPECT_NE(m.find(b.expect), std::string::npos) << m << "\n  expected: " << b.expect;
  }
}

}  // namespace
}  // namespace roundtrip
