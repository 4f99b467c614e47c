#include "solver/blocks/m_sum.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <exception>
#include <stdexcept>
#include <vector>

#include "solver/blocks/m_walk.h"
#include "solver/guards.h"
#include "solver/parallel_for.h"

namespace roundtrip::blocks {
namespace {

// sum_over_m under an MChunkScope: the chunk's blocks only (begin, begin + stride, ... < end, not
// beyond mlimit), kMBatch at a time in parallel; the values in that order.
void compute_chunk(MChunk& c, int mlimit, bool fixed_m_max, DerivativeOrder order, double tol,
                   const std::function<LogDetResult(int)>& block,
                   const std::function<std::string(int, const LogDetResult&)>& fail_message) {
  claim_chunk(c, BlockSum::kM);
  c.mlimit = mlimit;
  c.fixed_m_max = fixed_m_max;
  c.order = order;
  c.tol = tol;
  std::vector<int> ms;
  for (int m = c.begin; m < std::min(c.end, mlimit + 1); m += std::max(c.stride, 1))
    ms.push_back(m);
  std::vector<LogDetResult> batch(kMBatch);
  for (std::size_t i0 = 0; i0 < ms.size(); i0 += kMBatch) {
    const std::size_t i1 = std::min(ms.size(), i0 + kMBatch);
    parallel_for(static_cast<long>(i0), static_cast<long>(i1), [&](long i) {
      throw_if_cancelled();
      batch[i - i0] = block(ms[i]);
    });
    for (std::size_t i = i0; i < i1; ++i) {
      const LogDetResult& r = batch[i - i0];
      if (!r.ok) {
        c.failed_at = ms[i];
        c.failure = fail_message(ms[i], r);
        return;
      }
      c.values.push_back(r.s);
    }
  }
}

/// Computes the walk's next blocks in parallel (fixed order of the values) and feeds them.
void step(MWalk& w, const std::function<LogDetResult(int)>& block,
          const std::function<std::string(int, const LogDetResult&)>& fail_message) {
  const std::vector<int>& ms = w.next();
  std::vector<LogDetResult> r(ms.size());
  // A cancellation request (guards.h) is seen before each block and inside the W builders;
  // the first exception is rethrown after the parallel loop (solver/parallel_for.h). The
  // frequency is then abandoned as a whole (never recorded). Polling changes no number.
  parallel_for(0, static_cast<long>(ms.size()), [&](long i) {
    throw_if_cancelled();
    r[i] = block(ms[i]);
  });
  std::vector<Spectral> v(ms.size());
  for (std::size_t i = 0; i < ms.size(); ++i) {
    if (!r[i].ok) throw std::runtime_error(fail_message(ms[i], r[i]));
    v[i] = r[i].s;
  }
  w.feed(v);
}

}  // namespace

std::optional<Spectral> replay_sum_over_m(int mlimit, bool fixed_m_max, DerivativeOrder order,
                                          double tol, const BlockValue& value, int* missing,
                                          std::vector<int>* needed) {
  MWalk w(mlimit, fixed_m_max, order, tol);
  while (!w.done()) {
    std::vector<Spectral> v;
    bool complete = true;
    for (int m : w.next()) {
      const std::optional<Spectral> x = value(m);
      if (!x) {
        if (complete && missing) *missing = m;
        complete = false;
        if (needed) needed->push_back(m);
        if (!needed) break;
        continue;
      }
      v.push_back(*x);
    }
    if (!complete) return std::nullopt;
    w.feed(v);
  }
  return w.total();
}

std::vector<std::array<int, 3>> likely_m_chunks(int blocks) {
  std::vector<std::array<int, 3>> runs;
  runs.push_back({0, kMBatch, 1});
  int a = kMBatch - 1, h = 2, count = kMBatch;
  while (count < blocks) {
    runs.push_back({a + h, a + 4 * h + 1, h});
    a += 4 * h;
    h = std::min(2 * h, MWalk::kMaxStride);
    count += 4;
  }
  return runs;
}

Spectral sum_over_m(int mlimit, bool fixed_m_max, DerivativeOrder order, double tol,
                    const std::function<LogDetResult(int)>& block,
                    const std::function<std::string(int, const LogDetResult&)>& fail_message) {
  if (Chunk* chunk = current_chunk()) {
    compute_chunk(*chunk, mlimit, fixed_m_max, order, tol, block, fail_message);
    return Spectral{};
  }
  MWalk w(mlimit, fixed_m_max, order, tol);
  while (!w.done()) step(w, block, fail_message);
  return w.total();
}

std::vector<Spectral> sum_over_m_many(
    int count, int mlimit, bool fixed_m_max, DerivativeOrder order, double tol,
    const std::function<std::vector<LogDetResult>(int, const std::vector<char>&)>& blocks,
    const std::function<std::string(int, int, const LogDetResult&)>& fail_message) {
  std::vector<MWalk> walks;
  for (int k = 0; k < count; ++k) walks.emplace_back(mlimit, fixed_m_max, order, tol);
  for (;;) {
    // The union of the blocks the unfinished walks need; each block built for those that need it.
    std::vector<int> ms;
    for (const MWalk& w : walks)
      if (!w.done()) ms.insert(ms.end(), w.next().begin(), w.next().end());
    if (ms.empty()) break;
    std::sort(ms.begin(), ms.end());
    ms.erase(std::unique(ms.begin(), ms.end()), ms.end());
    std::vector<std::vector<LogDetResult>> r(ms.size());
    parallel_for(0, static_cast<long>(ms.size()), [&](long i) {
      throw_if_cancelled();
      std::vector<char> need(count, 0);
      for (int k = 0; k < count; ++k) {
        const std::vector<int>& n = walks[k].next();
        need[k] = !walks[k].done() && std::binary_search(n.begin(), n.end(), ms[i]);
      }
      r[i] = blocks(ms[i], need);
    });
    for (int k = 0; k < count; ++k) {
      if (walks[k].done()) continue;
      std::vector<Spectral> v;
      for (int m : walks[k].next()) {
        const std::size_t i = std::lower_bound(ms.begin(), ms.end(), m) - ms.begin();
        const LogDetResult& x = r[i][k];
        if (!x.ok) throw std::runtime_error(fail_message(k, m, x));
        v.push_back(x.s);
      }
      walks[k].feed(v);
    }
  }
  std::vector<Spectral> total(count);
  for (int k = 0; k < count; ++k) total[k] = walks[k].total();
  return total;
}

}  // namespace roundtrip::blocks
