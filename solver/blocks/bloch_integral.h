#pragma once
// The adaptive Bloch-vector integral of the grating round trips (grating-plate, grating-grating):
//   I = \int_BZ dk_x dk_y / (2 pi)^2 f(k_x, k_y)
// for integrands even in k_x and k_y (even profiles), so k_x runs over [0, G/2] and k_y >= 0
// (a factor 4). Maps (grating_plate.h):
//   k_x = (G/2) w(u), w(u) = u - sin(2 pi u)/(2 pi), u in [0, 1] (Sidi's sin^2 transformation,
//     Sidi, Numer. Math. 9 (1993), from memory; w' = 0 at both ends pushes the |k| kink of the
//     specular order at k = 0 to high order in u), midpoint rule in u, levels n_x -> 3 n_x nest;
//   k_y = a sinh(t), a = min(1/(2L), sqrt(k_x^2 + eps_m xi^2/c^2)) (the n = 0 branch points
//     k_y = +-i sqrt(k_x^2 + eps_m xi^2/c^2) stay a fixed distance from the real t axis),
//     trapezoid in t (step halving, t = 0 weighted 1/2) up to 2 L k_y = ln(1e3/tol) + 10.
// Each direction is refined until the caller's test accepts its change; the returned value adds
// both refinements' corrections (the product rule's errors are independent).
// Values: a flat vector of doubles per node (any number of components: several truncation
// levels, derivatives, lateral offsets), already multiplied by the node's Jacobian (the node
// function gets it). Node values are kept (memo), so several integrals over the same integrand
// (integrate() called again with another test, e.g. one per lateral offset) share the nodes
// they have in common, and each returns exactly what it would alone.
// Evaluation: new nodes in batches of <= 8 whole k_x lines; per batch the lines' layer modes
// first (GratingAtFrequency::Line, one task per line and per line slot), then the nodes, in
// parallel; every value is independent of the batching and the thread count.
// Walk: step (a, b) compares S(a, b) with S(a + 1, b) and S(a, b + 1); its node set (the three
// grids) depends on nothing but (a, b), and all of it is evaluated before the step's sums.
// Block items (solver/blocks/chunk.h, BlockSum::kBloch): under a ChunkScope whose chunk lists
// nodes (Chunk::bloch_keys), the first integrate() evaluates exactly those nodes into the chunk
// and every integrate() returns zeros; under a scope with gathered values (Chunk::bloch_replay)
// the walk takes its nodes from them and throws BlochNodesMissing at the first step with nodes
// missing (listed in the chunk), else returns the serial value bit for bit (same nodes, same
// additions in the same order, same tests).
#include <functional>
#include <map>
#include <string>
#include <utility>
#include <vector>

#include "solver/blocks/chunk.h"
#include "solver/scatterers/grating_fmm.h"

namespace roundtrip::blocks {

class BlochIntegral {
 public:
  using Values = std::vector<double>;
  using Lines = std::vector<GratingAtFrequency::Line>;
  /// Slot j (0 .. line_slots - 1) of the k_x line: the layer modes of one grating and level.
  using LineFn = std::function<GratingAtFrequency::Line(int slot, double kx)>;
  /// The integrand at (k_x, k_y) times jac = dk_x/du dk_y/dt, from the line's modes.
  using NodeFn = std::function<Values(double kx, double ky, double jac, const Lines& lines)>;
  /// Accepts a refinement: (finer sums, coarser sums, finer \int |f|) per component.
  using AcceptFn =
      std::function<bool(const Values& fine, const Values& coarse, const Values& fine_abs)>;

  /// period (m), gap L (m), q2 = eps_m xi^2/c^2 (1/m^2), tol: the k_y cut-off's tolerance.
  BlochIntegral(double period, double gap, double q2, double tol, int components, int line_slots,
                LineFn line, NodeFn node);
  /// The integral of every component, refined until `accept` holds in both directions; throws
  /// std::runtime_error(failure(nodes)) when the finest levels do not reach it.
  Values integrate(const AcceptFn& accept, const std::function<std::string(long)>& failure);
  /// Nodes evaluated so far.
  long nodes() const { return static_cast<long>(memo_.size()); }

 private:
  using Key = BlochKey;
  std::vector<Key> keys_of(int ax, int bt) const;
  std::vector<Key> step_keys(int ax, int bt) const;
  void ensure(const std::vector<Key>& keys);
  std::vector<Values> evaluate(const std::vector<Key>& sorted_keys);
  Values sum(int ax, int bt, Values& absum);
  double kx_of(long p) const;

  double half_bz_, gap_, q2_, y_max_, nfine_;
  int components_, line_slots_;
  LineFn line_;
  NodeFn node_;
  std::map<Key, Values> memo_;
  bool chunk_done_ = false;  // a chunk's nodes were evaluated (ChunkScope)
};

}  // namespace roundtrip::blocks
