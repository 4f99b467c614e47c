// Hydrodynamic nonlocal half-space (formulas, conventions and sources in hydrodynamic.h).
#include "solver/planar/hydrodynamic.h"

#include <fmt/format.h>

#include <cmath>
#include <stdexcept>

#include "solver/constants.h"
#include "solver/materials/models.h"

namespace roundtrip {
namespace {

class HydrodynamicAt final : public PlanarAtFrequency {
 public:
  HydrodynamicAt(double xi, const DrudeLorentz& metal, double beta, const Material& medium) {
    const DrudeLorentzParams& p = metal.params();
    const double wp2 = p.plasma_frequency * p.plasma_frequency;
    const double c2 = kSpeedOfLight * kSpeedOfLight;
    const double b2 = beta * beta;
    if (xi > 0.0) {
      eps_m_ = medium.epsilon(xi);
      // eps_b from its own terms: eps_T - drude would cancel catastrophically at small xi.
      // The same term forms as DrudeLorentz::epsilon (no premature overflow).
      const double drude = (p.plasma_frequency / xi) * (p.plasma_frequency / (xi + p.damping));
      eps_b_ = p.eps_inf;
      for (const auto& o : p.oscillators) {
        const double w2 = o.frequency * o.frequency;
        eps_b_ += o.strength * (w2 / (w2 + xi * xi + o.damping * xi));
      }
      for (const auto& r : p.relaxations) eps_b_ += r.strength / (1.0 + xi / r.rate);
      eps_t_ = eps_b_ + drude;
      km2_ = eps_m_ * xi * xi / c2;
      kt2_ = eps_t_ * xi * xi / c2;
      drude_ = drude;
      local_ = !(b2 > 0.0);
      if (!local_) kl2_ = (wp2 / eps_b_ + xi * (xi + p.damping)) / b2;
      return;
    }
    // xi = 0: TM from the eps_T -> inf limit of the formula; TE as the local static limit.
    static_ = true;
    eps_m_ = medium.static_limit().static_eps;
    const StaticLimit sl = metal.static_limit();
    if (sl.kind == StaticClass::kPlasmaConductor) kt2_ = sl.plasma_wavenumber_sq;
    plasma_te_ = sl.kind == StaticClass::kPlasmaConductor;
    eps_b_ = p.eps_inf;
    for (const auto& o : p.oscillators) eps_b_ += o.strength;
    for (const auto& r : p.relaxations) eps_b_ += r.strength;
    local_ = !(b2 > 0.0);
    if (!local_) kl2_ = wp2 / (eps_b_ * b2);
  }

  Reflection reflect(double k) const override {
    const double k2 = k * k;
    if (static_) {
      Reflection r{0.0, 1.0};
      if (plasma_te_) {
        const double kb = std::sqrt(k2 + kt2_);
        r.te = (k - kb) / (k + kb);
      }
      if (!local_) {
        const double s = eps_m_ * k / (eps_b_ * std::sqrt(k2 + kl2_));
        r.tm = (1.0 - s) / (1.0 + s);
      }
      return r;
    }
    const double km = std::sqrt(k2 + km2_);
    const double kt = std::sqrt(k2 + kt2_);
    const double nl = local_ ? 0.0 : eps_m_ * drude_ * k2 / (eps_b_ * std::sqrt(k2 + kl2_));
    return {(km - kt) / (km + kt),
            (eps_t_ * km - eps_m_ * kt - nl) / (eps_t_ * km + eps_m_ * kt + nl)};
  }

 private:
  bool static_ = false, plasma_te_ = false, local_ = true;
  double eps_m_ = 1.0, eps_t_ = 1.0, eps_b_ = 1.0, drude_ = 0.0;
  double km2_ = 0.0, kt2_ = 0.0, kl2_ = 0.0;
};

class Hydrodynamic final : public PlanarSurface {
 public:
  Hydrodynamic(MaterialPtr keep, const DrudeLorentz* metal, double beta)
      : keep_(std::move(keep)), metal_(metal), beta_(beta) {}
  std::unique_ptr<PlanarAtFrequency> at(double xi, const Material& medium) const override {
    return std::make_unique<HydrodynamicAt>(xi, *metal_, beta_, medium);
  }
  std::string describe() const override {
    return fmt::format("hydrodynamic nonlocal half-space of {}, beta = {:.6g} m/s", metal_->name(),
                       beta_);
  }

 private:
  MaterialPtr keep_;
  const DrudeLorentz* metal_;
  double beta_;
};

}  // namespace

std::string to_string(HydrodynamicRegime r) {
  return r == HydrodynamicRegime::kHighFrequency ? "high-frequency" : "low-frequency";
}

double hydrodynamic_beta(double fermi_velocity, HydrodynamicRegime regime) {
  const double f = regime == HydrodynamicRegime::kHighFrequency ? 3.0 / 5.0 : 1.0 / 3.0;
  return std::sqrt(f) * fermi_velocity;
}

PlanarPtr make_hydrodynamic(MaterialPtr metal, double beta) {
  if (!metal) throw std::invalid_argument("make_hydrodynamic: material is null");
  const auto* dl = dynamic_cast<const DrudeLorentz*>(metal.get());
  if (dl == nullptr || !(dl->params().plasma_frequency > 0.0))
    throw std::invalid_argument(fmt::format(
        "hydrodynamic model needs a Drude or plasma metal (plasma_frequency > 0); '{}' is {}",
        metal->name(), metal->description()));
  if (!(beta >= 0.0) || !std::isfinite(beta))
    throw std::invalid_argument(fmt::format("hydrodynamic beta = {} m/s must be >= 0", beta));
  return std::make_shared<Hydrodynamic>(metal, dl, beta);
}

}  // namespace roundtrip
