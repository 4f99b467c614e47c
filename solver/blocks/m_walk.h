#pragma once
// The walk of one sum over the azimuthal number m (m_sum.h): which blocks it needs next, how it
// adds them and where it stops. One object serves the serial sum, the sums built together
// (sum_over_m_many) and the replay of block items (replay_sum_over_m), so all three add the
// same values in the same order and stop at the same place, bit for bit.
//
// Sampled sum (issue 17). Near contact the terms s_m vary slowly with m: s_m ~ e^{-beta m} with
// beta ~ 2 sqrt(L/R) near m = 0, Gaussian-like further out (measured on gold sphere-plate,
// R/L = 150 ... 1000: beta = 0.065 at R/L = 1000), so hundreds of blocks carry a smooth curve.
// The walk computes m = 0 .. 7 (the first batch; m = 0 is special: there TE and TM decouple and
// s_0 lies off the curve of m >= 1, a |m| kink) and then panels (a, a + 4h] of stride h: the
// blocks a + h, ..., a + 4h are computed and the blocks between them are interpolated. Each
// component (value, d1, d2) keeps its sign along the curve; log|s_m| is smooth and nearly
// quadratic in m, so it is interpolated by the polynomial through the panel's nodes and the two
// computed blocks before it (7 nodes, degree 6; the values at the nodes are taken as computed)
// and the panel's sum is the sum of sign * exp(P(m)) over its integers. Error control per
// panel and component: the degree-4 interpolant through the panel's 5 nodes a ... a + 4h
// differs from the degree-6 one by more than the degree-6 one's error (measured 10-1000x), and
// the panel is accepted when twice that difference is at most kPanelBudget rel_tol |sum so far|
// (the running sum understates the final one, so the test is conservative); otherwise h is
// halved and the panel retried (h = 1 adds four computed blocks). h doubles after a panel whose
// difference was below 1/16 of the budget, up to kMaxStride. A sign change or a zero inside a
// panel's nodes makes the panel fail (h halves) until it is summed block by block. The tail
// test of the dense sum (a geometric tail below 0.1 rel_tol of the sum) runs after every batch
// of the first phase and every accepted panel, on the first and last computed block.
// Measured (R/L = 150 ... 1000, n = 1 ... 20 at 300 K, rel_tol 1e-4 and 1e-5): 24 ... 44 blocks
// instead of 100 ... 200, relative error of the whole sum 2e-9 ... 1.2e-6 against every block
// up to 1e-12 of the sum (most of it the tail cut, which the dense sum shares).
// A fixed m_max (the user's) sums every block: the walk is then the dense one.
#include <map>
#include <vector>

#include "solver/spectral.h"

namespace roundtrip::blocks {

class MWalk {
 public:
  /// Blocks per batch of the first phase (and of the dense walk), independent of threads.
  static constexpr int kBatch = 8;
  /// Share of rel_tol one panel's interpolation may carry (see the top of this file).
  static constexpr double kPanelBudget = 0.01;
  static constexpr int kMaxStride = 64;

  MWalk(int mlimit, bool fixed_m_max, DerivativeOrder order, double tol);

  /// The blocks needed next, ascending, none given before; empty once done().
  const std::vector<int>& next() const { return next_; }
  /// The values of next()'s blocks in that order; adds what it can and plans the next step.
  void feed(const std::vector<Spectral>& values);
  bool done() const { return finished_; }
  /// The sum, m > 0 counted twice.
  const Spectral& total() const { return total_; }

 private:
  void advance();                  // add what the known blocks allow; set next_
  std::vector<int> step_blocks();  // the blocks of the current step (some may be known)
  bool tail_done(const Spectral& head, const Spectral& tail, int count) const;
  // Sum over m in (a_, a_ + 4 h_] from the known blocks; false if the panel fails its test.
  bool panel_sum(Spectral& sum, bool& easy) const;

  int mlimit_;
  bool fixed_;
  DerivativeOrder order_;
  double tol_;
  int a_ = -1;            // blocks 0 .. a_ are added
  int h_ = 1;             // stride of the next panel (sampled phase)
  bool sampled_ = false;  // past the first batch (never with a fixed m_max)
  bool finished_ = false;
  std::map<int, Spectral> known_;
  std::vector<int> next_;
  Spectral total_;
};

}  // namespace roundtrip::blocks
