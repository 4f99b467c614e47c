// A sweep done in rounds of independent frequency tasks (solver/parallel/frequency_rounds.h,
// the work split of an MPI run) gives bit for bit the numbers of the serial run_sweep, for every
// geometry kind of the registry, at T = 0 and T > 0, with any number of task slots.
// Check: design (same frequencies, same per-term accuracies, same summation order inside the
// rule); compared exactly, as the README's "results identical for 1 and 2 threads" row.
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <functional>
#include <iostream>
#include <map>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

#include "io/case_file.h"
#include "io/kinds/kind.h"
#include "solver/blocks/m_sum.h"
#include "solver/geometries/axial_integral.h"
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

// The m sum computed in chunks and replayed (solver/blocks/m_sum.h) is sum_over_m bit for bit
// and stops at the same block, for a geometric fall-off (as the sphere's m terms beyond
// sqrt(R/L)) and for a fixed m_max. Synthetic blocks: their values only need to be exact
// functions of m.
TEST(MChunks, ReplayedChunksGiveTheWholeSumBitForBit) {
  for (const bool fixed : {false, true}) {
    SCOPED_TRACE(fixed);
    std::vector<int> calls;
    const auto block = [&](int m) {
      LogDetResult r;
      r.s = Spectral{-std::exp(-0.3 * m) * (1.0 + 1e-3 * m), 0.2 * std::exp(-0.31 * m),
                     -0.05 * std::exp(-0.29 * m)};
      return r;
    };
    const auto fail = [](int, const LogDetResult&) { return std::string("failed"); };
    const int mlimit = 200;
    const Spectral whole =
        blocks::sum_over_m(mlimit, fixed, DerivativeOrder::kGradient, 1e-6, block, fail);
    std::map<int, blocks::Chunk> chunks;
    for (int b = 0; b <= mlimit; b += 24) {
      blocks::Chunk c;
      c.begin = b;
      c.end = b + 24;
      const blocks::ChunkScope scope(&c);
      EXPECT_EQ(
          blocks::sum_over_m(mlimit, fixed, DerivativeOrder::kGradient, 1e-6, block, fail).value,
          0.0);
      ASSERT_TRUE(c.seen);
      EXPECT_EQ(c.mlimit, mlimit);
      chunks[b] = c;
    }
    // Only the first chunk known: the replay asks for block 24.
    int missing = -1, used = 0;
    const auto value = [&](bool all) {
      return [&, all](int m) -> std::optional<Spectral> {
        const int b = m - m % 24;
        if (!all && b > 0) return std::nullopt;
        used = std::max(used, m + 1);
        return chunks.at(b).values.at(m - b);
      };
    };
    EXPECT_FALSE(blocks::replay_sum_over_m(mlimit, fixed, DerivativeOrder::kGradient, 1e-6,
                                           value(false), &missing));
    // The first block needed beyond the first chunk (the walk samples m; m_walk.h).
    EXPECT_GE(missing, 24);
    EXPECT_LT(missing, 48);
    const auto total = blocks::replay_sum_over_m(mlimit, fixed, DerivativeOrder::kGradient, 1e-6,
                                                 value(true), &missing);
    ASSERT_TRUE(total);
    EXPECT_EQ(total->value, whole.value);
    EXPECT_EQ(total->d1, whole.d1);
    EXPECT_EQ(total->d2, whole.d2);
    if (fixed)
      EXPECT_EQ(used, mlimit + 1);
    else
      EXPECT_LT(used, mlimit / 2);  // stopped by the tail test, as the whole sum
  }
}

