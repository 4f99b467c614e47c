#pragma once
// How a geometry's results are normalised, a property of the geometry kind (not a flag):
//   kTotal      compact bodies (sphere-plate, sphere-sphere): E in J, F in N, F' = dF/dL in N/m;
//   kPerArea    infinite planar or periodic bodies (plates, gratings): J/m^2, Pa, Pa/m;
//   kPerLength  bodies infinite along one axis (cylinders): J/m, N/m, N/m^2.
// The spectral function s(xi) = sum_b log det(1 - M_b) then carries 1, 1/m^2 or 1/m.
#include <optional>
#include <string>
#include <string_view>

namespace roundtrip {

enum class ResultScale { kTotal, kPerArea, kPerLength };

/// SI unit strings of the results of one scale (HDF5 `units` attributes, table headers).
struct ScaleUnits {
  std::string energy, force, gradient;   ///< J, N, N/m and the like
  std::string spectral;                  ///< of s(xi): "1", "1/m^2", "1/m"
  std::string spectral_d1, spectral_d2;  ///< of ds/dL and d2s/dL2
  std::string phrase;                    ///< "per unit area" and the like ("" for kTotal)
};

ScaleUnits scale_units(ResultScale s);
/// "total", "per_area", "per_length" (the HDF5 attribute result_scale).
std::string to_string(ResultScale s);
std::optional<ResultScale> result_scale_from_string(std::string_view s);

}  // namespace roundtrip
