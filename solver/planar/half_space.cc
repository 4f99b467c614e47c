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
      if (std::isfinite(eps_b_) && std::isfinite(kb2_) && km2_ > 0.0) return;
      // eps_b q^2 beyond the double range (eps_b >~ 1e292 at xi ~ 1e15 rad/s, or a sum of terms
      // that overflowed): kappa_b ~ sqrt(eps_b) q >~ 1e146/m while k, kappa_m <~ 1e12/m, so
      // r_TE = -1 + 2 kappa_m/(kappa_m + kappa_b) and r_TM = 1 - 2 eps_m kappa_b/(eps_b kappa_m +
      // eps_m kappa_b) differ from the eps -> inf limits -1 and +1 by < 1e-130 (derived). For a
      // dielectric an infinite eps can only come from such an overflow of its terms.
      const bool conductor = body.static_limit().is_conductor();
      if (std::isfinite(km2_) && km2_ > 0.0 &&
          ((std::isfinite(eps_b_) && !std::isfinite(kb2_)) ||
           (!conductor && !std::isfinite(eps_b_)))) {
        ideal_ = true;
        return;
      }
      // A conductor's eps overflows only as xi -> 0 (Drude: xi ~ 1e-290 rad/s): that is the static
      // limit to every digit, so take it exactly.
    }
    // xi = 0: exact static limits, kappa = k in the medium.
    static_ = true;
    const StaticLimit sb = body.static_limit();
    const StaticLimit sm = medium.static_limit();
    eps_m_ = sm.static_eps;
    switch (sb.kind) {
      case StaticClass::kDielectric: {
        // (1 - m/e)/(1 + m/e): no overflow for eps(0) near the double range; eps(0) = inf (a sum
        // of strengths that overflowed) gives the limit 1.
        const double ratio = eps_m_ / sb.static_eps;
        static_tm_ = (1.0 - ratio) / (1.0 + ratio);
        break;
      }
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
    if (pec_ || ideal_) return {-1.0, 1.0};
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
    // Two forms of each coefficient, chosen so that neither cancels nor leaves |r| <= 1:
    //   r_TE = (km - kb)/(km + kb) = -1 + 2 km/(km + kb) = (km^2 - kb^2)/(km + kb)^2,
    //   r_TM = 1 - 2 e kb = (a - e) [(a + e) k^2 + a eps_m q^2],
    // a = eps_b / S, e = eps_m / S, S = eps_b km + eps_m kb, q = xi/c (the product forms follow
    // from multiplying by the conjugate sum). The product forms give an exact zero for a body
    // matching the medium and full accuracy as eps -> 1 at high xi; no form overflows for the
    // huge eps of metals at tiny xi.
    const double ste = km + kb;
    const double a = 1.0 / (km + (eps_m_ / eps_b_) * kb), e = 1.0 / ((eps_b_ / eps_m_) * km + kb);
    const double two_km = 2.0 * km / ste, two_ekb = 2.0 * e * kb;
    const double te = two_km < 0.5 ? -1.0 + two_km : (km2_ - kb2_) / (ste * ste);
    const double tm =
        two_ekb < 0.5 ? 1.0 - two_ekb : (a - e) * ((a + e) * k2 + a * eps_m_ * (km2_ / eps_m_));
    return {te, tm};
  }

 private:
  bool pec_ = false, ideal_ = false, static_ = false, plasma_te_ = false;
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
