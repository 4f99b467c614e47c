#include "solver/result_scale.h"

namespace roundtrip {

ScaleUnits scale_units(ResultScale s) {
  switch (s) {
    case ResultScale::kTotal:
      return {"J", "N", "N/m", "1", "1/m", "1/m^2", ""};
    case ResultScale::kPerArea:
      return {"J/m^2", "Pa", "Pa/m", "1/m^2", "1/m^3", "1/m^4", "per unit area"};
    case ResultScale::kPerLength:
      return {"J/m", "N/m", "N/m^2", "1/m", "1/m^2", "1/m^3", "per unit length"};
  }
  return {};
}

std::string to_string(ResultScale s) {
  switch (s) {
    case ResultScale::kTotal:
      return "total";
    case ResultScale::kPerArea:
      return "per_area";
    case ResultScale::kPerLength:
      return "per_length";
  }
  return "?";
}

std::optional<ResultScale> result_scale_from_string(std::string_view s) {
  for (auto k : {ResultScale::kTotal, ResultScale::kPerArea, ResultScale::kPerLength})
    if (to_string(k) == s) return k;
  return std::nullopt;
}

}  // namespace roundtrip
