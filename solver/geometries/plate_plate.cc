// Plate-plate Lifshitz integrand (formulas, conventions and sources in plate_plate.h).
#include "solver/geometries/plate_plate.h"

#include <fmt/format.h>

#include <array>
#include <cmath>
#include <stdexcept>

#include "solver/constants.h"
#include "solver/materials/models.h"
#include "solver/planar/electrolyte.h"
#include "solver/special/polylog.h"

namespace roundtrip {
namespace {

using Triple = std::array<double, 3>;

// \int_0^inf f(y) dy for f decaying at least like e^{-y}, by the exp-sinh rule
// y = exp((pi/2) sinh t) on t in [-4, 2] (y from 2.4e-19 to 298), step halved from 1/2 until two
// successive levels agree to tol relative to \int |f| for each of the first n components.
template <class F>
Triple de_integrate(F&& f, int n, double tol) {
  constexpr double kTLeft = -4.0, kTRight = 2.0, kH0 = 0.5;
  constexpr int kMinLevel = 2;  // compare h = 1/8 with h = 1/4 at least
  constexpr int kMaxLevel = 8;  // h = 1/512
  Triple sum{}, abs{};
  auto add = [&](double t) {
    const double y = std::exp(0.5 * kPi * std::sinh(t));
    const double w = y * 0.5 * kPi * std::cosh(t);
    const Triple v = f(y);
    for (int c = 0; c < n; ++c) {
      sum[c] += w * v[c];
      abs[c] += w * std::abs(v[c]);
    }
  };
  double h = kH0;
  const int n0 = static_cast<int>(std::lround((kTRight - kTLeft) / kH0));
  for (int j = 0; j <= n0; ++j) add(kTLeft + j * kH0);
  Triple prev{};
  for (int c = 0; c < n; ++c) prev[c] = h * sum[c];
  int intervals = n0;
  for (int level = 1; level <= kMaxLevel; ++level) {
    for (int i = 0; i < intervals; ++i) add(kTLeft + (i + 0.5) * h);
    intervals *= 2;
    h *= 0.5;
    bool ok = true;
    for (int c = 0; c < n; ++c) {
      const double cur = h * sum[c];
      if (!(std::abs(cur - prev[c]) <= tol * h * abs[c])) ok = false;
      prev[c] = cur;
    }
    if (ok && level >= kMinLevel) break;
  }
  return prev;
}

// ln(1 - rho), rho/(1 - rho) and 1/(1 - rho) for rho = R e, e = e^{-x}, R <= 1, without
// cancellation near rho = 1: 1 - rho = (1 - R) - R expm1(-x).
struct LogTerm {
  double rho = 0.0, log = 0.0, inv = 1.0;  // inv = 1/(1 - rho)
};
LogTerm log_term(double R, double e, double em1) {
  LogTerm t;
  t.rho = R * e;
  if (t.rho == 0.0) return t;
  const double om = R > 0.0 ? (1.0 - R) - R * em1 : 1.0 - t.rho;
  t.log = t.rho < 0.5 ? std::log1p(-t.rho) : std::log(om);
  t.inv = 1.0 / om;
  return t;
}

void check_point(double xi, double gap) {
  if (!std::isfinite(gap) || !(gap > 0.0))
    throw std::invalid_argument(fmt::format("plate-plate: gap = {} m must be finite and > 0", gap));
  if (!std::isfinite(xi) || !(xi >= 0.0))
    throw std::invalid_argument(
        fmt::format("plate-plate: xi = {} rad/s must be finite and >= 0", xi));
}

}  // namespace

PlatePlate::PlatePlate(PlanarPtr a, PlanarPtr b, MaterialPtr medium, double k_rel_tol)
    : a_(std::move(a)),
      b_(std::move(b)),
      medium_(medium ? std::move(medium) : make_vacuum()),
      k_rel_tol_(k_rel_tol) {
  if (!a_ || !b_) throw std::invalid_argument("plate-plate: both planar bodies must be given");
  if (medium_->static_limit().is_conductor())
    throw std::invalid_argument(
        fmt::format("plate-plate: medium '{}' is a conductor; the gap medium must be a dielectric",
                    medium_->name()));
  if (!(k_rel_tol_ >= 1e-15 && k_rel_tol_ <= 1e-3))
    throw std::invalid_argument(
        fmt::format("plate-plate: k_rel_tol = {} must lie in [1e-15, 1e-3]", k_rel_tol_));
}

PlatePlate::PlatePlate(PlanarPtr a, PlanarPtr b, MaterialPtr medium, double kappa_ion,
                       double k_rel_tol)
    : PlatePlate(std::move(a), std::move(b), std::move(medium), k_rel_tol) {
  if (!(kappa_ion >= 0.0))
    throw std::invalid_argument(
        fmt::format("plate-plate: the medium's Debye constant {} 1/m must be >= 0", kappa_ion));
  kappa_ion_ = kappa_ion;
}

namespace {

// Which polarisations a pass of the driver takes, and whether TM is screened by ions.
enum class Pass { kBoth, kTeOnly, kScreenedTm };

// One pass: x = 2 kappa L from x0 (kappa the decay constant of the pass), k = sqrt(y (y + 2 x0))
// / (2L) with y = x - x0.
template <class G>
Triple plate_pass(const PlanarAtFrequency& ra, const PlanarAtFrequency& rb, double x0, double gap,
                  int n, double tol, Pass pass, G&& g) {
  const double e0 = std::exp(-x0);
  if (e0 == 0.0) return Triple{};  // e^{-2 kappa L} underflows for every k
  auto f = [&](double y) {
    const double x = x0 + y;
    // The measure x dx vanishes at x = 0, where ln(1 - rho) may be -inf for rho -> 1 (conductor
    // TM at xi -> 0): take the limit, not 0 * inf.
    if (x == 0.0) return Triple{};
    const double k = std::sqrt(y * (y + 2.0 * x0)) / (2.0 * gap);
    const Reflection pa = ra.reflect(k), pb = rb.reflect(k);
    const double e = e0 * std::exp(-y);
    const double em1 = std::expm1(-x);  // e - 1, accurate for small x
    switch (pass) {
      case Pass::kTeOnly:
        return g(x, log_term(pa.te * pb.te, e, em1), LogTerm{});
      case Pass::kScreenedTm: {
        const double q = x / (2.0 * gap);
        return g(
            x, LogTerm{},
            log_term(screened_static_tm(pa.tm, k, q) * screened_static_tm(pb.tm, k, q), e, em1));
      }
      case Pass::kBoth:
        break;
    }
    return g(x, log_term(pa.te * pb.te, e, em1), log_term(pa.tm * pb.tm, e, em1));
  };
  return de_integrate(f, n, tol);
}

// Shared driver: calls g(x, terms) for each node with the two polarisations' LogTerms. With ions
// (kappa_ion > 0) the xi = 0 term is a TE pass in k plus a screened TM pass in q (plate_plate.h).
template <class G>
Triple plate_integral(const PlanarSurface& a, const PlanarSurface& b, const Material& medium,
                      double xi, double gap, int n, double tol, double kappa_ion, G&& g) {
  const auto ra = a.at(xi, medium);
  const auto rb = b.at(xi, medium);
  if (xi == 0.0 && kappa_ion > 0.0) {
    const Triple te = plate_pass(*ra, *rb, 0.0, gap, n, tol, Pass::kTeOnly, g);
    const Triple tm =
        plate_pass(*ra, *rb, 2.0 * gap * kappa_ion, gap, n, tol, Pass::kScreenedTm, g);
    return {te[0] + tm[0], te[1] + tm[1], te[2] + tm[2]};
  }
  const double eps_m = xi > 0.0 ? medium.epsilon(xi) : medium.static_limit().static_eps;
  const double x0 = 2.0 * gap * std::sqrt(eps_m) * xi / kSpeedOfLight;
  return plate_pass(*ra, *rb, x0, gap, n, tol, Pass::kBoth, g);
}

}  // namespace

Spectral PlatePlate::at_frequency(double xi, double gap, DerivativeOrder order) const {
  check_point(xi, gap);
  const int n = 1 + static_cast<int>(order);
  // x dx [ln(1-rho), x rho/(1-rho), -x^2 rho/(1-rho)^2] summed over TE, TM.
  auto g = [](double x, const LogTerm& te, const LogTerm& tm) {
    return Triple{x * (te.log + tm.log), x * x * (te.rho * te.inv + tm.rho * tm.inv),
                  -x * x * x * (te.rho * te.inv * te.inv + tm.rho * tm.inv * tm.inv)};
  };
  const Triple I = plate_integral(*a_, *b_, *medium_, xi, gap, n, k_rel_tol_, kappa_ion_, g);
  // k dk = kappa dkappa = x dx / (4 L^2); prefactor 1/(2 pi) -> 1/(8 pi L^2); 2 kappa = x/L.
  const double p = 1.0 / (8.0 * kPi * gap * gap);
  return {p * I[0], p * I[1] / gap, p * I[2] / (gap * gap)};
}

Spectral PlatePlate::integrated_at_frequency(double xi, double gap, DerivativeOrder order) const {
  check_point(xi, gap);
  const int n = 1 + static_cast<int>(order);
  // dx [-Li2(rho)], x dx ln(1-rho), x^2 dx rho/(1-rho), summed over TE, TM.
  auto g = [](double x, const LogTerm& te, const LogTerm& tm) {
    return Triple{-(special::dilog(te.rho) + special::dilog(tm.rho)), x * (te.log + tm.log),
                  x * x * (te.rho * te.inv + tm.rho * tm.inv)};
  };
  const Triple I = plate_integral(*a_, *b_, *medium_, xi, gap, n, k_rel_tol_, kappa_ion_, g);
  // (1/2pi) k dk / (2 kappa) = dkappa / (4 pi) = dx / (8 pi L).
  const double p = 1.0 / (8.0 * kPi * gap);
  return {p * I[0], -p * I[1] / gap, -p * I[2] / (gap * gap)};
}

double PlatePlate::frequency_scale(double gap) const {
  const StaticLimit m = medium_->static_limit();
  const double eps0 = m.static_eps >= 1.0 ? m.static_eps : 1.0;
  return kSpeedOfLight / (2.0 * gap * std::sqrt(eps0));
}

std::string PlatePlate::describe() const {
  const std::string ions =
      kappa_ion_ > 0.0 ? fmt::format(" with ions (Debye length {:.4g} nm)", 1e9 / kappa_ion_) : "";
  return fmt::format("plate-plate: {} and {} across {}{}", a_->describe(), b_->describe(),
                     medium_->name(), ions);
}

std::map<std::string, double> PlatePlate::truncation(double) const {
  return {{"k_rel_tol", k_rel_tol_}};
}

std::shared_ptr<Geometry> make_plate_plate(PlanarPtr a, PlanarPtr b, MaterialPtr medium,
                                           double kappa_ion) {
  return std::make_shared<PlatePlate>(std::move(a), std::move(b), std::move(medium), kappa_ion,
                                      1e-13);
}

}  // namespace roundtrip
