// Atomic polarizabilities (conventions and units in polarizability.h).
#include "solver/atoms/polarizability.h"

#include <fmt/format.h>

#include <boost/math/quadrature/exp_sinh.hpp>
#include <cmath>
#include <limits>
#include <stdexcept>
#include <utility>

#include "solver/constants.h"

namespace roundtrip {
namespace {

std::string volume_text(double a) {
  return fmt::format("{:.6g} m^3 ({:.6g} a.u.)", a, a / kBohrVolume);
}

class ConstantPolarizability final : public Polarizability {
 public:
  explicit ConstantPolarizability(double a) : a_(a) {}
  double alpha(double) const override { return a_; }
  double characteristic_frequency() const override {
    return std::numeric_limits<double>::infinity();
  }
  std::string name() const override { return "constant"; }
  std::string description() const override {
    return "constant, alpha = " + volume_text(a_) + " at every frequency";
  }

 private:
  double a_;
};

class OscillatorPolarizability final : public Polarizability {
 public:
  OscillatorPolarizability(std::vector<AtomOscillator> o, std::string name, std::string source)
      : o_(std::move(o)), name_(std::move(name)), source_(std::move(source)) {}
  double alpha(double xi) const override {
    double s = 0.0;
    for (const auto& t : o_) {
      const double r = xi / t.frequency;  // a w^2/(w^2 + xi^2) = a/(1 + (xi/w)^2), no overflow
      s += t.strength / (1.0 + r * r);
    }
    return s;
  }
  double characteristic_frequency() const override {
    double w = std::numeric_limits<double>::infinity();
    for (const auto& t : o_)
      if (t.strength > 0.0) w = std::min(w, t.frequency);
    return w;
  }
  std::string name() const override { return name_; }
  std::string description() const override {
    std::string d = fmt::format("oscillators, alpha(0) = {}:", volume_text(alpha(0.0)));
    for (std::size_t i = 0; i < o_.size(); ++i)
      d += fmt::format("{} {:.6g} a.u. at {:.6g} eV", i == 0 ? "" : ",",
                       o_[i].strength / kBohrVolume, o_[i].frequency / kRadPerSecondPerEv);
    return d;
  }
  std::string source() const override { return source_; }

