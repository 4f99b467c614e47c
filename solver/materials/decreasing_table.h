#pragma once
// CSV tables of a response on the imaginary frequency axis that is positive and does not
// increase with xi (an atom's alpha(i xi), a sheet's sigma(i xi): sums of positive terms
// f/(w^2 + xi^2) or D/(xi + gamma); standard), read for solver/atoms and solver/planar.
//
// Format: '#' comments; a header naming two comma-separated columns (the allowed names with
// their factor to SI are the caller's); then rows "xi, value" with xi = 0 on the first row,
// xi strictly increasing, value > 0 and not larger than on the row before. Every violation is an
// InputError "file:line: column = value: what is wrong".
#include <filesystem>
#include <string>
#include <utility>
#include <vector>

namespace roundtrip {

struct DecreasingTable {
  std::vector<double> xi;     ///< rad/s, xi[0] = 0, increasing
  std::vector<double> value;  ///< SI, > 0, non-increasing
  std::string origin;         ///< file name
};

using ColumnUnits = std::vector<std::pair<std::string, double>>;  ///< header name, factor to SI

/// `what` names the quantity in messages ("polarizability", "sheet conductivity").
DecreasingTable read_decreasing_csv(const std::filesystem::path& path,
                                    const ColumnUnits& xi_columns, const ColumnUnits& value_columns,
                                    const std::string& what);

}  // namespace roundtrip