// The k_z integral computed in node chunks and replayed with stand-ins
// (solver/geometries/axial_integral.h) is de_integrate bit for bit, with the same nodes: each
// round computes, in chunks of 5 consecutive nodes, the nodes the replay asked for, until the
// replay needs no stand-in. Synthetic integrands (exact functions of u): e^{-u} times a slow
// oscillation (a smooth k_z integrand), a sharper peak near u = 0.05 (more levels than the
// stand-in model needs) and an algebraic u^-3 tail (a longer march than the model's).
TEST(AxialChunks, ReplayedNodeChunksGiveTheWholeIntegralBitForBit) {
  const std::vector<std::function<Spectral(double)>> integrands{
      [](double u) {
        const double e = std::exp(-u);
        return Spectral{-e * (1.0 + 0.3 * std::sin(u)), 2.0 * u * e, -4.0 * u * u * e};
      },
      [](double u) {
        const double p = 1.0 / (1.0 + 400.0 * (u - 0.05) * (u - 0.05));
        return Spectral{-p * std::exp(-u), p * std::exp(-2.0 * u), -p * std::exp(-3.0 * u)};
      },
      [](double u) {
        const double a = 1.0 / ((1.0 + u) * (1.0 + u) * (1.0 + u));
        return Spectral{-a, 3.0 * a / (1.0 + u), -12.0 * a / ((1.0 + u) * (1.0 + u))};
      }};
  for (std::size_t n = 0; n < integrands.size(); ++n)
    for (const double tol : {1e-5, 1e-8}) {
      SCOPED_TRACE(n);
      SCOPED_TRACE(tol);
      const auto& f = integrands[n];
      const double factor = 1.0 / (2.0 * 3.141592653589793 * 4e-7);  // as the cylinders' 1/(2 pi L)
      int serial_nodes = 0;
      const Spectral whole = cylinder::de_integrate(f, tol, &serial_nodes, nullptr, 1, factor);
      std::map<int, Spectral> known;
      int computed = 0, rounds = 0;
      std::optional<Spectral> total;
      // The first ask replays on stand-ins only, at a tolerance 10x looser (as SweepRounds,
      // which asks at the task's rel_tol before a chunk reports the integral's own).
      double ask_tol = 10.0 * tol;
      for (; rounds < 10; ++rounds) {
        std::vector<int> missing;
        const auto value = [&](int g) -> std::optional<Spectral> {
          const auto it = known.find(g);
          if (it == known.end()) return std::nullopt;
          return it->second;
        };
        total = cylinder::replay_de_integrate(ask_tol, 1, factor, value, &missing);
        if (total) break;
        ASSERT_FALSE(missing.empty());
        ASSERT_TRUE(std::is_sorted(missing.begin(), missing.end()));
        for (std::size_t a = 0; a < missing.size();) {
          std::size_t b = a + 1;
          while (b < missing.size() && missing[b] == missing[b - 1] + 1 && b - a < 5) ++b;
          blocks::Chunk c;
          c.begin = missing[a];
          c.end = missing[b - 1] + 1;
          {
            const blocks::ChunkScope scope(&c);
            EXPECT_EQ(cylinder::de_integrate(f, tol, nullptr, nullptr, 1, factor).value, 0.0);
          }
          ASSERT_TRUE(c.seen);
          ASSERT_EQ(c.sum, blocks::BlockSum::kAxial);
          EXPECT_EQ(c.tol, tol);
          EXPECT_EQ(c.factor, factor);
          ASSERT_EQ(static_cast<int>(c.values.size()), c.end - c.begin);
          for (int g = c.begin; g < c.end; ++g) known[g] = c.values[g - c.begin];
          computed += c.end - c.begin;
          ask_tol = c.tol;  // as SweepRounds: the chunk reports the integral's parameters
          a = b;
        }
      }
      ASSERT_TRUE(total);
      EXPECT_EQ(total->value, whole.value);
      EXPECT_EQ(total->d1, whole.d1);
      EXPECT_EQ(total->d2, whole.d2);
      EXPECT_LE(rounds, 4);               // stand-ins ask ahead: a few rounds
      EXPECT_GE(computed, serial_nodes);  // every serial node, plus a few the replay dropped
      EXPECT_LE(computed, 2 * serial_nodes + 8);
    }
}

