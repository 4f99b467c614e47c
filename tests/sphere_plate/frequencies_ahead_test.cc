// Frequencies computed ahead (solver/run.cc: the Pade terms, several at once, one thread each,
// when the geometry parallelises inside a frequency): the sweep's numbers, every term and every
// journaled value equal those of a one-thread run bit for bit, a resumed run takes what the
// journal holds and computes only the rest, and a material scan computed together gives the
// same companion values. Check: design (same values, same order of addition in the rule);
// compared exactly, as the README's "results identical for 1 and 2 threads" row.
#include <gtest/gtest.h>
#include <omp.h>

#include <map>
#include <utility>
#include <vector>

#include "solver/geometries/sphere_plate.h"
#include "solver/materials/library.h"
#include "solver/planar/planar.h"
#include "solver/run.h"

namespace roundtrip {
namespace {

class Store final : public ContributionStore {
 public:
  std::map<std::pair<int, double>, Spectral> loaded, written;
  int lookups = 0, hits = 0, records = 0;
  bool lookup(int gap, double xi, Spectral& s) override {
    ++lookups;
    const auto it = loaded.find({gap, xi});
    if (it == loaded.end()) return false;
    ++hits;
    s = it->second;
    return true;
  }
  void record(int gap, double xi, const Spectral& s) override {
    ++records;
    written[{gap, xi}] = s;
  }
};

std::shared_ptr<Geometry> sphere(const char* material) {
  SpherePlateOptions o;
  o.radius = 10e-6;
  o.sphere = builtin_material(material);
  o.plate = make_half_space(o.sphere);
  o.rel_tol = 1e-4;
  return make_sphere_plate(o);
}

// The thread count as `roundtrip run --threads N` sets it (the OpenMP default of the process).
RunOptions options(int threads, ContributionStore* store = nullptr) {
  omp_set_num_threads(threads);
  RunOptions o;
  o.frequency.temperature_K = 300.0;
  o.frequency.rel_tol = 1e-4;
  o.quantities.gradient = true;
  o.threads = threads;
  o.store = store;
  return o;
}

void expect_same(const RunResult& a, const RunResult& b) {
  ASSERT_EQ(a.points.size(), b.points.size());
  for (std::size_t i = 0; i < a.points.size(); ++i) {
    EXPECT_EQ(a.points[i].energy, b.points[i].energy);
    EXPECT_EQ(a.points[i].force, b.points[i].force);
    EXPECT_EQ(a.points[i].gradient, b.points[i].gradient);
    const auto &ta = a.points[i].frequencies.terms, &tb = b.points[i].frequencies.terms;
    ASSERT_EQ(ta.size(), tb.size());
    for (std::size_t j = 0; j < ta.size(); ++j) {
      EXPECT_EQ(ta[j].xi, tb[j].xi);
      EXPECT_EQ(ta[j].rel_tol, tb[j].rel_tol);
      EXPECT_EQ(ta[j].s.value, tb[j].s.value);
      EXPECT_EQ(ta[j].s.d2, tb[j].s.d2);
    }
  }
}

// Gold (Drude) sphere, R = 10 um, 3 gaps 100-300 nm (R/L 33-100), 300 K, E, F, F'.
const std::vector<double> kGaps = {100e-9, 170e-9, 300e-9};

TEST(FrequenciesAhead, TwoThreadsGiveTheOneThreadNumbersAndJournal) {
  const auto g = sphere("gold-drude");
  const int saved = omp_get_max_threads();
  Store s1, s2;
  const RunResult one = run_sweep(*g, kGaps, options(1, &s1));
  const RunResult two = run_sweep(*g, kGaps, options(2, &s2));
  omp_set_num_threads(saved);
  expect_same(one, two);
  EXPECT_EQ(s1.records, s2.records);
  EXPECT_EQ(s1.lookups, s2.lookups);  // the journal is asked once per first ask
  ASSERT_EQ(s1.written.size(), s2.written.size());
  for (const auto& [key, v] : s1.written) {
    ASSERT_TRUE(s2.written.count(key));
    EXPECT_EQ(v.value, s2.written.at(key).value);
    EXPECT_EQ(v.d2, s2.written.at(key).d2);
  }
  EXPECT_GT(one.points[0].frequencies.terms.size(), 10u);  // a Pade sum
}

TEST(FrequenciesAhead, AResumedRunTakesTheJournalAndComputesTheRest) {
  const auto g = sphere("gold-drude");
  const int saved = omp_get_max_threads();
  Store full;
  const RunResult whole = run_sweep(*g, kGaps, options(2, &full));
  // Half of the first gap's values and all of the second's are in the journal.
  Store resumed;
  int kept = 0;
  for (const auto& [key, v] : full.written)
    if (key.first == 1 || (key.first == 0 && kept++ % 2 == 0)) resumed.loaded[key] = v;
  const RunResult again = run_sweep(*g, kGaps, options(2, &resumed));
  omp_set_num_threads(saved);
  expect_same(whole, again);
  EXPECT_EQ(resumed.hits, static_cast<int>(resumed.loaded.size()));
  EXPECT_EQ(resumed.records, full.records - resumed.hits);
}

TEST(FrequenciesAhead, AMaterialScanComputedTogetherGivesTheSameCompanionValues) {
  const auto drude = sphere("gold-drude"), plasma = sphere("gold-plasma");
  const auto run_pair = [&](int threads) {
    SharedFrequencyValues shared;
    RunOptions lead = options(threads);
    lead.shared = &shared;
    lead.companions = {plasma.get()};
    RunOptions companion = lead;
    companion.companions.clear();
    companion.shared = &shared;
    std::vector<RunResult> r;
    r.push_back(run_sweep(*drude, kGaps, lead));
    r.push_back(run_sweep(*plasma, kGaps, companion));
    EXPECT_GT(shared.hits(), 0);
    return r;
  };
  const int saved = omp_get_max_threads();
  const auto one = run_pair(1), two = run_pair(2);
  omp_set_num_threads(saved);
  expect_same(one[0], two[0]);
  expect_same(one[1], two[1]);
}

}  // namespace
}  // namespace roundtrip
