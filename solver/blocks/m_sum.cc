#include "solver/blocks/m_sum.h"

#include <algorithm>
#include <cmath>
#include <exception>
#include <stdexcept>
#include <vector>

#include "solver/blocks/m_walk.h"
#include "solver/guards.h"
#include "solver/parallel_for.h"

namespace roundtrip::blocks {
namespace {

// sum_over_m under an MChunkScope: the chunk's blocks only, batch by batch as the whole sum.
void compute_chunk(MChunk& c, int mlimit, bool fixed_m_max, DerivativeOrder order, double tol,
                   const std::function<LogDetResult(int)>& block,
                   const std::function<std::string(int, const LogDetResult&)>& fail_message) {
  claim_chunk(c, BlockSum::kM);
  if (c.begin % kMBatch != 0) throw std::logic_error("an m chunk must start on a batch");
  c.mlimit = mlimit;
  c.fixed_m_max = fixed_m_max;
  c.order = order;
  c.tol = tol;
  const int end = std::min(c.end, mlimit + 1);
  std::vector<LogDetResult> batch(kMBatch);
  for (int m0 = c.begin; m0 < end; m0 += kMBatch) {
    const int m1 = std::min(end, m0 + kMBatch);
    parallel_for(m0, m1, [&](long m) {
      throw_if_cancelled();
      batch[m - m0] = block(m);
    });
    for (int m = m0; m < m1; ++m) {
      const LogDetResult& r = batch[m - m0];
      if (!r.ok) {
        c.failed_at = m;
        c.failure = fail_message(m, r);
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
                                          double tol, const BlockValue& value, int* missing) {
  MWalk w(mlimit, fixed_m_max, order, tol);
  while (!w.done()) {
    std::vector<Spectral> v;
    for (int m : w.next()) {
      const std::optional<Spectral> x = value(m);
      if (!x) {
        if (missing) *missing = m;
        return std::nullopt;
      }
      v.push_back(*x);
    }
    w.feed(v);
  }
  return w.total();
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
