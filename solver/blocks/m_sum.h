#pragma once
// Sum over the azimuthal number m of per-m log dets for bodies on a common axis (+m and -m give
// the same block, so m > 0 counts twice). Shared by sphere-plate and sphere-sphere.
#include <array>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "solver/blocks/chunk.h"
#include "solver/blocks/m_walk.h"
#include "solver/logdet/low_rank.h"
#include "solver/spectral.h"

namespace roundtrip::blocks {

/// m-blocks of the first batch (and of every batch with a fixed m_max); fixed so that the set
/// of computed m (and hence the result) does not depend on the thread count.
inline constexpr int kMBatch = MWalk::kBatch;

/// Sum over m = 0 .. mlimit of block(m) by the walk of m_walk.h: blocks 0 .. 7, then panels of
/// stride h whose blocks between the computed ones are interpolated (log|s_m| by polynomials,
/// error-controlled per panel against kPanelBudget rel_tol), each step's blocks computed in
/// parallel (OpenMP, fixed order of addition). Unless `fixed_m_max`, the terms are taken to
/// fall off geometrically once m exceeds ~sqrt(R/L) (measured for sphere-plate): the ratio r is
/// estimated from the first and last block of each step and the sum stops when the tail,
/// last * r/(1-r), is below 0.1 tol for every derivative up to `order`. With `fixed_m_max`
/// every block up to mlimit is computed and added. A block that fails throws
/// std::runtime_error(fail_message(m, result)).
Spectral sum_over_m(int mlimit, bool fixed_m_max, DerivativeOrder order, double tol,
                    const std::function<LogDetResult(int)>& block,
                    const std::function<std::string(int, const LogDetResult&)>& fail_message);

/// The same for `count` sums at once whose blocks are built together (spheres that differ only in
/// their materials): blocks(m, active) returns one result per sum, computed for the sums still
/// active and need block m (the others' entries are ignored). Each sum follows its own walk
/// (the union of the blocks the walks need is built per step), so sum k equals sum_over_m on
/// its own blocks.
std::vector<Spectral> sum_over_m_many(
    int count, int mlimit, bool fixed_m_max, DerivativeOrder order, double tol,
    const std::function<std::vector<LogDetResult>(int, const std::vector<char>&)>& blocks,
    const std::function<std::string(int, int, const LogDetResult&)>& fail_message);

/// Part of one frequency's m sum computed alone (block items, solver/blocks/chunk.h): under a
/// ChunkScope, sum_over_m computes every block chunk.begin <= m < chunk.end (begin a multiple of
/// kMBatch; the walk may use only some of them) and records mlimit, fixed_m_max, order and tol,
/// which decide where the sum stops (replay_sum_over_m).
using MChunk = Chunk;
using MChunkScope = ChunkScope;

/// Block m of a replayed sum: its value, or nothing if not computed yet; a failed block throws.
using BlockValue = std::function<std::optional<Spectral>(int m)>;

/// The m sum of sum_over_m replayed on block values computed elsewhere (chunks): the same walk
/// (blocks, order of addition, stopping test), so the total is sum_over_m's bit for bit.
/// Returns the total, or nothing and sets *missing to the first m whose value is needed but
/// unknown and, if `needed` is given, appends every unknown block of the walk's step there.
std::optional<Spectral> replay_sum_over_m(int mlimit, bool fixed_m_max, DerivativeOrder order,
                                          double tol, const BlockValue& value, int* missing,
                                          std::vector<int>* needed = nullptr);

/// The chunks (begin, end, stride) a first round of block items asks for, before the sum's m
/// limit is known: the first batch and the panels of the walk while its stride doubles
/// (m_walk.h), about `blocks` blocks (the cost model's count). A chunk computes nothing beyond
/// the limit; later rounds ask for the blocks the replay found missing (with a fixed m_max:
/// the rest of the dense sum).
std::vector<std::array<int, 3>> likely_m_chunks(int blocks);

}  // namespace roundtrip::blocks
