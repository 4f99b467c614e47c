#pragma once
// Material seam: the dielectric function on the imaginary frequency axis.
//
// epsilon(xi) is eps(i xi) for xi > 0 (rad/s), real and >= 1 for passive media (it decreases
// monotonically to 1 as xi -> inf; Landau & Lifshitz, Electrodynamics of Continuous Media, §123).
// The xi = 0 value is never obtained by evaluating at a tiny xi: static() says how the material
// behaves there, and planar/sphere responses take their exact zero-frequency limits from it.
// Magnetic permeability is 1 throughout.
#include <memory>
#include <string>

namespace roundtrip {

/// How eps(i xi) behaves as xi -> 0.
enum class StaticClass {
  kDielectric,        ///< eps(0) finite: static_eps.
  kDrudeConductor,    ///< eps ~ 1/xi: xi^2 eps -> 0, no static TE response (Drude-like).
  kPlasmaConductor,   ///< xi^2 eps -> omega_p^2: static TE response with k_p^2 = omega_p^2 / c^2.
  kPerfectConductor,  ///< eps = inf at every frequency.
};

struct StaticLimit {
  StaticClass kind = StaticClass::kDielectric;
  double static_eps = 1.0;           ///< eps(0) for kDielectric.
  double plasma_wavenumber_sq = 0.0; ///< lim xi^2 eps(i xi)/c^2 in 1/m^2 for kPlasmaConductor.
  bool is_conductor() const { return kind != StaticClass::kDielectric; }
};

class Material {
 public:
  virtual ~Material() = default;
  /// eps(i xi) for xi > 0 in rad/s. Perfect conductors return +inf.
  virtual double epsilon(double xi) const = 0;
  virtual StaticLimit static_limit() const = 0;
  /// Short identifier, e.g. "gold-drude".
  virtual std::string name() const = 0;
  /// One line: model and parameters with units, e.g. "Drude, omega_p = 9 eV, gamma = 35 meV".
  virtual std::string description() const = 0;
  /// Where the parameters come from (citation), or "user defined".
  virtual std::string source() const { return "user defined"; }
  bool is_perfect_conductor() const {
    return static_limit().kind == StaticClass::kPerfectConductor;
  }
};

using MaterialPtr = std::shared_ptr<const Material>;

}  // namespace roundtrip
