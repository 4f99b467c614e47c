// Adaptive Bloch-vector integral of the grating round trips (formulas in bloch_integral.h).
#include "solver/blocks/bloch_integral.h"

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <utility>

#include "solver/constants.h"
#include "solver/guards.h"
#include "solver/parallel_for.h"

namespace roundtrip::blocks {
namespace {

constexpr int kMaxXLevel = 5;  // n_x = 4 * 3^5 = 972 midpoints on [0, G/2]
constexpr int kMaxTLevel = 7;  // h = 0.5 / 2^7
constexpr int kX0 = 4;
constexpr double kH0 = 0.5;
constexpr long kTFine = 1L << kMaxTLevel;

long pow3(int a) {
  long p = 1;
  for (int i = 0; i < a; ++i) p *= 3;
  return p;
}

}  // namespace

BlochIntegral::BlochIntegral(double period, double gap, double q2, double tol, int components,
                             int line_slots, LineFn line, NodeFn node)
    : half_bz_(0.5 * (2.0 * kPi / period)),
      gap_(gap),
      q2_(q2),
      // k_y = a sinh(t) up to y = 2 L k_y where e^{-y} < 1e-3 tol (every order decays at least
      // as fast as e^{-2 k_y L}).
      y_max_(std::log(1e3 / tol) + 10.0),
      nfine_(kX0 * static_cast<double>(pow3(kMaxXLevel))),
      components_(components),
      line_slots_(line_slots),
      line_(std::move(line)),
      node_(std::move(node)) {}

double BlochIntegral::kx_of(long p) const {
  const double u = static_cast<double>(p) / (2.0 * nfine_);
  return half_bz_ * (u - std::sin(2.0 * kPi * u) / (2.0 * kPi));
}

std::vector<BlochIntegral::Key> BlochIntegral::keys_of(int ax, int bt) const {
  std::vector<Key> keys;
  const long nx = kX0 * pow3(ax);
  const long xs = pow3(kMaxXLevel - ax);
  const long ts = 1L << (kMaxTLevel - bt);
  const double h = kH0 / (1 << bt);
  for (long i = 0; i < nx; ++i) {
    const long p = (2 * i + 1) * xs;
    const double kx = kx_of(p);
    const double a = std::min(0.5 / gap_, std::sqrt(kx * kx + q2_));
    const double t_max = std::asinh(y_max_ / (2.0 * gap_ * a));
    const long J = static_cast<long>(std::ceil(t_max / h));
    for (long j = 0; j <= J; ++j) keys.emplace_back(p, j * ts);
  }
  return keys;
}

std::vector<BlochIntegral::Key> BlochIntegral::step_keys(int ax, int bt) const {
  std::vector<Key> keys = keys_of(ax, bt);
  for (const auto& more : {keys_of(ax + 1, bt), keys_of(ax, bt + 1)})
    keys.insert(keys.end(), more.begin(), more.end());
  std::sort(keys.begin(), keys.end());
  keys.erase(std::unique(keys.begin(), keys.end()), keys.end());
  return keys;
}

void BlochIntegral::ensure(const std::vector<Key>& keys) {
  std::vector<Key> todo;
  for (const auto& k : keys)
    if (!memo_.count(k)) todo.push_back(k);
  std::sort(todo.begin(), todo.end());
  todo.erase(std::unique(todo.begin(), todo.end()), todo.end());
  if (todo.empty()) return;
  if (Chunk* c = current_chunk(); c && c->bloch_replay) {  // replay: gathered values only
    std::vector<Key> missing;
    for (const auto& k : todo)
      if (const auto it = c->bloch_replay->find(k); it != c->bloch_replay->end()) {
        memo_[k] = it->second;
        ++c->bloch_used;
      } else {
        missing.push_back(k);
      }
    if (missing.empty()) return;
    c->seen = true;
    c->sum = BlockSum::kBloch;
    c->bloch_missing = std::move(missing);
    throw BlochNodesMissing{};
  }
  std::vector<Values> vals = evaluate(todo);
  for (std::size_t i = 0; i < todo.size(); ++i) memo_[todo[i]] = std::move(vals[i]);
}

std::vector<BlochIntegral::Values> BlochIntegral::evaluate(const std::vector<Key>& todo) {
  std::vector<Values> vals(todo.size());
  const auto node = [&](long p, long q, const Lines& lines) {
    const double u = static_cast<double>(p) / (2.0 * nfine_);
    const double kx = half_bz_ * (u - std::sin(2.0 * kPi * u) / (2.0 * kPi));
    const double wu = half_bz_ * (1.0 - std::cos(2.0 * kPi * u));
    const double a = std::min(0.5 / gap_, std::sqrt(kx * kx + q2_));
    const double t = q * (kH0 / kTFine);
    const double ky = a * std::sinh(t);
    const double jac = a * std::cosh(t) * wu;
    return node_(kx, ky, jac, lines);
  };
  // Batches of whole k_x lines (up to kLinesPerBatch): first the lines' layer modes (one task
  // per line and slot), then their nodes; every node's value is independent of the batching.
  constexpr std::size_t kLinesPerBatch = 8;
  const int ns = line_slots_;
  std::size_t b0 = 0;
  while (b0 < todo.size()) {
    throw_if_cancelled();
    std::vector<long> ps;
    std::size_t b1 = b0;
    while (b1 < todo.size()) {
      if (ps.empty() || ps.back() != todo[b1].first) {
        if (ps.size() == kLinesPerBatch) break;
        ps.push_back(todo[b1].first);
      }
      ++b1;
    }
    std::vector<Lines> lines(ps.size(), Lines(ns));
    const long n_line_tasks = static_cast<long>(ps.size()) * ns;
    parallel_for(0, n_line_tasks,
                 [&](long t) { lines[t / ns][t % ns] = line_(t % ns, kx_of(ps[t / ns])); });
    parallel_for(static_cast<long>(b0), static_cast<long>(b1), [&](long i) {
      const std::size_t li = std::lower_bound(ps.begin(), ps.end(), todo[i].first) - ps.begin();
      vals[i] = node(todo[i].first, todo[i].second, lines[li]);
    });
    b0 = b1;
  }
  return vals;
}

// S(ax, bt) per component and \int |f| on the same grid; 4 = both halves in k_x and k_y;
// 1/(2 pi)^2.
BlochIntegral::Values BlochIntegral::sum(int ax, int bt, Values& absum) {
  const auto keys = keys_of(ax, bt);
  ensure(keys);
  const long nx = kX0 * pow3(ax);
  const double wx = 1.0 / nx;  // du; the k_x Jacobian is in the node
  const double h = kH0 / (1 << bt);
  const double pref = 4.0 / (4.0 * kPi * kPi);
  Values s(components_, 0.0), ab(components_, 0.0);
  for (const auto& k : keys) {
    const double w = wx * h * (k.second == 0 ? 0.5 : 1.0) * pref;
    const Values& v = memo_.at(k);
    for (int c = 0; c < components_; ++c) {
      s[c] += w * v[c];
      ab[c] += w * std::abs(v[c]);
    }
  }
  absum = std::move(ab);
  return s;
}

BlochIntegral::Values BlochIntegral::integrate(const AcceptFn& accept,
                                               const std::function<std::string(long)>& failure) {
  if (Chunk* c = current_chunk(); c && !c->bloch_replay) {  // compute a chunk's nodes
    if (!chunk_done_) {
      claim_chunk(*c, BlockSum::kBloch);
      chunk_done_ = true;
      if (!std::is_sorted(c->bloch_keys.begin(), c->bloch_keys.end()))
        throw std::logic_error("a Bloch chunk's nodes must be sorted");
      const std::vector<Values> vals = evaluate(c->bloch_keys);
      c->bloch_components = components_;
      c->bloch_values.clear();
      for (const Values& v : vals)
        c->bloch_values.insert(c->bloch_values.end(), v.begin(), v.end());
    }
    return Values(components_, 0.0);
  }
  int ax = 0, bt = 0;
  for (;;) {
    ensure(step_keys(ax, bt));  // the step's whole node set first (one batch of work)
    Values ab0, abx, aby;
    const Values s0 = sum(ax, bt, ab0), sx = sum(ax + 1, bt, abx), sy = sum(ax, bt + 1, aby);
    const bool ok_x = accept(sx, s0, abx), ok_y = accept(sy, s0, aby);
    if (ok_x && ok_y) {
      Values out(components_);
      for (int c = 0; c < components_; ++c) out[c] = sx[c] + sy[c] - s0[c];
      return out;
    }
    if (!ok_x) ++ax;
    if (!ok_y) ++bt;
    if (ax + 1 > kMaxXLevel || bt + 1 > kMaxTLevel) throw std::runtime_error(failure(nodes()));
  }
}

}  // namespace roundtrip::blocks