// A failing node is reported as the serial run reports it, once the replay reaches it.
TEST(AxialChunks, AFailedNodeFailsTheReplayWithTheSerialMessage) {
  const auto f = [](double u) -> Spectral {
    if (u > 0.3 && u < 0.4) throw std::runtime_error("node failed at u in (0.3, 0.4)");
    return Spectral{-std::exp(-u), 0.0, 0.0};
  };
  EXPECT_THROW((void)cylinder::de_integrate(f, 1e-6, nullptr, nullptr), std::runtime_error);
  blocks::Chunk c;
  c.begin = 0;
  c.end = cylinder::kAxialLevel0Nodes;
  {
    const blocks::ChunkScope scope(&c);
    (void)cylinder::de_integrate(f, 1e-6, nullptr, nullptr);
  }
  ASSERT_GE(c.failed_at, 0);
  EXPECT_EQ(static_cast<int>(c.values.size()), c.failed_at);
  const auto value = [&](int g) -> std::optional<Spectral> {
    if (g < static_cast<int>(c.values.size())) return c.values[g];
    if (g == c.failed_at) throw std::runtime_error(c.failure);
    return std::nullopt;
  };
  try {
    (void)cylinder::replay_de_integrate(1e-6, 1, 1.0, value, nullptr);
    ADD_FAILURE() << "the replay did not fail";
  } catch (const std::runtime_error& e) {
    EXPECT_EQ(std::string(e.what()), "node failed at u in (0.3, 0.4)");
  }
}

// Node indices: t of every index is the t the serial loops reach (exact multiples of 2^-9).
TEST(AxialChunks, NodeIndicesGiveTheSerialAbscissae) {
  int g = 0;
  for (int k = 0; k < cylinder::kAxialLevel0Nodes; ++k, ++g)
    EXPECT_EQ(cylinder::axial_node_t(g), cylinder::kAxialTLeft + 0.5 * k);
  double h = 0.5;
  for (int level = 1; level <= cylinder::kAxialMaxLevel; ++level) {
    const double hn = h / 2.0;
    int i = 0;
    for (double t = cylinder::kAxialTLeft + hn; t < 8.5; t += h, ++i, ++g) {
      ASSERT_EQ(cylinder::axial_node_index(level, i), g);
      ASSERT_EQ(cylinder::axial_node_t(g), t);
    }
    h = hn;
  }
  EXPECT_EQ(g, cylinder::axial_node_count());
}

// A sphere-plate and a sphere-sphere with many m blocks and few frequencies (R = 300 um and two
// 150 um spheres, L = 3 um, 300 K: ~7 frequencies, fewer than kItemsPerSlot x 2 slots; R/L = 100,
// so the walk over m samples): with 2 and 4 slots the rounds cut the frequencies into m-block
// tasks (arithmetic runs of m) and still give the serial numbers bit for bit. Invented values.
TEST(FrequencyRounds, MBlockTasksGiveTheSerialNumbersBitForBit) {
  for (const char* kind : {"sphere-plate", "sphere-sphere"}) {
    SCOPED_TRACE(kind);
    std::string text = small_case(*io::find_geometry_kind(kind), "300 K");
    const auto swap = [&](const std::string& from, const std::string& to) {
      for (std::size_t at = text.find(from); at != std::string::npos; at = text.find(from, at))
        text.replace(at, from.size(), to), at += to.size();
    };
    swap("radius = \"1 um\"", "radius = \"RADIUS\"");
    swap("RADIUS", std::string(kind) == "sphere-plate" ? "300 um" : "150 um");
    swap("values = [\"400 nm\", \"700 nm\"]", "values = [\"3 um\"]");
    const io::CaseSpec spec = io::parse_case(text, "blocks.toml");
    const auto g = io::build_geometry(spec);
    RunOptions o;
    o.frequency = spec.frequency;
    o.quantities = spec.quantities;
    const RunResult serial = run_sweep(*g, spec.gaps, o);
    for (int slots : {2, 4}) {
      SCOPED_TRACE(slots);
      MapStore store;
      o.store = &store;
      parallel::RoundStats stats;
      const auto r = parallel::run_sweeps_in_rounds({{g.get(), spec.gaps, o, {}}}, slots, &stats);
      o.store = nullptr;
      expect_same(serial, r[0]);
      EXPECT_GT(stats.split_frequencies, 0);
      EXPECT_GT(stats.block_tasks, stats.split_frequencies);
      std::cout << kind << ", " << slots << " slots: " << stats.split_frequencies
                << " frequencies split into " << stats.block_tasks << " m-block tasks, "
                << stats.rounds << " rounds, " << stats.unused_blocks << " of " << stats.block_units
                << " blocks not used\n";
      // The chunks follow the walk over m (m_walk.h): most computed blocks are used.
      EXPECT_LE(3 * stats.unused_blocks, stats.block_units);
      // Every frequency the serial sum used is in the journal, split or not.
      for (const auto& t : serial.points[0].frequencies.terms)
        EXPECT_TRUE(store.written.count({0, t.xi})) << t.xi;
    }
  }
}

