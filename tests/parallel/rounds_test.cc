// A sweep done in rounds of independent frequency tasks (solver/parallel/frequency_rounds.h,
// the work split of an MPI run) gives bit for bit the numbers of the serial run_sweep, for every
// geometry kind of the registry, at T = 0 and T > 0, with any number of task slots.
// Check: design (same frequencies, same per-term accuracies, same summation order inside the
// rule); compared exactly, as the README's "results identical for 1 and 2 threads" row.
#include <gtest/gtest.h>

#include <string>

#include "io/case_file.h"
#include "io/kinds/kind.h"
#include "solver/parallel/frequency_rounds.h"

namespace roundtrip {
namespace {

// A small case of any kind (invented values): spheres and cylinders of 1 um at 400 and 700 nm
// (R/L <= 2.5), plates and gratings at the same gaps; cylinders need perfect conductors.
std::string small_case(const io::GeometryKind& k, const std::string& temperature) {
  const bool pec =
      k.lower.shape == geometry::Shape::kCylinder || k.upper.shape == geometry::Shape::kCylinder;
  std::string text = "geometry = \"" + k.name + "\"\n";
  for (const io::BodySlot* s : {&k.lower, &k.upper}) {
    if (!s->defaults_to.empty()) continue;
    text += "[" + s->table + "]\n";
    if (s->shape == geometry::Shape::kAtom) {
      text += "species = \"rubidium\"\n";
    } else if (s->shape == geometry::Shape::kGrating) {
      text +=
          "period = \"400 nm\"\nprofile = \"lamellar\"\nfilling = 0.5\ndepth = \"100 nm\"\n"
          "material = \"silicon\"\n";
    } else {
      if (s->shape != geometry::Shape::kPlate) text += "radius = \"1 um\"\n";
      text += pec ? "material = \"perfect-conductor\"\n" : "material = \"gold-drude\"\n";
    }
  }
  text += "[separations]\nvalues = [\"400 nm\", \"700 nm\"]\n[conditions]\ntemperature = \"" +
          temperature + "\"\n[compute]\nquantities = [\"energy\", \"force\", \"gradient\"]\n" +
          "[numerics]\nrel_tol = 1e-4\n";
  if (k.lower.shape == geometry::Shape::kGrating || k.upper.shape == geometry::Shape::kGrating)
    text += "orders = 2\n";  // a coarse grating: the split, not the grating, is under test
  return text;
}

void expect_same(const RunResult& a, const RunResult& b) {
  ASSERT_EQ(a.points.size(), b.points.size());
  for (std::size_t i = 0; i < a.points.size(); ++i) {
    const PointResult &p = a.points[i], &q = b.points[i];
    SCOPED_TRACE(p.gap);
    ASSERT_TRUE(q.complete);
    EXPECT_EQ(p.energy, q.energy);
    EXPECT_EQ(p.force, q.force);
    EXPECT_EQ(p.gradient, q.gradient);
    EXPECT_EQ(p.energy_error, q.energy_error);
    EXPECT_EQ(p.frequencies.converged, q.frequencies.converged);
    ASSERT_EQ(p.frequencies.terms.size(), q.frequencies.terms.size());
    for (std::size_t j = 0; j < p.frequencies.terms.size(); ++j) {
      EXPECT_EQ(p.frequencies.terms[j].xi, q.frequencies.terms[j].xi);
      EXPECT_EQ(p.frequencies.terms[j].s.value, q.frequencies.terms[j].s.value);
    }
    ASSERT_EQ(p.pfa.has_value(), q.pfa.has_value());
    if (p.pfa) {
      EXPECT_EQ(p.pfa->energy, q.pfa->energy);
      EXPECT_EQ(p.pfa->gradient, q.pfa->gradient);
    }
  }
  EXPECT_EQ(a.theta_energy.theta, b.theta_energy.theta);
}

TEST(FrequencyRounds, EveryKindGivesTheSerialNumbersBitForBitAtZeroAndRoomTemperature) {
  for (const auto& k : io::geometry_kinds())
    for (const std::string T : {"0 K", "300 K"}) {
      SCOPED_TRACE(k.name + " at " + T);
      const io::CaseSpec spec = io::parse_case(small_case(k, T), "rounds.toml");
      const auto g = io::build_geometry(spec);
      RunOptions o;
      o.frequency = spec.frequency;
      o.quantities = spec.quantities;
      o.threads = 1;
      const RunResult serial = run_sweep(*g, spec.gaps, o);
      for (int slots : {2}) {
        parallel::RoundStats stats;
        const auto r = parallel::run_sweeps_in_rounds({{g.get(), spec.gaps, o, {}}}, slots, &stats);
        ASSERT_EQ(r.size(), 1u);
        expect_same(serial, r[0]);
        EXPECT_GE(stats.rounds, 1);
        EXPECT_LE(stats.rounds, 8);  // stand-ins ask ahead: a few rounds, not one per term
      }
    }
}

// A store that answers from a fixed set (the journal of an interrupted run) and counts records.
class MapStore final : public ContributionStore {
 public:
  std::map<std::pair<int, double>, Spectral> loaded;
  int records = 0;
  bool lookup(int gap, double xi, Spectral& s) override {
    const auto it = loaded.find({gap, xi});
    if (it == loaded.end()) return false;
    s = it->second;
    return true;
  }
  void record(int gap, double xi, const Spectral& s) override {
    ++records;
    written[{gap, xi}] = s;
  }
  std::map<std::pair<int, double>, Spectral> written;
};

TEST(FrequencyRounds, AResumedRunUsesTheJournalLikeTheSerialRunAndRecordsEveryValue) {
  const auto& k = *io::find_geometry_kind("sphere-plate");
  const io::CaseSpec spec = io::parse_case(small_case(k, "300 K"), "rounds.toml");
  const auto g = io::build_geometry(spec);
  RunOptions o;
  o.frequency = spec.frequency;
  o.quantities = spec.quantities;
  o.threads = 1;
  MapStore full;
  o.store = &full;
  const RunResult reference = run_sweep(*g, spec.gaps, o);
  // Half of the recorded values survive, as after an interruption.
  MapStore half_serial, half_rounds;
  int i = 0;
  for (const auto& [key, s] : full.written)
    if (i++ % 2 == 0) half_serial.loaded[key] = half_rounds.loaded[key] = s;
  o.store = &half_serial;
  const RunResult serial = run_sweep(*g, spec.gaps, o);
  o.store = &half_rounds;
  parallel::RoundStats stats;
  const auto r = parallel::run_sweeps_in_rounds({{g.get(), spec.gaps, o, {}}}, 2, &stats);
  expect_same(serial, r[0]);
  expect_same(reference, r[0]);
  // Every value the serial run computes, plus those a stand-in asked for and the rule did not use.
  EXPECT_EQ(half_rounds.records - stats.speculative, half_serial.records);
}

}  // namespace
}  // namespace roundtrip
