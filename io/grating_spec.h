#pragma once
// The [grating] table -> a LamellarGrating (solver/scatterers/grating_fmm.h). One place for the
// reading of a grating's shape (as io/atom_spec.cc is for [atom]):
//   period = "400 nm"                        > 0
//   profile = "lamellar"   filling = 0.5, depth = "200 nm"  (ridges of width f period)
//           | "sinusoidal" amplitude = "50 nm"               (h = A (1 + cos 2 pi x/period))
//           | "triangular" depth = "100 nm"                  (symmetric, apex at x = 0)
//           | "table"      table = "profile.csv", table_unit = "nm"  (x, height per line)
//   material = "silicon"                     the ridges
//   substrate = "silica"                     optional; default: the ridge material
//   coating = { material = "silica", thickness = "20 nm" }  optional conformal coating
//                                            (solver/scatterers/grating_coating.h: t > 0;
//                                            lamellar 2t < (1 - f) period unless f = 0 or 1,
//                                            other profiles t < period/2; metal coatings at T = 0)
// Materials the solver builds (grating_material_problem): dielectric or conducting (Drude,
// plasma, tabulated metals) ridges on any substrate at T = 0; at T > 0 dielectrics, or lamellar
// uncoated Drude-like ridges on a Drude-like substrate (the xi = 0 term is the equipotential
// conductor, conductor_lamellar_static in solver/scatterers/grating_pec.h); other conductors
// (plasma-model metals, a metal with a dielectric, coated or non-lamellar metal gratings) at
// T = 0 only; or ridges and substrate both perfect conductors with a lamellar profile, T = 0
// and T > 0 (the grooves' modal method, solver/scatterers/grating_pec.h).
// Table profiles: one period of (x, height) points, x strictly increasing (single-valued),
// last x - first x = period, first height = last height (periodic), symmetric about the first
// point or the middle of the period (an asymmetric profile has complex Fourier coefficients,
// not built). Lines starting with '#' and a header line of non-numbers are skipped.
#include <toml++/toml.h>

#include <filesystem>
#include <functional>
#include <string>
#include <string_view>
#include <utility>

#include "solver/scatterers/grating_fmm.h"

namespace roundtrip::io {

/// Looks a material up by the string at t[key] (error messages name `field`).
using MaterialLookup = std::function<MaterialPtr(const toml::table& t, std::string_view key,
                                                 const std::string& field)>;

/// Throws CaseError "file:line: <table>.<key> = <value>: what is wrong". `base` is the directory
/// that relative table paths are read from (the case file's).
LamellarGrating grating_from_toml(const toml::table& t, const std::string& table,
                                  const MaterialLookup& material_at,
                                  const std::filesystem::path& base);

/// Why the grating's materials are not built at this temperature, as (key, sentence) with key
/// "material", "substrate" or "coating.material"; an empty key when they are built (header).
std::pair<std::string, std::string> grating_material_problem(const LamellarGrating& g,
                                                             double temperature_K);

/// The material name a key of grating_material_problem names (for the error's value).
std::string grating_material_of(const LamellarGrating& g, const std::string& key);

}  // namespace roundtrip::io
