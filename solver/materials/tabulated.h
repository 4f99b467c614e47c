#pragma once
// Tabulated optical data -> eps(i xi) by the Kramers-Kronig relation on the imaginary axis
//   eps(i xi) = 1 + (2/pi) \int_0^inf omega eps''(omega) / (omega^2 + xi^2) d omega
// (Landau & Lifshitz, Electrodynamics of Continuous Media, §123; standard), omega, xi in rad/s.
//
// eps'' is taken piecewise linear in omega between the table points (integrated in closed form),
// extended below the table by a Drude term eps'' = wp^2 gamma / (omega (omega^2 + gamma^2))
// (parameters given, or fitted to the lowest points from eps' = 1 - wp^2/(omega^2+gamma^2),
// eps'' omega = gamma wp^2/(omega^2+gamma^2)) or by nothing (insulators), and above it by
// eps'' = eps''_N (omega_N/omega)^3 (free-electron asymptote; common practice). With a Drude
// extension the material is a Drude conductor at xi = 0; without, a dielectric with
// eps(0) = 1 + (2/pi) \int eps''/omega. eps(i xi) is precomputed on a log grid of xi and
// interpolated by a cubic spline in (ln xi, ln(eps - 1)); outside the grid the integral is summed
// directly. description() states the extensions and the parameters used.
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "solver/materials/material.h"

namespace roundtrip {

/// Optical constants on the real axis, ascending in omega.
struct OpticalData {
  std::vector<double> omega;  ///< rad/s, > 0, strictly increasing
  std::vector<double> eps1;   ///< Re eps
  std::vector<double> eps2;   ///< Im eps, >= 0
  std::string origin;         ///< file name or "in memory", for messages
};

/// Read a CSV table (format in optical_csv.cc / materials_readme). Throws InputError naming
/// the file and line for every malformed input.
OpticalData read_optical_csv(const std::filesystem::path& path);

enum class LowFrequencyModel { kDrude, kNone };
std::string to_string(LowFrequencyModel m);

struct KramersKronigOptions {
  LowFrequencyModel low = LowFrequencyModel::kDrude;
  std::optional<double> plasma_frequency;  ///< rad/s; both given or both fitted
  std::optional<double> damping;           ///< rad/s
  int fit_points = 3;                      ///< lowest table points used by the Drude fit
  double xi_min = 1e9;                     ///< interpolation grid, rad/s
  double xi_max = 1e20;
  int points_per_decade = 40;
};

class TabulatedMaterial final : public Material {
 public:
  /// Throws std::invalid_argument when the data or options are unusable (message says why).
  TabulatedMaterial(std::string name, OpticalData data, KramersKronigOptions options,
                    std::string source = "user defined");
  double epsilon(double xi) const override;  ///< interpolated on the grid
  /// The Kramers-Kronig integral summed at xi (no interpolation).
  double epsilon_direct(double xi) const;
  StaticLimit static_limit() const override;
  std::string name() const override { return name_; }
  std::string description() const override;
  std::string source() const override { return source_; }
  double drude_plasma_frequency() const { return wp_; }
  double drude_damping() const { return gamma_; }
  bool drude_fitted() const { return fitted_; }

 private:
  std::string name_, source_;
  OpticalData d_;
  KramersKronigOptions o_;
  double wp_ = 0.0, gamma_ = 0.0;
  bool fitted_ = false;
  double static_eps_ = 1.0;
  std::vector<double> grid_x_, grid_y_, grid_m_;  // ln xi, ln(eps-1), spline second derivatives
};

}  // namespace roundtrip
