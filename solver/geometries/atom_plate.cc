// Casimir-Polder integrand of an atom over a plate (formulas, conventions, sources in
// atom_plate.h).
#include "solver/geometries/atom_plate.h"

#include <fmt/format.h>

#include <algorithm>
#include <boost/math/quadrature/exp_sinh.hpp>
#include <boost/math/quadrature/tanh_sinh.hpp>
#include <cmath>
#include <limits>
#include <stdexcept>

#include "solver/constants.h"
#include "solver/materials/models.h"
#include "solver/planar/electrolyte.h"

namespace roundtrip {
namespace {
constexpr double kKRelTol = 1e-11;      // per component of the kappa integral
constexpr double kNonRetardedK = 1e12;  // 1/m: least "k -> inf" of C3 (atom_plate.h)
}  // namespace

AtomPlate::AtomPlate(PolarizabilityPtr atom, PlanarPtr plate, MaterialPtr medium, double kappa_ion)
    : atom_(std::move(atom)),
      plate_(std::move(plate)),
      medium_(std::move(medium)),
      kappa_ion_(kappa_ion) {
  if (!atom_ || !plate_) throw std::invalid_argument("atom-plate: an atom and a plate are needed");
  if (!(kappa_ion >= 0.0))
    throw std::invalid_argument(
        fmt::format("atom-plate: the medium's Debye constant {} 1/m must be >= 0", kappa_ion));
  if (!medium_) medium_ = make_vacuum();
  const StaticLimit sl = medium_->static_limit();
  if (sl.is_conductor())
    throw std::invalid_argument(
        fmt::format("atom-plate: the medium {} conducts; an atom in a conductor is not modelled",
                    medium_->name()));
  eps_m0_ = sl.static_eps;
}

std::shared_ptr<AtomPlate> make_atom_plate(PolarizabilityPtr atom, PlanarPtr plate,
                                           MaterialPtr medium, double kappa_ion) {
  return std::make_shared<AtomPlate>(std::move(atom), std::move(plate), std::move(medium),
                                     kappa_ion);
}

double AtomPlate::frequency_scale(double z) const {
  const double geometric = kSpeedOfLight / (2.0 * z * std::sqrt(eps_m0_));
  return std::min(geometric, atom_->characteristic_frequency());
}

Spectral AtomPlate::at_frequency(double xi, double z, DerivativeOrder order) const {
  const double eps_m = xi == 0.0 ? eps_m0_ : medium_->epsilon(xi);
  const double a = atom_->alpha(xi);
  // Ions screen the xi = 0 term (atom_plate.h): x0 = 2 kappa_ion z and r_TM -> r'.
  const bool screened = xi == 0.0 && kappa_ion_ > 0.0;
  const double x0 = screened  ? 2.0 * z * kappa_ion_
                    : xi == 0 ? 0.0
                              : 2.0 * z * std::sqrt(eps_m) * xi / kSpeedOfLight;
  Spectral s;
  if (std::isinf(x0)) return s;  // complete screening (T = 0 with ions): no static term
  const auto plate = plate_->at(xi, *medium_);
  // In units of 1/(2z): kappa = x/(2z), kappa_0 = x0/(2z), k = sqrt(y (y + 2 x0))/(2z).
  // B(x) = (2 x^2 - x0^2) r_TM - x0^2 r_TE; s = -(a/eps_m)/(8 z^3) e^{-x0} \int dy e^{-y} B,
  // d1 = +(a/eps_m)/(8 z^4) e^{-x0} \int x e^{-y} B, d2 = -(a/eps_m)/(8 z^5) e^{-x0} \int x^2 ...
  const auto integrand = [&](double y, int power) {
    // e^{-y} x^2 B < 1e-290 of the integral beyond y = 700; reflect() is not asked at k that
    // overflow (exp-sinh samples y up to ~1e300).
    if (y > 700.0) return 0.0;
    const double x = x0 + y;
    const double k = std::sqrt(y * (y + 2.0 * x0)) / (2.0 * z);
    const Reflection r = plate->reflect(k);
    if (screened) {
      const double rs = screened_static_tm(r.tm, k, x / (2.0 * z));  // r' of electrolyte.h
      return std::pow(x, power) * std::exp(-y) * (2.0 * x * x - x0 * x0) * rs;
    }
    const double b = (2.0 * x * x - x0 * x0) * r.tm - x0 * x0 * r.te;
    return std::pow(x, power) * std::exp(-y) * b;
  };
  boost::math::quadrature::exp_sinh<double> rule;
  const double pre = -(a / eps_m) * std::exp(-x0) / (8.0 * z * z * z);
  if (pre == 0.0) return s;
  s.value = pre * rule.integrate([&](double y) { return integrand(y, 0); }, kKRelTol);
  if (order >= DerivativeOrder::kForce)
    s.d1 = -pre / z * rule.integrate([&](double y) { return integrand(y, 1); }, kKRelTol);
  if (order >= DerivativeOrder::kGradient)
    s.d2 = pre / (z * z) * rule.integrate([&](double y) { return integrand(y, 2); }, kKRelTol);
  return s;
}

double AtomPlate::c3() const {
  // (hbar/4pi) \int_0^inf dxi a(xi)/eps_m(xi) r_TM(xi, k -> inf) with xi = w tan(theta): the
  // integrand falls algebraically (alpha ~ 1/xi^2), so a finite interval in theta by the tanh-sinh
  // rule (Takahasi & Mori 1974; Boost.Math). w is the atom's scale, or 1e16 rad/s (where eps(i xi)
  // of ordinary matter falls towards 1) for a constant alpha.
  double w = atom_->characteristic_frequency();
  if (!std::isfinite(w)) w = 1e16;
  boost::math::quadrature::tanh_sinh<double> rule;
  const double integral = rule.integrate(
      [&](double th) {
        if (!(th < 0.5 * kPi)) return 0.0;
        const double t = std::tan(th), xi = w * t;
        const double eps_m = xi == 0.0 ? eps_m0_ : medium_->epsilon(xi);
        // k -> inf: far beyond xi/c (retardation) and 1/pm (films); r_TM is then the top
        // material's non-retarded (eps - eps_m)/(eps + eps_m).
        const double k = std::max(kNonRetardedK, 1e6 * std::sqrt(eps_m) * xi / kSpeedOfLight);
        const double r = plate_->at(xi, *medium_)->reflect(k).tm;
        return atom_->alpha(xi) / eps_m * r * (1.0 + t * t);
      },
      0.0, 0.5 * kPi, 1e-10);
  return kHbar / (4.0 * kPi) * w * integral;
}

std::optional<double> AtomPlate::c4() const {
  if (!plate_->is_perfect_conductor() || eps_m0_ != 1.0 || medium_->epsilon(1e15) != 1.0)
    return std::nullopt;
  return 3.0 * kHbarC * atom_->alpha(0.0) / (8.0 * kPi);
}

std::string AtomPlate::describe() const {
  std::string d =
      fmt::format("atom ({}: {}) over {}", atom_->name(), atom_->description(), plate_->describe());
  if (medium_->name() != "vacuum") d += " in " + medium_->name();
  if (kappa_ion_ > 0.0)
    d += fmt::format(" with ions (Debye length {:.4g} nm; static term screened)", 1e9 / kappa_ion_);
  if (plate_->is_perfect_conductor() && !std::isfinite(atom_->characteristic_frequency())) {
    d += "; C3 infinite (constant alpha over a perfect mirror)";
  } else {
    d += fmt::format("; C3 = {:.6g} J m^3", c3());
  }
  if (const auto c = c4()) d += fmt::format(", C4 = {:.6g} J m^4", *c);
  return d;
}

}  // namespace roundtrip
