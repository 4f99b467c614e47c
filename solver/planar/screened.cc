// Screened static TM reflection of a dielectric with carriers (screened.h).
#include "solver/planar/screened.h"

#include <fmt/format.h>

#include <cmath>
#include <limits>
#include <stdexcept>

#include "solver/constants.h"
#include "solver/planar/sheet.h"  // kVacuumPermittivity, kElectronMass
#include "solver/special/fermi_dirac.h"

namespace roundtrip {

double Screening::fermi_energy() const {
  return kHbar * kHbar * std::pow(3.0 * kPi * kPi * carrier_density, 2.0 / 3.0) /
         (2.0 * mass_ratio * kElectronMass);
}

double Screening::kappa_sq(double static_eps) const {
  if (debye_length) return 1.0 / (*debye_length * *debye_length);
  if (carrier_density == 0.0) return 0.0;
  const double e2 = kElementaryCharge * kElementaryCharge / (kVacuumPermittivity * static_eps);
  const bool degenerate_limit =
      statistics == CarrierStatistics::kThomasFermi ||
      (statistics == CarrierStatistics::kFermiDirac && !(temperature_K > 0.0));
  if (degenerate_limit) return 1.5 * carrier_density * e2 / fermi_energy();
  if (!(temperature_K > 0.0)) return std::numeric_limits<double>::infinity();
  const double debye = carrier_density * e2 / (kBoltzmann * temperature_K);
  if (statistics == CarrierStatistics::kBoltzmann) return debye;
  const double nc = 2.0 * std::pow(mass_ratio * kElectronMass * kBoltzmann * temperature_K /
                                       (2.0 * kPi * kHbar * kHbar),
                                   1.5);
  return debye *
         special::fermi_dirac_ratio(special::fermi_dirac_half_inverse(carrier_density / nc));
}

namespace {

class ScreenedStaticAt final : public PlanarAtFrequency {
 public:
  ScreenedStaticAt(double eps_s, double eps_m, double kappa_sq)
      : eps_s_(eps_s), eps_m_(eps_m), kappa_sq_(kappa_sq) {}
  Reflection reflect(double k) const override {
    if (std::isinf(kappa_sq_)) return {0.0, 1.0};
    // (eps_s q - eps_m k)/(eps_s q + eps_m k) = (1 - t)/(1 + t), t = eps_m k/(eps_s q) in [0, 1]:
    // no overflow for large kappa_D, exact 1 at k = 0 for kappa_D > 0.
    const double q = std::sqrt(k * k + kappa_sq_);
    if (q == 0.0) return {0.0, (eps_s_ - eps_m_) / (eps_s_ + eps_m_)};
    const double t = eps_m_ * k / (eps_s_ * q);
    return {0.0, (1.0 - t) / (1.0 + t)};
  }

 private:
  double eps_s_, eps_m_, kappa_sq_;
};

class ScreenedHalfSpace final : public PlanarSurface {
 public:
  ScreenedHalfSpace(MaterialPtr m, Screening s)
      : m_(std::move(m)), s_(s), plain_(make_half_space(m_)) {}
  std::unique_ptr<PlanarAtFrequency> at(double xi, const Material& medium) const override {
    if (xi > 0.0) return plain_->at(xi, medium);
    const double eps_s = m_->static_limit().static_eps;
    return std::make_unique<ScreenedStaticAt>(eps_s, medium.static_limit().static_eps,
                                              s_.kappa_sq(eps_s));
  }
  std::string describe() const override {
    const double ksq = s_.kappa_sq(m_->static_limit().static_eps);
    const std::string length = std::isinf(ksq)
                                   ? "Debye length 0 (T = 0)"
                                   : fmt::format("Debye length {:.4g} nm", 1e9 / std::sqrt(ksq));
    if (s_.debye_length)
      return fmt::format("half-space of {}, screened static TM ({})", m_->name(), length);
    const char* stats = s_.statistics == CarrierStatistics::kBoltzmann     ? ""
                        : s_.statistics == CarrierStatistics::kThomasFermi ? ", Thomas-Fermi"
                                                                           : ", Fermi-Dirac";
    const std::string mass = s_.statistics == CarrierStatistics::kBoltzmann
                                 ? std::string()
                                 : fmt::format(" m*/m_e = {:g}", s_.mass_ratio);
    return fmt::format(
        "half-space of {}, screened static TM (carriers {:.4g} cm^-3{}{} at {:g} K, {})",
        m_->name(), s_.carrier_density * 1e-6, stats, mass, s_.temperature_K, length);
  }
  PlanarPtr with_temperature(double temperature_K) const override {
    if (s_.debye_length || s_.statistics == CarrierStatistics::kThomasFermi) return nullptr;
    Screening s = s_;
    s.temperature_K = temperature_K;
    return std::make_shared<ScreenedHalfSpace>(m_, s);
  }

 private:
  MaterialPtr m_;
  Screening s_;
  PlanarPtr plain_;
};

}  // namespace

PlanarPtr make_screened_half_space(MaterialPtr material, Screening screening) {
  if (material->static_limit().is_conductor())
    throw std::invalid_argument(fmt::format(
        "{} is a conductor at xi = 0 (its static r_TM is 1 already); screening applies to a "
        "dielectric material (eps(0) finite) with carriers",
        material->name()));
  if (screening.debye_length && !(*screening.debye_length > 0.0))
    throw std::invalid_argument("the Debye length must be > 0");
  if (!(screening.carrier_density >= 0.0) || !std::isfinite(screening.carrier_density))
    throw std::invalid_argument("the carrier density must be finite and >= 0");
  if (!(screening.mass_ratio > 0.0) || !std::isfinite(screening.mass_ratio))
    throw std::invalid_argument("the effective mass ratio must be finite and > 0");
  return std::make_shared<ScreenedHalfSpace>(std::move(material), screening);
}

}  // namespace roundtrip