// A cylinder-plate and a cylinder-cylinder with one gap and few frequencies (R = 3 um, L = 3 um,
// 300 K, perfect conductors: ~6 frequencies, fewer than kItemsPerSlot x 2 slots): with 2 and 4
// slots the rounds cut the frequencies into k_z node tasks and still give the serial numbers bit
// for bit, and journal every frequency the serial sum used. Invented values.
TEST(FrequencyRounds, KzNodeTasksGiveTheSerialNumbersBitForBit) {
  for (const char* kind : {"cylinder-plate", "cylinder-cylinder"}) {
    SCOPED_TRACE(kind);
    std::string text = small_case(*io::find_geometry_kind(kind), "300 K");
    const auto swap = [&](const std::string& from, const std::string& to) {
      for (std::size_t at = text.find(from); at != std::string::npos; at = text.find(from, at))
        text.replace(at, from.size(), to), at += to.size();
    };
    swap("radius = \"1 um\"", "radius = \"3 um\"");
    swap("values = [\"400 nm\", \"700 nm\"]", "values = [\"3 um\"]");
    const io::CaseSpec spec = io::parse_case(text, "kz.toml");
    const auto g = io::build_geometry(spec);
    ASSERT_EQ(g->block_sum(), blocks::BlockSum::kAxial);
    RunOptions o;
    o.frequency = spec.frequency;
    o.quantities = spec.quantities;
    o.threads = 1;
    const RunResult serial = run_sweep(*g, spec.gaps, o);
    for (int slots : {2, 4}) {
      SCOPED_TRACE(slots);
      MapStore store;
      o.store = &store;
      parallel::RoundStats stats;
      const auto r = parallel::run_sweeps_in_rounds({{g.get(), spec.gaps, o, {}}}, slots, &stats);
      o.store = nullptr;
      expect_same(serial, r[0]);
      EXPECT_GT(stats.split_frequencies, 0);
      EXPECT_GT(stats.block_tasks, stats.split_frequencies);
      EXPECT_LE(stats.rounds, 8);
      std::cout << kind << ", " << slots << " slots: " << stats.split_frequencies
                << " frequencies split into " << stats.block_tasks << " node tasks, "
                << stats.rounds << " rounds, " << stats.unused_blocks << " of " << stats.block_units
                << " nodes not used\n";
      for (const auto& t : serial.points[0].frequencies.terms)
        EXPECT_TRUE(store.written.count({0, t.xi})) << t.xi;
    }
  }
}

