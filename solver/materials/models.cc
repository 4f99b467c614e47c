#include "solver/materials/models.h"

#include <fmt/format.h>

#include <limits>
#include <stdexcept>

#include "solver/constants.h"

namespace roundtrip {

DrudeLorentz::DrudeLorentz(std::string name, DrudeLorentzParams p, std::string source)
    : name_(std::move(name)), source_(std::move(source)), p_(std::move(p)) {
  if (!(p_.eps_inf >= 1.0))
    throw std::invalid_argument(
        fmt::format("material '{}': eps_inf = {} must be >= 1", name_, p_.eps_inf));
  if (!(p_.plasma_frequency >= 0.0) || !(p_.damping >= 0.0))
    throw std::invalid_argument(
        fmt::format("material '{}': plasma frequency and damping must be >= 0", name_));
  for (const auto& o : p_.oscillators)
    if (!(o.strength >= 0.0) || !(o.frequency > 0.0) || !(o.damping >= 0.0))
      throw std::invalid_argument(fmt::format(
          "material '{}': oscillator needs strength >= 0, frequency > 0, damping >= 0", name_));
  for (const auto& r : p_.relaxations)
    if (!(r.strength >= 0.0) || !(r.rate > 0.0))
      throw std::invalid_argument(
          fmt::format("material '{}': relaxation needs strength >= 0, rate > 0", name_));
}

double DrudeLorentz::epsilon(double xi) const {
  // Each term in a form whose intermediates do not overflow before the term itself does:
  // (w_p/xi) (w_p/(xi + gamma)) and C [w^2/(w^2 + xi^2 + g xi)] (the bracket is <= 1), so that
  // eps near the double range (eps = 1.7e308, strengths 1e300) stays finite where it is.
  double eps = p_.eps_inf;
  if (p_.plasma_frequency > 0.0) {
    eps += (p_.plasma_frequency / xi) * (p_.plasma_frequency / (xi + p_.damping));
  }
  for (const auto& o : p_.oscillators) {
    const double w2 = o.frequency * o.frequency;
    eps += o.strength * (w2 / (w2 + xi * xi + o.damping * xi));
  }
  for (const auto& r : p_.relaxations) eps += r.strength / (1.0 + xi / r.rate);
  return eps;
}

StaticLimit DrudeLorentz::static_limit() const {
  if (p_.plasma_frequency > 0.0) {
    if (p_.damping > 0.0) return {StaticClass::kDrudeConductor, 0.0, 0.0};
    const double kp = p_.plasma_frequency / kSpeedOfLight;
    return {StaticClass::kPlasmaConductor, 0.0, kp * kp};
  }
  double eps0 = p_.eps_inf;
  for (const auto& o : p_.oscillators) eps0 += o.strength;
  for (const auto& r : p_.relaxations) eps0 += r.strength;
  return {StaticClass::kDielectric, eps0, 0.0};
}

std::string DrudeLorentz::description() const {
  std::string s;
  const double ev = kRadPerSecondPerEv;
  if (p_.plasma_frequency > 0.0) {
    s = p_.damping > 0.0 ? fmt::format("Drude, omega_p = {:.6g} eV, gamma = {:.6g} meV",
                                       p_.plasma_frequency / ev, 1e3 * p_.damping / ev)
                         : fmt::format("plasma, omega_p = {:.6g} eV", p_.plasma_frequency / ev);
  } else if (p_.oscillators.empty() && p_.relaxations.empty()) {
    s = fmt::format("constant, eps = {:.6g}", p_.eps_inf);
  } else {
    s = "oscillators";
  }
  if (p_.eps_inf != 1.0 &&
      (p_.plasma_frequency > 0.0 || !p_.oscillators.empty() || !p_.relaxations.empty()))
    s += fmt::format(", eps_inf = {:.6g}", p_.eps_inf);
  for (const auto& o : p_.oscillators) {
    s += fmt::format(", C = {:.6g} at {:.6g} rad/s", o.strength, o.frequency);
    if (o.damping > 0.0) s += fmt::format(" (damping {:.6g} rad/s)", o.damping);
  }
  for (const auto& r : p_.relaxations)
    s += fmt::format(", Debye d = {:.6g} at rate {:.6g} rad/s", r.strength, r.rate);
  return s;
}

double PerfectConductor::epsilon(double) const { return std::numeric_limits<double>::infinity(); }

MaterialPtr make_perfect_conductor() { return std::make_shared<PerfectConductor>(); }
MaterialPtr make_vacuum() {
  return std::make_shared<DrudeLorentz>("vacuum", DrudeLorentzParams{}, "exact");
}
MaterialPtr make_constant(std::string name, double eps) {
  DrudeLorentzParams p;
  p.eps_inf = eps;
  return std::make_shared<DrudeLorentz>(std::move(name), p);
}
MaterialPtr make_plasma(std::string name, double omega_p) {
  DrudeLorentzParams p;
  p.plasma_frequency = omega_p;
  return std::make_shared<DrudeLorentz>(std::move(name), p);
}
MaterialPtr make_drude(std::string name, double omega_p, double gamma) {
  DrudeLorentzParams p;
  p.plasma_frequency = omega_p;
  p.damping = gamma;
  return std::make_shared<DrudeLorentz>(std::move(name), p);
}

}  // namespace roundtrip
