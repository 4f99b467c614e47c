#pragma once
// [offsets]: lateral offsets b of the upper body of kinds that read them (GeometryKind::offsets,
// e.g. grating-grating), written like [separations]:
//   values = ["0 nm", "50 nm"]            a list, or
//   from = "0 nm", to = "200 nm", count = 9 (spacing "linear" only)
// Lengths with units; any finite b with |b| <= 1 m (0 and negative values allowed: the geometry
// is periodic in b). Errors name file:line, the dotted key and the value.
#include <toml++/toml.h>

#include <string>
#include <vector>

namespace roundtrip::io {

struct OffsetsSpec {
  std::vector<double> values;      ///< m, in the order given
  std::vector<std::string> texts;  ///< each as written ("50 nm"), or formatted for a range
};

/// Reads an [offsets] table (throws CaseError).
OffsetsSpec parse_offsets(const toml::table& t);

}  // namespace roundtrip::io
