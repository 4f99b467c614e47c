#pragma once
// Units for printed tables, CSV exports and measured-data files (`--units`, `roundtrip compare`):
// forces, energies, pressures, lengths and their ratios, with SI prefixes, parsed into a factor
// and a dimension (exponents of kg, m, s), so that "pN/nm" matches a column in N/m and
// "mPa" one in Pa. SI inside: a value in the unit is value_SI / factor.
//
// Accepted: [prefix]base[/[prefix]m[^2|^3]] with base N, J, Pa, eV (energy, 1.602176634e-19 J,
// SI 2019 exact), m; prefixes k, m, u, µ (U+00B5 or U+03BC), n, p, f, a, z; "cm" for lengths;
// kBT (also k_BT): the thermal energy k_B T at the run's temperature (k_B = 1.380649e-23 J/K,
// SI 2019 exact), only where T > 0 is known.
#include <string>
#include <string_view>
#include <vector>

namespace roundtrip::io {

/// Exponents of kg, m, s.
struct Dimension3 {
  int mass = 0, length = 0, time = 0;
  bool operator==(const Dimension3&) const = default;
};

struct OutputUnit {
  std::string name;   ///< as the user wrote it (e.g. "pN/nm")
  double factor = 1;  ///< SI value of one unit (pN/nm: 1e-3 N/m)
  Dimension3 dim;     ///< kg^a m^b s^c
};

/// Parse a unit. `temperature_K` is used for kBT (<= 0: kBT is an error). Throws CaseError
/// naming `field` and the text.
OutputUnit parse_output_unit(std::string_view text, const std::string& field,
                             double temperature_K = 0.0);
/// The SI dimension of a `units` attribute such as "N/m", "J/m^2", "Pa/m", "m"; false if it is
/// none of these forms.
bool dimension_of_si(std::string_view si_units, Dimension3& dim);
/// "force (kg m s^-2)" and the like, for messages.
std::string dimension_text(const Dimension3& d);

/// A comma-separated list "pN, pN/nm, kBT" (each parsed as above; empty items are errors).
std::vector<OutputUnit> parse_unit_list(std::string_view text, const std::string& field,
                                        double temperature_K = 0.0);

/// The unit of `list` whose dimension is that of `si_units` (nullptr if none); two units of one
/// dimension are an error (CaseError naming `field`).
const OutputUnit* unit_for(const std::vector<OutputUnit>& list, std::string_view si_units,
                           const std::string& field);

}  // namespace roundtrip::io
