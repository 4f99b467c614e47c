#pragma once
// A sphere's columns of the plane-wave round trip per azimuthal number m: the W (multipole x
// momentum node) of M = S W C W^T (solver/logdet/low_rank.h). Rows l = l_min..l_max (TE then TM
// for the electromagnetic field; l_min = max(1, m), scalar fields l_min = m), columns u_j (TE
// channel) and v_j (TM channel) at each node of a NodeSet (plane_wave_nodes.h), scaled by
// sqrt|T_l| a_l and the node weight sqrt(Omega_j); S = (sign T^TE, -sign T^TM). Formulas and
// signs in sphere_plate.cc and DEVELOPERS.md ("Sphere-plate round trip"). c, f1, f2 are copied
// from the NodeSet (c_te on TE columns, c_tm on TM columns).
#include <span>
#include <string>
#include <vector>

#include "solver/blocks/plane_wave_nodes.h"
#include "solver/logdet/low_rank.h"
#include "solver/scatterers/field.h"
#include "solver/scatterers/mie.h"

namespace roundtrip::blocks {

/// xi > 0, each column over its band of non-negligible rows (write_zeros = false: W is left
/// unset outside the recorded bands).
LowRankBlock sphere_dynamic_block(FieldKind field, int m, int lmax, const NodeSet& nodes,
                                  const MieLog& mie, bool write_zeros);

/// The blocks of several spheres that differ only in their materials (Mie amplitudes) and the
/// reflection factors c of their node sets, on the same nodes (x, weights, f1, f2 of
/// node_sets[0]): the Legendre recurrences are run once per node over the union of the rows
/// the spheres need. Each block equals sphere_dynamic_block's up to rounding (the recurrence may
/// start at a lower row); with one sphere it is sphere_dynamic_block.
std::vector<LowRankBlock> sphere_dynamic_blocks(FieldKind field, int m, int lmax,
                                                std::span<const NodeSet* const> node_sets,
                                                std::span<const MieLog* const> mies,
                                                bool write_zeros);

/// xi > 0, every column over all rows (the reference path; same W up to rounding).
LowRankBlock sphere_dynamic_block_full_range(FieldKind field, int m, int lmax, const NodeSet& nodes,
                                             const MieLog& mie);

/// Empty if the two blocks have the same bands, zeros and entries within 1e-9 relative.
std::string compare_sphere_blocks(const LowRankBlock& a, const LowRankBlock& r, int m);

/// xi = 0: rows g_l (radius/path)^{l+1/2} t^l / sqrt((l-m)!(l+m)!) (TE and TM decouple; the
/// cross entries are zero); path = 2D for a plate at centre distance D, d for two spheres.
/// with_tm = false: the TE channel alone (electromagnetic field).
LowRankBlock sphere_static_block(FieldKind field, int m, double radius, double path, int lmax,
                                 const NodeSet& nodes, const StaticSphere& st, bool with_tm);

}  // namespace roundtrip::blocks
