#include "solver/blocks/m_sum.h"

#include <algorithm>
#include <cmath>
#include <exception>
#include <stdexcept>
#include <vector>

#include "solver/guards.h"
#include "solver/parallel_for.h"

namespace roundtrip::blocks {
namespace {

/// The tail test of sum_over_m on one finished batch of `count` blocks, whose first and last
/// values are `head` and `tail`, with the running total.
bool tail_below_tolerance(const Spectral& head, const Spectral& tail, int count,
                          const Spectral& total, DerivativeOrder order, double tol) {
  bool done = true;
  for (int c = 0; c < 1 + static_cast<int>(order); ++c) {
    auto comp = [&](const Spectral& v) { return c == 0 ? v.value : (c == 1 ? v.d1 : v.d2); };
    const double first = std::abs(comp(head)), last = std::abs(comp(tail));
    const double sum = std::abs(comp(total));
    if (last == 0.0) continue;
    const double r = std::pow(last / first, 1.0 / (count - 1));
    if (!(r < 0.95) || !(2.0 * last * r / (1.0 - r) <= 0.1 * tol * sum)) done = false;
  }
  return done;
}

bool tail_below_tolerance(const std::vector<LogDetResult>& batch, int count, const Spectral& total,
                          DerivativeOrder order, double tol) {
  return tail_below_tolerance(batch[0].s, batch[count - 1].s, count, total, order, tol);
}

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

}  // namespace

std::optional<Spectral> replay_sum_over_m(int mlimit, bool fixed_m_max, DerivativeOrder order,
                                          double tol, const BlockValue& value, int* missing) {
  Spectral total;
  for (int m0 = 0; m0 <= mlimit; m0 += kMBatch) {
    const int m1 = std::min(mlimit + 1, m0 + kMBatch);
    Spectral head, tail;
    for (int m = m0; m < m1; ++m) {
      const std::optional<Spectral> v = value(m);
      if (!v) {
        if (missing) *missing = m;
        return std::nullopt;
      }
      if (m == m0) head = *v;
      tail = *v;
      total += *v * (m == 0 ? 1.0 : 2.0);  // as sum_over_m
    }
    if (fixed_m_max || m1 - m0 < 2) continue;
    if (tail_below_tolerance(head, tail, m1 - m0, total, order, tol)) break;
  }
  return total;
}

Spectral sum_over_m(int mlimit, bool fixed_m_max, DerivativeOrder order, double tol,
                    const std::function<LogDetResult(int)>& block,
                    const std::function<std::string(int, const LogDetResult&)>& fail_message) {
  if (Chunk* chunk = current_chunk()) {
    compute_chunk(*chunk, mlimit, fixed_m_max, order, tol, block, fail_message);
    return Spectral{};
  }
  Spectral total;
  std::vector<LogDetResult> batch(kMBatch);
  for (int m0 = 0; m0 <= mlimit; m0 += kMBatch) {
    const int m1 = std::min(mlimit + 1, m0 + kMBatch);
    // A cancellation request (guards.h) is seen before each block and inside the W builders;
    // the first exception of the batch is rethrown after it (solver/parallel_for.h).
    // The frequency is then abandoned as a whole (never recorded). Polling changes no number.
    parallel_for(m0, m1, [&](long m) {
      throw_if_cancelled();
      batch[m - m0] = block(m);
    });
    for (int m = m0; m < m1; ++m) {
      const LogDetResult& r = batch[m - m0];
      if (!r.ok) throw std::runtime_error(fail_message(m, r));
      total += r.s * (m == 0 ? 1.0 : 2.0);
    }
    if (fixed_m_max || m1 - m0 < 2) continue;
    const bool done = tail_below_tolerance(batch, m1 - m0, total, order, tol);
    if (done) break;
  }
  return total;
}

std::vector<Spectral> sum_over_m_many(
    int count, int mlimit, bool fixed_m_max, DerivativeOrder order, double tol,
    const std::function<std::vector<LogDetResult>(int, const std::vector<char>&)>& blocks,
    const std::function<std::string(int, int, const LogDetResult&)>& fail_message) {
  std::vector<Spectral> total(count);
  std::vector<char> active(count, 1);
  std::vector<std::vector<LogDetResult>> batch(kMBatch);
  for (int m0 = 0; m0 <= mlimit; m0 += kMBatch) {
    const int m1 = std::min(mlimit + 1, m0 + kMBatch);
    parallel_for(m0, m1, [&](long m) {
      throw_if_cancelled();
      batch[m - m0] = blocks(m, active);
    });
    bool any = false;
    for (int k = 0; k < count; ++k) {
      if (!active[k]) continue;
      std::vector<LogDetResult> mine(m1 - m0);
      for (int m = m0; m < m1; ++m) {
        mine[m - m0] = std::move(batch[m - m0][k]);
        const LogDetResult& r = mine[m - m0];
        if (!r.ok) throw std::runtime_error(fail_message(k, m, r));
        total[k] += r.s * (m == 0 ? 1.0 : 2.0);
      }
      if (!fixed_m_max && m1 - m0 >= 2 && tail_below_tolerance(mine, m1 - m0, total[k], order, tol))
        active[k] = 0;
      any = any || active[k];
    }
    if (!any) break;
  }
  return total;
}

}  // namespace roundtrip::blocks
