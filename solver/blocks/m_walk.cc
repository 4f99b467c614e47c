#include "solver/blocks/m_walk.h"

#include <algorithm>
#include <cmath>
#include <iterator>

namespace roundtrip::blocks {
namespace {

double component(const Spectral& s, int c) { return c == 0 ? s.value : (c == 1 ? s.d1 : s.d2); }
double& component(Spectral& s, int c) { return c == 0 ? s.value : (c == 1 ? s.d1 : s.d2); }

/// Lagrange interpolant through (x[i], y[i]) at t.
double lagrange(const double* x, const double* y, int n, double t) {
  double p = 0.0;
  for (int i = 0; i < n; ++i) {
    double l = 1.0;
    for (int j = 0; j < n; ++j)
      if (j != i) l *= (t - x[j]) / (x[i] - x[j]);
    p += l * y[i];
  }
  return p;
}

}  // namespace

MWalk::MWalk(int mlimit, bool fixed_m_max, DerivativeOrder order, double tol)
    : mlimit_(mlimit), fixed_(fixed_m_max), order_(order), tol_(tol) {
  advance();
}

void MWalk::feed(const std::vector<Spectral>& values) {
  for (std::size_t i = 0; i < next_.size() && i < values.size(); ++i) known_[next_[i]] = values[i];
  advance();
}

// The tail test of the dense sum: the terms taken to fall off geometrically with the ratio r
// per block from head to tail (count blocks apart + 1); the tail 2 last r/(1 - r) below
// 0.1 tol of the sum in every component up to order_.
bool MWalk::tail_done(const Spectral& head, const Spectral& tail, int count) const {
  if (count < 2) return false;
  for (int c = 0; c < 1 + static_cast<int>(order_); ++c) {
    const double first = std::abs(component(head, c)), last = std::abs(component(tail, c));
    const double sum = std::abs(component(total_, c));
    if (last == 0.0) continue;
    const double r = std::pow(last / first, 1.0 / (count - 1));
    if (!(r < 0.95) || !(2.0 * last * r / (1.0 - r) <= 0.1 * tol_ * sum)) return false;
  }
  return true;
}

std::vector<int> MWalk::step_blocks() {
  std::vector<int> need;
  if (!sampled_) {
    for (int m = a_ + 1; m <= std::min(a_ + kBatch, mlimit_); ++m) need.push_back(m);
    return need;
  }
  while (h_ > 1 && a_ + 4 * h_ > mlimit_) h_ /= 2;
  if (h_ == 1) {
    for (int m = a_ + 1; m <= std::min(a_ + 4, mlimit_); ++m) need.push_back(m);
  } else {
    for (int i = 1; i <= 4; ++i) need.push_back(a_ + i * h_);
  }
  return need;
}

bool MWalk::panel_sum(Spectral& sum, bool& easy) const {
  // Nodes: the two computed blocks before the panel (m >= 1), its start a and a + h ... a + 4h.
  double x[7], y[7];
  auto before = known_.lower_bound(a_);
  const int p2 = std::prev(before)->first, p1 = std::prev(before, 2)->first;
  const int nodes[7] = {p1, p2, a_, a_ + h_, a_ + 2 * h_, a_ + 3 * h_, a_ + 4 * h_};
  if (p1 < 1) return false;
  for (int i = 0; i < 7; ++i) x[i] = nodes[i];
  easy = true;
  sum = Spectral{};
  for (int c = 0; c < 3; ++c) {
    bool all_zero = true;
    for (int i = 0; i < 7; ++i) all_zero = all_zero && component(known_.at(nodes[i]), c) == 0.0;
    if (all_zero) continue;
    const double sign = component(known_.at(nodes[2]), c) > 0.0 ? 1.0 : -1.0;
    for (int i = 0; i < 7; ++i) {
      const double v = sign * component(known_.at(nodes[i]), c);
      if (!(v > 0.0) || !std::isfinite(v)) return false;  // zero, sign change, NaN
      y[i] = std::log(v);
    }
    double q6 = 0.0, q4 = 0.0;
    for (int m = a_ + 1; m <= a_ + 4 * h_; ++m) {
      if ((m - a_) % h_ == 0) {  // a node: the computed value
        const double v = sign * component(known_.at(m), c);
        q6 += v;
        q4 += v;
        continue;
      }
      q6 += std::exp(lagrange(x, y, 7, m));
      q4 += std::exp(lagrange(x + 2, y + 2, 5, m));
    }
    const double budget = kPanelBudget * tol_ * std::abs(component(total_, c));
    const double est = 2.0 * std::abs(q6 - q4);
    if (!(est <= budget)) return false;
    easy = easy && est < budget / 16.0;
    component(sum, c) = sign * q6;
  }
  return true;
}

void MWalk::advance() {
  for (;;) {
    if (finished_ || a_ >= mlimit_) {
      finished_ = true;
      next_.clear();
      return;
    }
    const std::vector<int> need = step_blocks();
    next_.clear();
    for (int m : need)
      if (!known_.count(m)) next_.push_back(m);
    if (!next_.empty()) return;
    if (!sampled_) {
      for (int m : need) total_ += known_.at(m) * (m == 0 ? 1.0 : 2.0);
      const int first = need.front(), count = static_cast<int>(need.size());
      a_ = need.back();
      if (fixed_) continue;
      if (tail_done(known_.at(first), known_.at(a_), count)) finished_ = true;
      sampled_ = true;  // after the first batch
      h_ = 2;
    } else if (h_ == 1) {
      for (int m : need) total_ += known_.at(m) * 2.0;
      const int first = need.front(), count = static_cast<int>(need.size());
      a_ = need.back();
      if (tail_done(known_.at(first), known_.at(a_), count)) finished_ = true;
      h_ = 2;
    } else {
      Spectral s;
      bool easy = false;
      if (!panel_sum(s, easy)) {
        h_ /= 2;
        continue;
      }
      total_ += s * 2.0;
      const int head = a_;
      a_ += 4 * h_;
      if (tail_done(known_.at(head), known_.at(a_), 4 * h_ + 1)) finished_ = true;
      if (easy && h_ < kMaxStride) h_ *= 2;
    }
  }
}

}  // namespace roundtrip::blocks
