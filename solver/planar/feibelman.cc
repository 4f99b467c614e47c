// Feibelman d-parameters on a half-space (feibelman.h).
#include "solver/planar/feibelman.h"

#include <fmt/format.h>

#include <cmath>
#include <limits>
#include <stdexcept>

#include "solver/constants.h"

namespace roundtrip {

std::string SurfaceParameter::describe() const {
  if (pole == 0.0) return fmt::format("{:.4g} nm", static_value * 1e9);
  return fmt::format("{:.4g} nm + ({:.4g} nm) W^2/(W^2 + xi^2), W = {:.4g} eV",
                     high_frequency * 1e9, (static_value - high_frequency) * 1e9,
                     pole / kRadPerSecondPerEv);
}

namespace {

class FeibelmanAt final : public PlanarAtFrequency {
 public:
  FeibelmanAt(std::unique_ptr<PlanarAtFrequency> plain, double xi, const Material& body,
              const Material& medium, const FeibelmanParameters& d)
      : plain_(std::move(plain)), dp_(d.perpendicular.at(xi)), dl_(d.parallel.at(xi)) {
    if (xi > 0.0) {
      s_ = (xi / kSpeedOfLight) * (xi / kSpeedOfLight);
      eps_m_ = medium.epsilon(xi);
      eps_b_ = body.epsilon(xi);
    } else {
      const StaticLimit sb = body.static_limit();
      eps_m_ = medium.static_limit().static_eps;
      eps_b_ = sb.kind == StaticClass::kDielectric ? sb.static_eps
                                                   : std::numeric_limits<double>::infinity();
    }
    // u = eps_m/eps_b (0 for eps_b = inf or an overflowing eps_b s, where the eps -> inf limits
    // hold to < 1e-130 as in half_space.cc).
    u_ = std::isfinite(eps_b_) && std::isfinite(eps_b_ * s_) ? eps_m_ / eps_b_ : 0.0;
  }
  Reflection reflect(double k) const override {
    Reflection r = plain_->reflect(k);
    const double k2 = k * k;
    const double km = std::sqrt(k2 + eps_m_ * s_);
    if (km == 0.0) return r;  // k = 0 at xi = 0: no correction (linear in k)
    // kappa_b and kappa_b^2 only enter as u kappa_b and u kappa_b^2 = eps_m (k^2/eps_b + s).
    const double ukb2 = u_ == 0.0 ? eps_m_ * s_ : u_ * (k2 + eps_b_ * s_);
    const double ukb = u_ == 0.0 ? 0.0 : u_ * std::sqrt(k2 + eps_b_ * s_);
    const double den = km + ukb;
    r.tm += 2.0 * (1.0 - u_) * km * (k2 * dp_ + ukb2 * dl_) / (den * den);
    r.te *= 1.0 + 2.0 * km * dl_;
    return r;
  }

 private:
  std::unique_ptr<PlanarAtFrequency> plain_;
  double dp_, dl_, s_ = 0.0, eps_m_ = 1.0, eps_b_ = 1.0, u_ = 0.0;
};

class FeibelmanHalfSpace final : public PlanarSurface {
 public:
  FeibelmanHalfSpace(MaterialPtr m, FeibelmanParameters d)
      : m_(std::move(m)), d_(d), plain_(make_half_space(m_)) {}
  std::unique_ptr<PlanarAtFrequency> at(double xi, const Material& medium) const override {
    return std::make_unique<FeibelmanAt>(plain_->at(xi, medium), xi, *m_, medium, d_);
  }
  std::string describe() const override {
    return fmt::format("half-space of {} with Feibelman d_perp = {}, d_par = {} (first order)",
                       m_->name(), d_.perpendicular.describe(), d_.parallel.describe());
  }

 private:
  MaterialPtr m_;
  FeibelmanParameters d_;
  PlanarPtr plain_;
};

bool finite(const SurfaceParameter& p) {
  return std::isfinite(p.static_value) && std::isfinite(p.high_frequency) &&
         std::isfinite(p.pole) && p.pole >= 0.0;
}

}  // namespace

PlanarPtr make_feibelman_half_space(MaterialPtr material, FeibelmanParameters d) {
  if (material->is_perfect_conductor())
    throw std::invalid_argument(
        "a perfect conductor has no surface response of its own (use a Drude or plasma metal)");
  if (!finite(d.perpendicular) || !finite(d.parallel))
    throw std::invalid_argument("d-parameters must be finite (pole frequency >= 0)");
  return std::make_shared<FeibelmanHalfSpace>(std::move(material), d);
}

Reflection feibelman_rational(double eps_b, double eps_m, double xi, double k, double dp,
                              double dl) {
  const double s = (xi / kSpeedOfLight) * (xi / kSpeedOfLight);
  const double km = std::sqrt(k * k + eps_m * s), kb = std::sqrt(k * k + eps_b * s);
  const double de = eps_b - eps_m;
  const double tm = (eps_b * km - eps_m * kb + de * (k * k * dp + km * kb * dl)) /
                    (eps_b * km + eps_m * kb - de * (k * k * dp - km * kb * dl));
  // k_m - k_b - (k_b^2 - k_m^2) d_par = -(eps_b - eps_m) s (1/(k_m + k_b) + d_par): no
  // cancellation when eps_b s << k^2.
  const double g = de * s * dl;
  return {-de * s * (1.0 / (km + kb) + dl) / (km + kb + g), tm};
}

}  // namespace roundtrip
