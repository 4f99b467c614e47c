// Homogeneous half-space: Fresnel coefficients at imaginary frequency (conventions in planar.h).
#include <fmt/format.h>

#include <cmath>

#include "solver/constants.h"
#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

class HalfSpaceAt final : public PlanarAtFrequency {
 public:
  HalfSpaceAt(double xi, const Material& body, const Material& medium) {
    if (body.is_perfect_conductor()) {
      pec_ = true;
      return;
    }
    if (xi > 0.0) {
      const double q = xi / kSpeedOfLight;
      eps_m_ = medium.epsilon(xi);
      eps_b_ = body.epsilon(xi);
      km2_ = eps_m_ * q * q;
      kb2_ = eps_b_ * q * q;
      return;
    }
    // xi = 0: exact static limits, kappa = k in the medium.
    static_ = true;
    const StaticLimit sb = body.static_limit();
    const StaticLimit sm = medium.static_limit();
    eps_m_ = sm.static_eps;
    switch (sb.kind) {
      case StaticClass::kDielectric:
        static_tm_ = (sb.static_eps - eps_m_) / (sb.static_eps + eps_m_);
        break;
      case StaticClass::kDrudeConductor:
        static_tm_ = 1.0;
        break;
      case StaticClass::kPlasmaConductor:
        static_tm_ = 1.0;
        kb2_ = sb.plasma_wavenumber_sq;
        plasma_te_ = true;
        break;
      case StaticClass::kPerfectConductor:
        pec_ = true;
        break;
    }
  }

  Reflection reflect(double k) const override {
    if (pec_) return {-1.0, 1.0};
    if (static_) {
      Reflection r{0.0, static_tm_};
      if (plasma_te_) {
        const double kb = std::sqrt(k * k + kb2_);
        r.te = (k - kb) / (k + kb);
      }
      return r;
    }
    const double k2 = k * k;
    const double km = std::sqrt(k2 + km2_);
    const double kb = std::sqrt(k2 + kb2_);
    return {(km - kb) / (km + kb), (eps_b_ * km - eps_m_ * kb) / (eps_b_ * km + eps_m_ * kb)};
  }

 private:
  bool pec_ = false, static_ = false, plasma_te_ = false;
  double eps_m_ = 1.0, eps_b_ = 1.0, km2_ = 0.0, kb2_ = 0.0, static_tm_ = 0.0;
};

class HalfSpace final : public PlanarSurface {
 public:
  explicit HalfSpace(MaterialPtr m) : m_(std::move(m)) {}
  std::unique_ptr<PlanarAtFrequency> at(double xi, const Material& medium) const override {
    return std::make_unique<HalfSpaceAt>(xi, *m_, medium);
  }
  std::string describe() const override { return fmt::format("half-space of {}", m_->name()); }
  bool is_perfect_conductor() const override { return m_->is_perfect_conductor(); }

 private:
  MaterialPtr m_;
};

}  // namespace

PlanarPtr make_half_space(MaterialPtr material) {
  return std::make_shared<HalfSpace>(std::move(material));
}

}  // namespace roundtrip
