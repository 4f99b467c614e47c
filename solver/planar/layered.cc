// Layered planar body by the recursive Airy formula (conventions and static limits in layered.h).
#include "solver/planar/layered.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "solver/constants.h"
#include "solver/planar/hydrodynamic.h"

namespace roundtrip {
namespace {

// One slab (or the substrate, thickness ignored) bound to a frequency.
struct Slab {
  bool pec = false;
  double eps = 1.0;    // TM weight (static eps for dielectrics at xi = 0)
  double q2_te = 0.0;  // kappa^2 - k^2 for TE (1/m^2)
  double q2_tm = 0.0;  // kappa^2 - k^2 for TM (1/m^2)
  double thickness = 0.0;
};

class LayeredAt final : public PlanarAtFrequency {
 public:
  // `body`, if not null, replaces the local substrate's reflection wherever the substrate is seen
  // (a nonlocal half-space of `substrate`); static TE stays local (nonlocality is TM-only).
  LayeredAt(double xi, const std::vector<Layer>& layers, const Material& substrate,
            const Material& medium, const PlanarSurface* body) {
    const double q2 = (xi / kSpeedOfLight) * (xi / kSpeedOfLight);
    std::vector<const Material*> mats;
    std::vector<double> thick;
    for (const auto& l : layers) {
      mats.push_back(l.material.get());
      thick.push_back(l.thickness);
    }
    mats.push_back(&substrate);
    thick.push_back(0.0);
    if (xi > 0.0) {
      medium_.eps = medium.epsilon(xi);
      medium_.q2_te = medium_.q2_tm = medium_.eps * q2;
      for (std::size_t j = 0; j < mats.size(); ++j) {
        Slab s;
        s.thickness = thick[j];
        if (mats[j]->is_perfect_conductor()) {
          s.pec = true;
        } else {
          s.eps = mats[j]->epsilon(xi);
          s.q2_te = s.q2_tm = s.eps * q2;
          // eps q^2 beyond the double range (eps >~ 1e292, or a dielectric whose terms
          // overflowed): kappa >~ 1e146/m, the slab reflects as a perfect conductor to every
          // digit and nothing below it is seen (as in half_space.cc; derived).
          const bool conductor = mats[j]->static_limit().is_conductor();
          if ((std::isfinite(s.eps) && !std::isfinite(s.q2_te)) ||
              (!conductor && !std::isfinite(s.eps)))
            s.pec = true;
        }
        // Below a perfect conductor nothing is seen, in either polarisation.
        te_.push_back(s);
        if (s.pec) break;
      }
      tm_ = te_;
      bind_body(xi, body, mats);
      return;
    }
    // xi = 0: static limits (layered.h), kappa = k in the (dielectric) medium.
    medium_.eps = medium.static_limit().static_eps;
    for (std::size_t j = 0; j < mats.size(); ++j) {
      const StaticLimit sl = mats[j]->static_limit();
      Slab s;
      s.thickness = thick[j];
      switch (sl.kind) {
        case StaticClass::kDielectric:
          s.eps = sl.static_eps;
          break;
        case StaticClass::kDrudeConductor:
          break;
        case StaticClass::kPlasmaConductor:
          s.q2_te = sl.plasma_wavenumber_sq;
          break;
        case StaticClass::kPerfectConductor:
          s.pec = true;
          break;
      }
      if (te_.empty() || !te_.back().pec) te_.push_back(s);
      if (tm_.empty() || !tm_.back().pec) {
        Slab t = s;
        // r_TM = +1 at the first conductor, and at a dielectric whose eps(0) overflowed (the
        // eps -> inf limit); its TE stays transparent (static r_TE = 0 for every dielectric).
        t.pec = sl.is_conductor() || !std::isfinite(sl.static_eps);
        tm_.push_back(t);
      }
    }
    bind_body(xi, body, mats);
  }

  Reflection reflect(double k) const override {
    Reflection b;
    if (bottom_) b = bottom_->reflect(k);
    return {recurse(te_, k, false, body_te_ ? &b.te : nullptr),
            recurse(tm_, k, true, body_tm_ ? &b.tm : nullptr)};
  }

 private:
  // The substrate is seen when no layer above it truncated the list (layers are never the body).
  void bind_body(double xi, const PlanarSurface* body, const std::vector<const Material*>& mats) {
    if (body == nullptr || mats.size() < 2) return;
    body_te_ = xi > 0.0 && te_.size() == mats.size();
    body_tm_ = tm_.size() == mats.size();
    if (body_te_ || body_tm_) bottom_ = body->at(xi, *mats[mats.size() - 2]);
  }

