#pragma once
// Physical constants in SI units, CODATA 2018 (exact where the 2019 SI defines them).
//
// Internal unit choice, used everywhere in solver/: lengths in metres, imaginary frequencies
// xi in rad/s, transverse wave numbers k in 1/m, energies in J, temperatures in K. Geometries may
// rescale internally (e.g. to units of the gap) but every public function takes and returns SI.
namespace roundtrip {

inline constexpr double kPi = 3.141592653589793238462643383279502884;
inline constexpr double kHbar = 1.054571817e-34;         // J s (exact: h / 2pi)
inline constexpr double kSpeedOfLight = 299792458.0;     // m/s (exact)
inline constexpr double kBoltzmann = 1.380649e-23;       // J/K (exact)
inline constexpr double kElementaryCharge = 1.602176634e-19;  // C (exact)
inline constexpr double kHbarC = kHbar * kSpeedOfLight;  // J m
/// Angular frequency of one electron-volt: (1 eV)/hbar, rad/s.
inline constexpr double kRadPerSecondPerEv = kElementaryCharge / kHbar;
inline constexpr double kZeta3 = 1.202056903159594285399738161511449990;  // Apery's constant

/// Matsubara frequency xi_n = 2 pi n k_B T / hbar (rad/s).
inline constexpr double matsubara_frequency(int n, double temperature_K) {
  return 2.0 * kPi * n * kBoltzmann * temperature_K / kHbar;
}

}  // namespace roundtrip
