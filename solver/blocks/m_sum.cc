#include "solver/blocks/m_sum.h"

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <vector>

namespace roundtrip::blocks {

Spectral sum_over_m(int mlimit, bool fixed_m_max, DerivativeOrder order, double tol,
                    const std::function<LogDetResult(int)>& block,
                    const std::function<std::string(int, const LogDetResult&)>& fail_message) {
  Spectral total;
  std::vector<LogDetResult> batch(kMBatch);
  for (int m0 = 0; m0 <= mlimit; m0 += kMBatch) {
    const int m1 = std::min(mlimit + 1, m0 + kMBatch);
#pragma omp parallel for schedule(dynamic, 1)
    for (int m = m0; m < m1; ++m) batch[m - m0] = block(m);
    for (int m = m0; m < m1; ++m) {
      const LogDetResult& r = batch[m - m0];
      if (!r.ok) throw std::runtime_error(fail_message(m, r));
      total += r.s * (m == 0 ? 1.0 : 2.0);
    }
    if (fixed_m_max || m1 - m0 < 2) continue;
    bool done = true;
    for (int c = 0; c < 1 + static_cast<int>(order); ++c) {
      auto comp = [&](const Spectral& v) { return c == 0 ? v.value : (c == 1 ? v.d1 : v.d2); };
      const double first = std::abs(comp(batch[0].s)), last = std::abs(comp(batch[m1 - m0 - 1].s));
      const double sum = std::abs(comp(total));
      if (last == 0.0) continue;
      const double r = std::pow(last / first, 1.0 / (m1 - m0 - 1));
      if (!(r < 0.95) || !(2.0 * last * r / (1.0 - r) <= 0.1 * tol * sum)) done = false;
    }
    if (done) break;
  }
  return total;
}

}  // namespace roundtrip::blocks
