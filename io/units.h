#pragma once
// Physical quantities in case files: a number followed by a unit, converted to SI.
//
// Accepted units (case-sensitive; space between number and unit optional):
//   length       m, cm, mm, um, µm (U+00B5 or U+03BC), nm, pm, Å -> metres
//   temperature  K, mK                                           -> kelvin
//   frequency    rad/s; eV, meV (photon energy, xi = E / hbar);
//                Hz, kHz, MHz, GHz, THz, PHz (cycles: xi = 2 pi f) -> rad/s
//   dimensionless  a bare TOML number (or a string holding only a number)
// Dimensional quantities must carry their unit: a bare number is an error, so that "units are
// explicit at every boundary" holds. NaN and infinities are rejected everywhere.
#include <toml++/toml.h>

#include <string>
#include <string_view>

#include "io/errors.h"

namespace roundtrip::io {

enum class Dimension { kLength, kTemperature, kFrequency, kDimensionless };
std::string to_string(Dimension d);
/// SI unit name of a dimension ("m", "K", "rad/s", "1").
std::string si_unit(Dimension d);

/// Parse a TOML value (string with unit, or number for kDimensionless) into SI. `field` is the
/// dotted key used in messages. Throws CaseError naming file:line, field and value.
double parse_quantity(const toml::node& node, Dimension dim, const std::string& field);

/// Same for a plain string (e.g. a CLI option); messages name `field` and the text, no line.
double parse_quantity_string(std::string_view text, Dimension dim, const std::string& field);

/// `s` with control characters (C0 other than tab, DEL, C1) written as \uXXXX and bytes that
/// are not UTF-8 as \xNN, so that user text echoed in messages cannot drive the terminal.
std::string printable(std::string_view s);
/// "file:line" (or "line N", or "" when unknown) for messages.
std::string location(const toml::source_region& where);
/// The node's value as written in TOML, for messages, through printable() and shortened ("\"150
/// nm\"", "1e-6", "[...]").
std::string value_text(const toml::node& node);
/// A CaseError "<file>:<line>: <field> = <value>: <what>".
CaseError error_at(const toml::node& node, const std::string& field, const std::string& what);

/// `text` (a solver's description, SI lengths printed as "<number> m") with each such length
/// in the unit the case file wrote it in: "R = 1e-05 m" becomes "R = 10 um" when the case says
/// radius = "10 um" (a written length equal to 6 significant digits). Lengths the case did not
/// write take nm, um or mm by size (below 1 um, 1 mm, 1 m); 0 and lengths from 1 m up stay in m.
std::string lengths_in_case_units(const std::string& text, const std::string& case_text);

}  // namespace roundtrip::io