// A grating-plate and a grating-grating with one gap and few frequencies (L = 3 um, 300 K: ~3
// Matsubara terms, fewer than kItemsPerSlot x 2 slots): with 2 and 4 slots the rounds cut the
// frequencies into Bloch node tasks (one round per refinement step), replay each integral on
// the gathered nodes and still give the serial numbers bit for bit (and the lateral force of
// grating-grating, from the replayed d/db component), and journal every frequency the serial
// sum used. Invented values.
TEST(FrequencyRounds, BlochNodeTasksGiveTheSerialNumbersBitForBit) {
  for (const char* kind : {"grating-plate", "grating-grating"}) {
    SCOPED_TRACE(kind);
    std::string text = small_case(*io::find_geometry_kind(kind), "300 K");
    const auto swap = [&](const std::string& from, const std::string& to) {
      for (std::size_t at = text.find(from); at != std::string::npos; at = text.find(from, at))
        text.replace(at, from.size(), to), at += to.size();
    };
    swap("values = [\"400 nm\", \"700 nm\"]", "values = [\"3 um\"]");
    const io::CaseSpec spec = io::parse_case(text, "bloch.toml");
    const auto g = io::build_geometry(spec);
    ASSERT_EQ(g->block_sum(), blocks::BlockSum::kBloch);
    RunOptions o;
    o.frequency = spec.frequency;
    o.quantities = spec.quantities;
    const RunResult serial = run_sweep(*g, spec.gaps, o);
    for (int slots : {2, 4}) {
      SCOPED_TRACE(slots);
      MapStore store;
      o.store = &store;
      parallel::RoundStats stats;
      // A fresh geometry: grating-grating keeps ds/db per frequency for the lateral force.
      const auto fresh = io::build_geometry(spec);
      const auto r =
          parallel::run_sweeps_in_rounds({{fresh.get(), spec.gaps, o, {}}}, slots, &stats);
      o.store = nullptr;
      expect_same(serial, r[0]);
      ASSERT_EQ(serial.points[0].extra.size(), r[0].points[0].extra.size());
      for (std::size_t i = 0; i < serial.points[0].extra.size(); ++i)
        EXPECT_EQ(serial.points[0].extra[i].value, r[0].points[0].extra[i].value) << i;
      EXPECT_GT(stats.split_frequencies, 0);
      EXPECT_GT(stats.block_tasks, stats.split_frequencies);
      EXPECT_LE(stats.rounds, 12);
      std::cout << kind << ", " << slots << " slots: " << stats.split_frequencies
                << " frequencies split into " << stats.block_tasks << " node tasks, "
                << stats.rounds << " rounds, " << stats.unused_blocks << " of " << stats.block_units
                << " nodes not used\n";
      for (const auto& t : serial.points[0].frequencies.terms)
        EXPECT_TRUE(store.written.count({0, t.xi})) << t.xi;
    }
  }
}

// A material scan of a sphere-plate (Drude and plasma gold) computed together, as the serial
// run computes its first point with the companions (solver/run.h): the rounds give both points'
// serial numbers bit for bit, with 1, 2 and 4 slots, and take most companion values from the
// lead's tasks. Invented values.
TEST(FrequencyRounds, AMaterialScanComputedTogetherGivesTheSerialNumbersBitForBit) {
  const auto& k = *io::find_geometry_kind("sphere-plate");
  std::string text = small_case(k, "300 K");
  const std::string drude = "material = \"gold-drude\"";
  const auto at = text.find(drude);
  ASSERT_NE(at, std::string::npos);
  std::string plasma = text;
  plasma.replace(at, drude.size(), "material = \"gold-plasma\"");
  const io::CaseSpec a = io::parse_case(text, "a.toml"), b = io::parse_case(plasma, "b.toml");
  const auto ga = io::build_geometry(a), gb = io::build_geometry(b);
  ASSERT_TRUE(ga->shares_frequency_work_with(*gb));
  RunOptions o;
  o.frequency = a.frequency;
  o.quantities = a.quantities;
  o.threads = 1;
  SharedFrequencyValues shared;
  RunOptions o0 = o, o1 = o;
  o0.shared = o1.shared = &shared;
  o0.companions = {gb.get()};
  const RunResult serial_a = run_sweep(*ga, a.gaps, o0);
  const RunResult serial_b = run_sweep(*gb, b.gaps, o1);
  ASSERT_GT(shared.hits(), 0);
  for (int slots : {1, 2, 4}) {
    SCOPED_TRACE(slots);
    std::vector<parallel::SweepInput> inputs{{ga.get(), a.gaps, o, {}}, {gb.get(), b.gaps, o, {}}};
    inputs[0].companions = {1};
    inputs[1].lead = 0;
    parallel::RoundStats stats;
    const auto r = parallel::run_sweeps_in_rounds(inputs, slots, &stats);
    expect_same(serial_a, r[0]);
    expect_same(serial_b, r[1]);
    EXPECT_EQ(stats.shared_values, shared.hits());
  }
}

}  // namespace
}  // namespace roundtrip
