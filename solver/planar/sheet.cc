// Conducting sheet on a substrate (formulas and conventions in sheet.h).
#include "solver/planar/sheet.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include "solver/constants.h"
#include "solver/materials/decreasing_table.h"

namespace roundtrip {
namespace {

constexpr double kMu0 = 1.0 / (kVacuumPermittivity * kSpeedOfLight * kSpeedOfLight);

class SheetAt final : public PlanarAtFrequency {
 public:
  SheetAt(double xi, const SheetConductivity& s, const Material* substrate,
          const Material& medium) {
    if (substrate != nullptr && substrate->is_perfect_conductor()) {
      pec_ = true;
      return;
    }
    if (xi > 0.0) {
      const double q = xi / kSpeedOfLight;
      eps_m_ = medium.epsilon(xi);
      eps_s_ = substrate ? substrate->epsilon(xi) : eps_m_;
      km2_ = eps_m_ * q * q;
      ks2_ = eps_s_ * q * q;
      sigma_ = s.at(xi);
      xi_ = xi;
      return;
    }
    static_ = true;
    const StaticLimit sm = medium.static_limit();
    const StaticLimit ss = substrate ? substrate->static_limit() : sm;
    const bool sheet_conducts = s.conducts();
    if (sheet_conducts || ss.is_conductor()) {
      static_tm_ = 1.0;
    } else {
      const double ratio = sm.static_eps / ss.static_eps;
      static_tm_ = (1.0 - ratio) / (1.0 + ratio);
    }
    // mu_0 lim xi sigma: D for an undamped Drude sheet; 0 for a table (finite sigma(0)).
    static_te_sheet_ = !s.table && s.damping == 0.0 ? kMu0 * s.drude_weight : 0.0;
    if (ss.kind == StaticClass::kPlasmaConductor) ks2_ = ss.plasma_wavenumber_sq;
  }

  Reflection reflect(double k) const override {
    if (pec_) return {-1.0, 1.0};
    if (static_) {
      // No static TE response without a plasma-like sheet or substrate (also at k = 0).
      if (static_te_sheet_ == 0.0 && ks2_ == 0.0) return {0.0, static_tm_};
      const double ks = std::sqrt(k * k + ks2_);
      return {(k - ks - static_te_sheet_) / (k + ks + static_te_sheet_), static_tm_};
    }
    const double km = std::sqrt(k * k + km2_), ks = std::sqrt(k * k + ks2_);
    // TM: (eps_s/ks + g - eps_m/km)/(... + ...), g = sigma/(eps_0 xi), times km ks.
    const double g = sigma_ / (kVacuumPermittivity * xi_);
    const double a = eps_s_ * km + g * km * ks, b = eps_m_ * ks;
    const double h = kMu0 * sigma_ * xi_;
    return {(km - ks - h) / (km + ks + h), (a - b) / (a + b)};
  }

 private:
  bool pec_ = false, static_ = false;
  double eps_m_ = 1.0, eps_s_ = 1.0, km2_ = 0.0, ks2_ = 0.0, sigma_ = 0.0, xi_ = 0.0;
  double static_tm_ = 0.0, static_te_sheet_ = 0.0;
};

class Sheet final : public PlanarSurface {
 public:
  Sheet(SheetConductivity s, MaterialPtr substrate) : s_(s), sub_(std::move(substrate)) {}
  std::unique_ptr<PlanarAtFrequency> at(double xi, const Material& medium) const override {
    return std::make_unique<SheetAt>(xi, s_, sub_.get(), medium);
  }
  std::string describe() const override {
    return s_.describe() + (sub_ ? " on a half-space of " + sub_->name() : " (free-standing)");
  }
  bool is_perfect_conductor() const override { return sub_ && sub_->is_perfect_conductor(); }

 private:
  SheetConductivity s_;
  MaterialPtr sub_;
};

}  // namespace

double SheetConductivity::weight(double density, double mass_ratio) {
  return density * kElementaryCharge * kElementaryCharge / (mass_ratio * kElectronMass);
}

double SheetTable::at(double x) const {
  if (x >= xi.back()) return sigma.back() * (xi.back() / x);
  const auto it = std::upper_bound(xi.begin(), xi.end(), x);
  const std::size_t i = static_cast<std::size_t>(it - xi.begin());  // xi[i-1] <= x < xi[i]
  const double f = (x - xi[i - 1]) / (xi[i] - xi[i - 1]);
  return 1.0 / ((1.0 - f) / sigma[i - 1] + f / sigma[i]);
}

SheetTable read_sheet_conductivity_csv(const std::filesystem::path& path) {
  DecreasingTable d =
      read_decreasing_csv(path, {{"xi_eV", kRadPerSecondPerEv}, {"xi_rad/s", 1.0}},
                          {{"sigma_S", 1.0}, {"sigma_mS", 1e-3}}, "sheet conductivity");
  return {std::move(d.xi), std::move(d.value), std::move(d.origin)};
}

std::string SheetConductivity::describe() const {
  if (table)
    return fmt::format("conducting sheet, sigma(i xi) from table {} ({} rows, sigma(0) = {:.6g} S)",
                       table->origin, table->xi.size(), table->sigma.front());
  std::string d = "conducting sheet, sigma(i xi) = ";
  if (sigma0 > 0.0) d += fmt::format("{:.6g} S", sigma0);
  if (drude_weight > 0.0)
    d += fmt::format("{}{:.6g} S/s / (xi + {:.6g} meV)", sigma0 > 0.0 ? " + " : "", drude_weight,
                     damping / kRadPerSecondPerEv * 1e3);
  if (sigma0 == 0.0 && drude_weight == 0.0) d += "0";
  return d;
}

std::string SheetConductivity::validate() const {
  if (table) {
    const auto& x = table->xi;
    const auto& s = table->sigma;
    if (x.size() < 2 || s.size() != x.size() || x.front() != 0.0)
      return "a sigma table needs at least 2 rows, the first at xi = 0";
    for (std::size_t i = 0; i < x.size(); ++i)
      if (!(s[i] > 0.0) || !std::isfinite(s[i]) ||
          (i > 0 && (!(x[i] > x[i - 1]) || s[i] > s[i - 1])))
        return "a sigma table needs xi increasing and sigma > 0, not increasing";
  }
  if (!(sigma0 >= 0.0) || !std::isfinite(sigma0)) return "sigma_0 must be finite and >= 0";
  if (!(drude_weight >= 0.0) || !std::isfinite(drude_weight))
    return "the Drude weight must be finite and >= 0";
  if (!(damping >= 0.0) || !std::isfinite(damping)) return "the damping must be finite and >= 0";
  return {};
}

PlanarPtr make_sheet(SheetConductivity sheet, MaterialPtr substrate) {
  return std::make_shared<Sheet>(sheet, std::move(substrate));
}

}  // namespace roundtrip
