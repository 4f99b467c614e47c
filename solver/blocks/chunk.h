#pragma once
// Block items: part of one frequency's s(xi) computed alone, for runs spread over ranks or
// threads (solver/parallel/frequency_rounds.h). A frequency whose s(xi) is one reduction over
// independent units (Geometry::block_sum) is cut into chunks of units: m blocks of one sum over
// m (blocks::sum_over_m, m_sum.h) or nodes of one double-exponential k_z integral
// (cylinder::de_integrate, solver/geometries/axial_integral.h). While a ChunkScope is alive, the
// reduction called on that thread computes only the chunk's units, records the parameters that
// decide where it stops, and returns zero; the full value is then formed elsewhere by the
// reduction's replay (blocks::replay_sum_over_m, cylinder::replay_de_integrate) on the gathered
// unit values, with the serial additions in the serial order and the serial stopping tests, so
// it is the serial value bit for bit. The Bloch-vector integral of gratings
// (blocks::BlochIntegral) is replayed by the geometry itself: rank 0 calls at_frequency_within
// under a scope whose chunk holds the gathered node values (Chunk::bloch_replay); the integral's
// walk takes its nodes from there and stops at the first refinement step with missing nodes.
#include <map>
#include <string>
#include <utility>
#include <vector>

#include "solver/spectral.h"

namespace roundtrip::blocks {

/// The one reduction a geometry's s(xi) is (Geometry::block_sum), i.e. what a chunk's units are.
enum class BlockSum : int {
  kNone = 0,   ///< not cut: one frequency is the smallest item
  kM = 1,      ///< one sum over m: the units are m blocks (m_sum.h)
  kAxial = 2,  ///< one DE integral over k_z: the units are its nodes (axial_integral.h)
  kBloch = 3,  ///< one Bloch-vector integral: the units are its (p, q) nodes (bloch_integral.h)
};

/// A node of the Bloch-vector integral (blocks::BlochIntegral): k_x index p, k_y index q.
using BlochKey = std::pair<long, long>;

/// Thrown by a BlochIntegral replayed under a ChunkScope (Chunk::bloch_replay) at the first
/// refinement step with nodes not among the gathered ones (listed in Chunk::bloch_missing).
struct BlochNodesMissing {};

/// One chunk. Asked: the units begin <= i < end, every `stride`-th from begin (m blocks: the
/// walk of m_walk.h samples m, so a chunk is one arithmetic run of the blocks it needs; k_z
/// nodes, cylinder::axial_node_index, stride 1). Filled in by
/// the reduction: which one ran, the parameters that decide where it stops, and the unit values
/// in order, up to the first failed unit.
struct Chunk {
  int begin = 0;
  int end = 0;
  int stride = 1;
  BlockSum sum = BlockSum::kNone;  ///< the reduction that filled it in
  bool seen = false;  ///< the reduction ran (else the geometry reduced nothing at this frequency)
  // m sums (sum_over_m): the m limit, fixed m_max, derivative order, tolerance.
  int mlimit = 0;
  bool fixed_m_max = false;
  DerivativeOrder order = DerivativeOrder::kEnergy;
  double tol = 0.0;  ///< both reductions' tolerance
  // k_z integrals (de_integrate): first level allowed to stop, factor applied to the integral.
  int min_level = 1;
  double factor = 1.0;
  std::vector<Spectral> values;  ///< units begin, begin + stride, ... (before any failure)
  int failed_at = -1;            ///< first failed unit in the chunk, -1 if none
  std::string failure;           ///< its message
  // Bloch integrals (BlochIntegral). Computing a chunk: the nodes asked for (sorted) and their
  // values, `bloch_components` doubles per node, concatenated in that order.
  std::vector<BlochKey> bloch_keys;
  std::vector<double> bloch_values;
  int bloch_components = 0;
  // Replaying (rank 0): the gathered node values; the integral takes its nodes from there and
  // throws BlochNodesMissing at the first step with nodes missing, listed sorted in
  // bloch_missing; bloch_used counts the gathered nodes it took.
  const std::map<BlochKey, std::vector<double>>* bloch_replay = nullptr;
  std::vector<BlochKey> bloch_missing;
  long bloch_used = 0;
};

/// While alive, the reduction (sum_over_m or de_integrate) called on this thread computes only
/// the units of `chunk`, fills it in and returns zero (a second reduction in the same frequency
/// throws std::logic_error). Not nested.
class ChunkScope {
 public:
  explicit ChunkScope(Chunk* chunk);
  ~ChunkScope();
  ChunkScope(const ChunkScope&) = delete;
  ChunkScope& operator=(const ChunkScope&) = delete;
};

/// The chunk of the calling thread's ChunkScope, or nullptr.
Chunk* current_chunk();

/// Claim the current chunk for reduction `sum` (std::logic_error if it already ran).
void claim_chunk(Chunk& chunk, BlockSum sum);

}  // namespace roundtrip::blocks