 private:
  std::vector<AtomOscillator> o_;
  std::string name_, source_;
};

// Hydrogen 1s, atomic units (lengths a_0, frequencies E_h/hbar). Oscillator strengths of the
// Lyman series f_n = 2^8 n^5 (n-1)^{2n-4} / (3 (n+1)^{2n+4}) at omega_n = (1 - 1/n^2)/2, and the
// continuum df/domega = (2^8/3) exp(-4 arctan(k)/k) / ((1 + k^2)^4 (1 - exp(-2 pi/k))) at
// omega = (1 + k^2)/2 (k the photoelectron momentum): standard (Bethe & Salpeter, Quantum
// Mechanics of One- and Two-Electron Atoms (1957), §§ 69-71; from memory). Checked in
// tests/atoms by the sum rules S(0) = 1 (Thomas-Reiche-Kuhn), S(-1) = (2/3)<r^2> = 2,
// S(1) = (2/3)<p^2> = 2/3 and S(-2) = alpha(0) = 9/2 (standard).
constexpr int kLymanTerms = 4000;  // discrete tail beyond: f_n ~ C n^-3, error O(N^-3) ~ 1e-11

struct Lyman {
  std::vector<double> f, w;
};
const Lyman& lyman() {
  static const Lyman l = [] {
    Lyman t;
    for (int n = 2; n <= kLymanTerms; ++n) {
      t.f.push_back(hydrogen_discrete_strength(n));
      t.w.push_back(0.5 * (1.0 - 1.0 / (double(n) * n)));
    }
    return t;
  }();
  return l;
}

// sum_n f_n g(omega_n) + \int (df/domega) g(omega) domega for a smooth weight g.
template <class G>
double hydrogen_spectral_sum(G&& g) {
  const Lyman& l = lyman();
  double s = 0.0;
  for (std::size_t i = l.f.size(); i-- > 0;) s += l.f[i] * g(l.w[i]);
  // Tail n > N: f_n -> C n^-3, C = 2^8 e^-4 / 3, omega_n -> 1/2; sum_{n>N} n^-3 ~ 1/(2 N^2).
  const double c = 256.0 * std::exp(-4.0) / 3.0;
  s += g(0.5) * c / (2.0 * double(kLymanTerms) * (kLymanTerms + 0.5));
  boost::math::quadrature::exp_sinh<double> rule;
  const double cont = rule.integrate(
      [&](double k) {
        const double w = 0.5 * (1.0 + k * k);
        return hydrogen_continuum_density(k) * g(w) * k;  // domega = k dk
      },
      1e-12);
  return s + cont;
}

class HydrogenPolarizability final : public Polarizability {
 public:
  double alpha(double xi) const override {
    const double x = xi / kHartreeFrequency;
    if (!(x < 1e6)) {
      // alpha -> S(0)/xi^2 (f-sum rule) beyond every transition that matters.
      return kBohrVolume / (x * x);
    }
    return kBohrVolume * hydrogen_spectral_sum([x](double w) { return 1.0 / (w * w + x * x); });
  }
  double characteristic_frequency() const override { return 0.375 * kHartreeFrequency; }
  std::string name() const override { return "hydrogen"; }
  std::string description() const override {
    return "hydrogen 1s, exact sum over the Lyman series and continuum, alpha(0) = 9/2 a.u. = " +
           fmt::format("{:.6g} m^3", 4.5 * kBohrVolume);
  }
  std::string source() const override {
    return "exact non-relativistic spectrum: Bethe & Salpeter, Quantum Mechanics of One- and "
           "Two-Electron Atoms (1957), §§ 69-71 (oscillator strengths from memory; checked by "
           "the sum rules S(0) = 1, S(-1) = 2, S(-2) = 9/2)";
  }
};

}  // namespace

double hydrogen_discrete_strength(int n) {
  const double dn = n;
  const double lf = 8.0 * std::log(2.0) + 5.0 * std::log(dn) +
                    (2.0 * dn - 4.0) * std::log(dn - 1.0) - std::log(3.0) -
                    (2.0 * dn + 4.0) * std::log(dn + 1.0);
  return std::exp(lf);
}

double hydrogen_continuum_density(double k) {
  if (!(k > 0.0)) return 256.0 / 3.0 * std::exp(-4.0);  // k -> 0: arctan(k)/k -> 1
  const double k2 = 1.0 + k * k;
  return 256.0 / 3.0 * std::exp(-4.0 * std::atan(k) / k) / (k2 * k2 * k2 * k2) /
         (-std::expm1(-2.0 * kPi / k));
}

double hydrogen_sum_rule(int p) {
  return hydrogen_spectral_sum([p](double w) { return std::pow(w, p); });
}

PolarizabilityPtr make_constant_polarizability(double alpha_m3) {
  if (!(alpha_m3 > 0.0) || !std::isfinite(alpha_m3))
    throw std::invalid_argument(fmt::format("alpha = {} m^3: must be finite and > 0", alpha_m3));
  return std::make_shared<ConstantPolarizability>(alpha_m3);
}

PolarizabilityPtr make_oscillator_polarizability(std::vector<AtomOscillator> oscillators,
                                                 std::string name, std::string source) {
  if (oscillators.empty()) throw std::invalid_argument("at least one oscillator is needed");
  double total = 0.0;
  for (const auto& o : oscillators) {
    if (!(o.strength >= 0.0) || !std::isfinite(o.strength))
      throw std::invalid_argument(
          fmt::format("strength = {} m^3: must be finite and >= 0", o.strength));
    if (!(o.frequency > 0.0) || !std::isfinite(o.frequency))
      throw std::invalid_argument(
          fmt::format("frequency = {} rad/s: must be finite and > 0", o.frequency));
    total += o.strength;
  }
  if (!(total > 0.0)) throw std::invalid_argument("the strengths add up to 0 (no polarizability)");
  return std::make_shared<OscillatorPolarizability>(std::move(oscillators), std::move(name),
                                                    std::move(source));
}

std::vector<std::string> builtin_species() { return {"hydrogen", "helium", "rubidium"}; }

PolarizabilityPtr builtin_polarizability(const std::string& species) {
  constexpr double au = kBohrVolume, w_au = kHartreeFrequency;
  if (species == "hydrogen") return std::make_shared<HydrogenPolarizability>();
  if (species == "helium")
    // Single oscillator: alpha(0) = 1.383 a.u. (standard; accurate value 1.38319 a.u.) and
    // omega = 4 C6 / (3 alpha(0)^2) = 1.018 a.u. from the He-He C6 = 1.461 a.u. (London's
    // one-oscillator relation C6 = (3/4) omega alpha(0)^2; C6 from memory).
    return make_oscillator_polarizability(
        {{1.383 * au, 1.018 * w_au}}, "helium",
        "one oscillator: alpha(0) = 1.383 a.u. (standard), omega from the He-He C6 = 1.461 a.u. "
        "by London's relation (from memory)");
  if (species == "rubidium")
    // Valence 5s -> 5p (D lines, centroid 0.0580 a.u. = 1.579 eV) carrying alpha(0) - alpha_core
    // = 309.7 a.u., and the Rb+ core 9.1 a.u. at about 1 a.u.; alpha(0) = 318.8 a.u. (Holmgren
    // et al., PRA 81, 053607 (2010); core after Johnson et al.; values from memory).
    return make_oscillator_polarizability(
        {{309.7 * au, 0.0580 * w_au}, {9.1 * au, 1.0 * w_au}}, "rubidium",
        "two oscillators: 5s-5p D-line centroid with alpha(0) = 318.8 a.u. (Holmgren et al., PRA "
        "81, 053607 (2010)) less the core 9.1 a.u. at ~1 a.u. (values from memory)");
  return nullptr;
}

}  // namespace roundtrip