  // Recursive Airy formula from the bottom interface up to the medium.
  double recurse(const std::vector<Slab>& slabs, double k, bool tm, const double* bottom) const {
    const double k2 = k * k;
    const auto kappa = [&](const Slab& s) { return std::sqrt(k2 + (tm ? s.q2_tm : s.q2_te)); };
    const auto interface = [&](const Slab& a, double ka, const Slab& b, double kb) {
      if (b.pec) return tm ? 1.0 : -1.0;
      // k = 0 at xi = 0: both kappa vanish; the static ratios are k-independent (layered.h).
      // TM with both eps divided by the larger: no overflow for eps up to the double range.
      const double big = std::max(a.eps, b.eps), ea = a.eps / big, eb = b.eps / big;
      if (ka + kb == 0.0) return tm ? (eb - ea) / (eb + ea) : 0.0;
      return tm ? (eb * ka - ea * kb) / (eb * ka + ea * kb) : (ka - kb) / (ka + kb);
    };
    const std::size_t n = slabs.size();
    double kb = slabs[n - 1].pec ? 0.0 : kappa(slabs[n - 1]);
    if (n == 1) return interface(medium_, kappa(medium_), slabs[0], kb);
    // Bottom interface: slab n-2 over slab n-1.
    double ka = kappa(slabs[n - 2]);
    double R = bottom ? *bottom : interface(slabs[n - 2], ka, slabs[n - 1], kb);
    for (std::size_t j = n - 1; j-- > 0;) {
      const Slab& above = j == 0 ? medium_ : slabs[j - 1];
      const double kj = ka;
      const double kup = kappa(above);
      const double r = interface(above, kup, slabs[j], kj);
      const double e = std::exp(-2.0 * kj * slabs[j].thickness);
      // A perfect reflector (|r| = 1) hides R; this also avoids 0/0 when r R e = -1.
      R = std::abs(r) == 1.0 ? r : (r + R * e) / (1.0 + r * R * e);
      ka = kup;
    }
    return R;
  }

  Slab medium_;
  std::vector<Slab> te_, tm_;  // slabs from the gap side, truncated at the first reflector
  std::unique_ptr<PlanarAtFrequency> bottom_;  // nonlocal substrate seen from the last layer
  bool body_te_ = false, body_tm_ = false;
};

class Layered final : public PlanarSurface {
 public:
  Layered(std::vector<Layer> layers, MaterialPtr substrate, PlanarPtr body = nullptr)
      : layers_(std::move(layers)), substrate_(std::move(substrate)), body_(std::move(body)) {}
  std::unique_ptr<PlanarAtFrequency> at(double xi, const Material& medium) const override {
    return std::make_unique<LayeredAt>(xi, layers_, *substrate_, medium, body_.get());
  }
  std::string describe() const override {
    std::string s;
    for (const auto& l : layers_)
      s += fmt::format("{} nm {} on ", l.thickness * 1e9, l.material->name());
    return s + (body_ ? body_->describe() : fmt::format("half-space of {}", substrate_->name()));
  }
  bool is_perfect_conductor() const override {
    return layers_.empty() ? substrate_->is_perfect_conductor()
                           : layers_.front().material->is_perfect_conductor();
  }

 private:
  std::vector<Layer> layers_;
  MaterialPtr substrate_;
  PlanarPtr body_;
};

void check_layers(const std::vector<Layer>& layers) {
  for (std::size_t j = 0; j < layers.size(); ++j) {
    if (!layers[j].material)
      throw std::invalid_argument(fmt::format("make_layered: layer {} material is null", j));
    if (!(layers[j].thickness > 0.0) || !std::isfinite(layers[j].thickness))
      throw std::invalid_argument(fmt::format("make_layered: layer {} thickness = {} m must be > 0",
                                              j, layers[j].thickness));
  }
}

}  // namespace

PlanarPtr make_layered(std::vector<Layer> layers, MaterialPtr substrate) {
  if (!substrate) throw std::invalid_argument("make_layered: substrate material is null");
  check_layers(layers);
  if (layers.empty()) return make_half_space(std::move(substrate));
  return std::make_shared<Layered>(std::move(layers), std::move(substrate));
}

PlanarPtr make_layered_on_hydrodynamic(std::vector<Layer> layers, MaterialPtr metal, double beta) {
  PlanarPtr body = make_hydrodynamic(metal, beta);  // validates metal and beta
  check_layers(layers);
  if (layers.empty()) return body;
  return std::make_shared<Layered>(std::move(layers), std::move(metal), std::move(body));
}

}  // namespace roundtrip
