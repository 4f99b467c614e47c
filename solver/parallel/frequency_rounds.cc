// Sweeps in rounds of independent frequency tasks (frequency_rounds.h).
#include "solver/parallel/frequency_rounds.h"

#include <omp.h>

#include <algorithm>
#include <array>
#include <bit>
#include <chrono>
#include <cmath>
#include <cstdlib>
#include <exception>
#include <stdexcept>

#include "solver/geometries/axial_integral.h"
#include "solver/guards.h"

namespace roundtrip::parallel {
namespace {

std::uint64_t bits(double x) { return std::bit_cast<std::uint64_t>(x); }

double seconds_since(std::chrono::steady_clock::time_point t0) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

// A stand-in for s(xi) not computed yet: the nearest known value of the gap scaled by
// exp(-(xi - xi_n)/xi_scale) (every round trip decays like that at large xi), else the plan's
// model -exp(-xi/xi_scale) with its gap derivatives (solver/plan.cc). Only steers which
// frequencies a round asks for; never enters a result.
Spectral surrogate(double xi, double xi_scale, double gap,
                   const std::vector<std::pair<double, Spectral>>& known) {
  const std::pair<double, Spectral>* near = nullptr;
  for (const auto& k : known)
    if (!near || std::abs(k.first - xi) < std::abs(near->first - xi)) near = &k;
  if (near) return near->second * std::exp(-(xi - near->first) / xi_scale);
  const double u = xi / xi_scale, e = -std::exp(-u);
  return Spectral{e, e * (1.0 + u) / gap, e * (1.0 + u) * (1.0 + u) / (gap * gap)};
}

}  // namespace

TaskValue compute_task(const std::vector<SweepInput>& inputs, const Task& task) {
  throw_if_cancelled();
  // Fault injection for the tests (DEVELOPERS.md): the MPI rank named by
  // ROUNDTRIP_FAULT_INJECT_RANK fails its tasks as a solver failure would.
  static const int fail_rank = [] {
    const char* f = std::getenv("ROUNDTRIP_FAULT_INJECT_RANK");
    const char* r = std::getenv("OMPI_COMM_WORLD_RANK");
    return f && *f && r && std::atoi(f) == std::atoi(r) ? std::atoi(f) : -1;
  }();
  if (fail_rank >= 0)
    throw std::runtime_error(
        "fault injected by ROUNDTRIP_FAULT_INJECT_RANK on this rank (a test of failure handling)");
  const SweepInput& in = inputs.at(task.point);
  const double gap = in.gaps.at(task.gap);
  const auto t0 = std::chrono::steady_clock::now();
  TaskValue v;
  if (task.kind == TaskKind::kFrequency && !in.companions.empty()) {
    std::vector<const Geometry*> others;
    for (int k : in.companions) others.push_back(inputs.at(k).geometry);
    std::vector<Spectral> all = in.geometry->at_frequency_shared(
        task.xi, gap, in.options.quantities.order(), task.rel_tol, others);
    v.s = all.front();
    v.shared.assign(all.begin() + 1, all.end());
  } else if (task.kind == TaskKind::kFrequency) {
    v.s =
        in.geometry->at_frequency_within(task.xi, gap, in.options.quantities.order(), task.rel_tol);
  } else if (task.kind == TaskKind::kBlocks) {
    v.chunk.begin = task.m_begin;
    v.chunk.end = task.m_end;
    v.chunk.stride = task.m_stride;
    v.chunk.bloch_keys = task.bloch_keys;
    const blocks::ChunkScope scope(&v.chunk);
    v.s =
        in.geometry->at_frequency_within(task.xi, gap, in.options.quantities.order(), task.rel_tol);
  } else {
    const std::optional<PfaValues> p = in.geometry->pfa(gap, in.options.frequency);
    v.present = p.has_value();
    if (p) v.s = Spectral{p->energy, p->force, p->gradient};
  }
  v.seconds = seconds_since(t0);
  return v;
}

SweepRounds::SweepRounds(const std::vector<SweepInput>& inputs, int slots)
    : inputs_(inputs), slots_(std::max(1, slots)) {
  for (const auto& in : inputs_) {
    gaps_.emplace_back(in.gaps.size());
    lead_computed_.emplace_back(in.gaps.size());
  }
}

bool SweepRounds::replay(int point, int gap, std::vector<Task>* tasks, std::set<Key>* asked_now) {
  const SweepInput& in = inputs_[point];
  const double L = in.gaps[gap];
  const double xi_scale = in.geometry->frequency_scale(L);
  const double cost = in.gap_costs.empty() ? 1.0 : in.gap_costs[gap];
  std::vector<double> asked;
  std::set<std::uint64_t> missed;
  std::vector<std::pair<double, Spectral>> known;
  std::vector<Key> used;
  std::set<Key> taken;  // shared values this replay took (the serial take removes them)
  bool complete = true;
  // The same calls run_point (solver/run.cc) makes, answered from what is known.
  const auto s = [&](double xi, double rel_tol) -> Spectral {
    const bool again = std::find(asked.begin(), asked.end(), xi) != asked.end();
    asked.push_back(xi);
    if (!again) {
      const XiKey xk{point, gap, bits(xi)};
      auto it = journal_.find(xk);
      if (it == journal_.end()) {
        Spectral v;
        std::optional<Spectral> loaded;
        if (in.options.store && in.options.store->lookup(gap, xi, v)) loaded = v;
        it = journal_.emplace(xk, loaded).first;
      }
      if (it->second) {
        known.emplace_back(xi, *it->second);
        return *it->second;
      }
    }
    const Key k{point, gap, bits(xi), bits(rel_tol)};
    if (in.lead >= 0 && lead_computed_[in.lead][gap].count({bits(xi), bits(rel_tol)}) &&
        taken.insert(k).second) {
      const Spectral v = shared_.at(k);
      if (shared_recorded_.insert(k).second) {
        ++stats_.shared_values;
        if (ContributionStore* store = in.options.store) store->record(gap, xi, v);
      }
      known.emplace_back(xi, v);
      return v;
    }
    auto it = values_.find(k);
    if (it == values_.end())
      if (const auto sp = splits_.find(k); sp != splits_.end())
        if (const std::optional<Spectral> v = settle(k, sp->second, tasks)) {
          it = values_.emplace(k, *v).first;
          if (ContributionStore* store = in.options.store) store->record(gap, xi, *v);
        }
    if (it != values_.end()) {
      used.push_back(k);
      known.emplace_back(xi, it->second);
      return it->second;
    }
    complete = false;
    // A re-ask of a value that is itself a stand-in waits for the real value (next round).
    if (!missed.count(bits(xi)) && !splits_.count(k) && asked_now->insert(k).second)
      tasks->push_back(Task{TaskKind::kFrequency, point, gap, xi, rel_tol, cost});
    missed.insert(bits(xi));
    return surrogate(xi, xi_scale, L, known);
  };
  FrequencySum sum;
  try {
    sum = sum_over_frequencies(TolerantSpectralFunction(s), xi_scale, in.options.frequency);
  } catch (...) {
    if (complete) throw;  // the serial run fails the same way
    return false;         // a stand-in led the rule astray: the real values decide next round
  }
  if (!complete) return false;
  GapState& st = gaps_[point][gap];
  st.finished = true;
  st.sum = std::move(sum);
  used_.insert(used.begin(), used.end());
  if (!in.companions.empty())
    for (const Key& k : used) lead_computed_[point][gap].insert({std::get<2>(k), std::get<3>(k)});
  if (progress_ && progress_->gap_done) progress_->gap_done(point, gap);
  return true;
}

std::optional<Spectral> SweepRounds::settle(const Key& key, Split& split,
                                            std::vector<Task>* tasks) {
  if (split.whole) return split.whole;
  if (split.sum == blocks::BlockSum::kBloch) return settle_bloch(key, split, tasks);
  return split.sum == blocks::BlockSum::kAxial ? settle_axial(key, split, tasks)
                                               : settle_m(key, split, tasks);
}

std::optional<Spectral> SweepRounds::settle_bloch(const Key& key, Split& split,
                                                  std::vector<Task>* tasks) {
  const auto& [point, gap, xi, rel_tol] = key;
  const SweepInput& in = inputs_[point];
  // The geometry's own walk on the gathered nodes (frequency_rounds.h): the serial value, or
  // the nodes of the first step not gathered yet.
  blocks::Chunk replay;
  replay.bloch_replay = &split.bloch;
  try {
    const blocks::ChunkScope scope(&replay);
    const Spectral v = in.geometry->at_frequency_within(std::bit_cast<double>(xi), in.gaps.at(gap),
                                                        in.options.quantities.order(),
                                                        std::bit_cast<double>(rel_tol));
    stats_.unused_blocks +=
        static_cast<int>(static_cast<long>(split.bloch.size()) - replay.bloch_used);
    split.bloch.clear();  // the value is kept in values_
    return v;
  } catch (const blocks::BlochNodesMissing&) {
  }
  // One step per round: ask once per round (a gap's replay may ask for xi again).
  if (!chunks_asked_.insert({key, -1}).second) return std::nullopt;
  const std::vector<blocks::BlochKey>& ask = replay.bloch_missing;
  const int parts = std::max(1, std::min(split.parts, static_cast<int>(ask.size())));
  const std::size_t per = (ask.size() + parts - 1) / parts;
  for (std::size_t a = 0; a < ask.size(); a += per) {
    const std::size_t b = std::min(ask.size(), a + per);
    Task t{TaskKind::kBlocks,
           point,
           gap,
           std::bit_cast<double>(xi),
           std::bit_cast<double>(rel_tol),
           split.unit_cost * static_cast<double>(b - a),
           split.next_chunk,
           split.next_chunk + 1};
    ++split.next_chunk;
    t.bloch_keys.assign(ask.begin() + static_cast<std::ptrdiff_t>(a),
                        ask.begin() + static_cast<std::ptrdiff_t>(b));
    tasks->push_back(std::move(t));
  }
  return std::nullopt;
}

std::optional<Spectral> SweepRounds::settle_m(const Key& key, Split& split,
                                              std::vector<Task>* tasks) {
  if (!split.m_meta) return std::nullopt;  // the first round's chunks are still out
  const blocks::Chunk& meta = *split.m_meta;
  int missing = 0, used = 0;
  std::vector<int> needed;
  const auto value = [&](int m) -> std::optional<Spectral> {
    if (const auto f = split.m_failed.find(m); f != split.m_failed.end())
      throw std::runtime_error(f->second);  // as serial
    const auto v = split.m_values.find(m);
    if (v == split.m_values.end()) return std::nullopt;
    ++used;
    return v->second;
  };
  const std::optional<Spectral> total = blocks::replay_sum_over_m(
      meta.mlimit, meta.fixed_m_max, meta.order, meta.tol, value, &missing, &needed);
  if (total) {
    stats_.unused_blocks += std::max(0, split.m_computed - used);
    split.m_values.clear();  // the value is kept in values_
    return total;
  }
  // The blocks of the walk's step that are missing, as arithmetic runs (one task each).
  const auto& [point, gap, xi, rel_tol] = key;
  for (std::size_t i = 0; i < needed.size();) {
    std::size_t j = i + 1;
    const int stride = j < needed.size() ? needed[j] - needed[i] : 1;
    while (j < needed.size() && needed[j] - needed[j - 1] == stride) ++j;
    if (chunks_asked_.insert({key, needed[i]}).second)
      tasks->push_back(Task{TaskKind::kBlocks, point, gap, std::bit_cast<double>(xi),
                            std::bit_cast<double>(rel_tol), split.cost / split.parts, needed[i],
                            needed[j - 1] + 1, stride});
    i = j;
  }
  return std::nullopt;
}

std::optional<Spectral> SweepRounds::settle_axial(const Key& key, Split& split,
                                                  std::vector<Task>* tasks) {
  const auto& [point, gap, xi, rel_tol] = key;
  // The integral's parameters from a delivered chunk; before any, the task's rel_tol (the
  // first ask only steers which nodes are computed, file comment of frequency_rounds.h).
  double tol = std::bit_cast<double>(rel_tol), factor = 1.0;
  int min_level = 1;
  if (!split.chunks.empty()) {
    const blocks::Chunk& meta = split.chunks.begin()->second;
    tol = meta.tol;
    min_level = meta.min_level;
    factor = meta.factor;
  }
  std::set<int> used;
  const auto value = [&](int g) -> std::optional<Spectral> {
    auto c = split.chunks.upper_bound(g);
    if (c == split.chunks.begin()) return std::nullopt;
    --c;
    const std::size_t i = static_cast<std::size_t>(g - c->second.begin);
    if (i < c->second.values.size()) {
      used.insert(g);
      return c->second.values[i];
    }
    if (c->second.failed_at == g) throw std::runtime_error(c->second.failure);  // as serial
    // Nodes after a failed one were not computed (the serial run need not reach the failure:
    // a chunk may run past the end of the level-0 march): asked again.
    if (g < c->second.end && c->second.failed_at < 0)
      throw std::logic_error("a k_z chunk holds fewer nodes than it was asked for");
    return std::nullopt;
  };
  std::vector<int> missing;
  const std::optional<Spectral> total =
      cylinder::replay_de_integrate(tol, min_level, factor, value, &missing);
  if (total) {
    int computed = 0;
    for (const auto& [b, c] : split.chunks) computed += static_cast<int>(c.values.size());
    stats_.unused_blocks += std::max(0, computed - static_cast<int>(used.size()));
    split.chunks.clear();  // the value is kept in values_
    return total;
  }
  // The nodes asked for, cut into runs of consecutive indices of at most `per` nodes each.
  std::vector<int> ask;
  for (int g : missing)
    if (!chunks_asked_.count({key, g})) ask.push_back(g);
  if (ask.empty()) return std::nullopt;
  const int parts = std::max(1, split.parts);
  const int per = static_cast<int>((ask.size() + parts - 1) / parts);
  for (std::size_t a = 0; a < ask.size();) {
    std::size_t b = a + 1;
    while (b < ask.size() && ask[b] == ask[b - 1] + 1 && static_cast<int>(b - a) < per) ++b;
    for (std::size_t j = a; j < b; ++j) chunks_asked_.insert({key, ask[j]});
    tasks->push_back(Task{TaskKind::kBlocks, point, gap, std::bit_cast<double>(xi),
                          std::bit_cast<double>(rel_tol),
                          split.unit_cost * static_cast<double>(b - a), ask[a], ask[b - 1] + 1});
    a = b;
  }
  return std::nullopt;
}

void SweepRounds::split_largest(std::vector<Task>& tasks) {
  if (slots_ < 2) return;
  double total = 0.0;
  for (const Task& t : tasks) total += t.cost;
  const double target = total / (kItemsPerSlot * slots_);
  std::vector<Task> out;
  for (const Task& t : tasks) {
    const SweepInput& in = inputs_[t.point];
    const blocks::BlockSum kind = in.geometry->block_sum();
    if (t.kind != TaskKind::kFrequency || !(t.cost > target) || kind == blocks::BlockSum::kNone ||
        !in.companions.empty()) {
      out.push_back(t);
      continue;
    }
    const Key k{t.point, t.gap, bits(t.xi), bits(t.rel_tol)};
    if (kind == blocks::BlockSum::kBloch) {
      // The first step's nodes (settle_bloch), in about cost / target chunks; later steps in as
      // many. The node cost: the task's cost over the nodes of the first step and the next one
      // (a walk takes about two steps at the tolerances in use).
      const int parts = static_cast<int>(std::ceil(t.cost / target));
      if (parts < 2) {
        out.push_back(t);
        continue;
      }
      Split sp;
      sp.sum = kind;
      sp.parts = parts;
      sp.cost = t.cost;
      Split& placed = splits_.emplace(k, std::move(sp)).first->second;
      std::vector<Task> first;
      if (settle_bloch(k, placed, &first)) {  // no Bloch integral at this xi: not cut
        splits_.erase(k);
        out.push_back(t);
        continue;
      }
      long nodes = 0;
      for (const Task& b : first) nodes += static_cast<long>(b.bloch_keys.size());
      placed.unit_cost = t.cost / (2.0 * static_cast<double>(std::max(1L, nodes)));
      for (Task& b : first) {
        b.cost = placed.unit_cost * static_cast<double>(b.bloch_keys.size());
        out.push_back(std::move(b));
      }
      ++stats_.split_frequencies;
      continue;
    }
    if (kind == blocks::BlockSum::kAxial) {
      // The nodes a stand-in replay asks for (settle_axial), in about cost / target chunks.
      std::vector<int> nodes;
      (void)cylinder::replay_de_integrate(
          t.rel_tol, 1, 1.0, [](int) { return std::nullopt; }, &nodes);
      const int parts = static_cast<int>(
          std::min<double>(static_cast<double>(nodes.size()), std::ceil(t.cost / target)));
      if (parts < 2) {
        out.push_back(t);
        continue;
      }
      Split sp;
      sp.sum = kind;
      sp.parts = parts;
      sp.cost = t.cost;
      sp.unit_cost = t.cost / static_cast<double>(nodes.size());
      Split& placed = splits_.emplace(k, std::move(sp)).first->second;
      (void)settle_axial(k, placed, &out);
      ++stats_.split_frequencies;
      continue;
    }
    const FrequencyCost fc =
        in.geometry->cost(in.gaps[t.gap], in.options.quantities.order(), t.rel_tol);
    const std::vector<std::array<int, 3>> runs =
        blocks::likely_m_chunks(static_cast<int>(std::min(fc.blocks, 1e6)));
    const int parts =
        static_cast<int>(std::min(static_cast<double>(runs.size()), std::ceil(t.cost / target)));
    if (parts < 2) {
      out.push_back(t);
      continue;
    }
    Split sp;
    sp.sum = kind;
    sp.parts = static_cast<int>(runs.size());
    sp.cost = t.cost;
    for (const auto& [b, e, stride] : runs) {
      chunks_asked_.insert({k, b});
      out.push_back(Task{TaskKind::kBlocks, t.point, t.gap, t.xi, t.rel_tol, t.cost / sp.parts, b,
                         e, stride});
    }
    splits_.emplace(k, std::move(sp));
    ++stats_.split_frequencies;
  }
  tasks = std::move(out);
}

std::vector<Task> SweepRounds::next_round() {
  std::vector<Task> tasks;
  std::set<Key> asked_now;
  chunks_asked_.clear();
  for (int p = 0; p < static_cast<int>(inputs_.size()); ++p)
    for (int g = 0; g < static_cast<int>(inputs_[p].gaps.size()); ++g) {
      GapState& st = gaps_[p][g];
      if (!st.pfa_done && stats_.rounds == 0)
        tasks.push_back(Task{TaskKind::kPfa, p, g, 0.0, 0.0, 0.0});  // cheap: handed out last
      // A companion waits for its lead's gap (file comment).
      const int lead = inputs_[p].lead;
      if (!st.finished && (lead < 0 || gaps_[lead][g].finished)) replay(p, g, &tasks, &asked_now);
    }
  split_largest(tasks);
  std::stable_sort(tasks.begin(), tasks.end(), [](const Task& a, const Task& b) {
    if (a.cost != b.cost) return a.cost > b.cost;
    if (a.kind != b.kind) return a.kind < b.kind;
    if (a.xi != b.xi) return a.xi < b.xi;  // low frequencies need the larger truncations
    return std::tie(a.point, a.gap, a.m_begin) < std::tie(b.point, b.gap, b.m_begin);
  });
  if (!tasks.empty()) ++stats_.rounds;
  return tasks;
}

void SweepRounds::deliver(const Task& task, const TaskValue& value) {
  ++stats_.tasks;
  stats_.task_seconds += value.seconds;
  GapState& st = gaps_[task.point][task.gap];
  st.seconds += value.seconds;
  if (task.kind == TaskKind::kPfa) {
    st.pfa_done = true;
    if (value.present) st.pfa = PfaValues{value.s.value, value.s.d1, value.s.d2};
    return;
  }
  if (progress_ && (task.kind == TaskKind::kFrequency || task.m_begin == 0)) {
    if (st.frequencies++ == 0 && progress_->gap_started)
      progress_->gap_started(task.point, task.gap);
    if (progress_->frequency) progress_->frequency(task.point, task.gap, st.frequencies);
  }
  if (task.kind == TaskKind::kBlocks) {
    ++stats_.block_tasks;
    stats_.block_units += static_cast<int>(value.chunk.values.size());
    Split& sp = splits_.at(Key{task.point, task.gap, bits(task.xi), bits(task.rel_tol)});
    if (!value.chunk.seen) sp.whole = value.s;
    if (sp.sum == blocks::BlockSum::kBloch) {
      const blocks::Chunk& c = value.chunk;
      const std::size_t nc = static_cast<std::size_t>(c.bloch_components);
      if (c.seen && c.bloch_values.size() != nc * task.bloch_keys.size())
        throw std::logic_error("a Bloch chunk holds other nodes than it was asked for");
      stats_.block_units -= static_cast<int>(c.values.size());
      stats_.block_units += static_cast<int>(task.bloch_keys.size());
      for (std::size_t i = 0; c.seen && i < task.bloch_keys.size(); ++i)
        sp.bloch[task.bloch_keys[i]].assign(
            c.bloch_values.begin() + static_cast<std::ptrdiff_t>(i * nc),
            c.bloch_values.begin() + static_cast<std::ptrdiff_t>((i + 1) * nc));
      return;
    }
    if (sp.sum == blocks::BlockSum::kM) {
      const blocks::Chunk& c = value.chunk;
      if (c.seen && !sp.m_meta) {
        sp.m_meta = c;
        sp.m_meta->values.clear();
      }
      for (std::size_t i = 0; i < c.values.size(); ++i)
        sp.m_values[task.m_begin + static_cast<int>(i) * task.m_stride] = c.values[i];
      if (c.failed_at >= 0) sp.m_failed[c.failed_at] = c.failure;
      sp.m_computed += static_cast<int>(c.values.size());
      return;
    }
    sp.chunks[task.m_begin] = value.chunk;
    return;
  }
  values_[Key{task.point, task.gap, bits(task.xi), bits(task.rel_tol)}] = value.s;
  const std::vector<int>& companions = inputs_[task.point].companions;
  for (std::size_t i = 0; i < value.shared.size() && i < companions.size(); ++i)
    shared_[Key{companions[i], task.gap, bits(task.xi), bits(task.rel_tol)}] = value.shared[i];
  if (ContributionStore* store = inputs_[task.point].options.store)
    store->record(task.gap, task.xi, value.s);
}

std::vector<RunResult> SweepRounds::results(double wall_seconds) {
  std::vector<RunResult> out;
  for (int p = 0; p < static_cast<int>(inputs_.size()); ++p) {
    const SweepInput& in = inputs_[p];
    const Geometry& g = *in.geometry;
    RunResult r;
    r.kind = g.kind();
    r.description = g.describe();
    r.scale = g.scale();
    r.pfa_length = g.pfa_length().value_or(0.0);
    for (int k = 0; k < static_cast<int>(in.gaps.size()); ++k) {
      const GapState& st = gaps_[p][k];
      if (st.finished && st.pfa_done) {
        r.points.push_back(
            point_result(g, in.gaps[k], in.options.quantities.order(), st.sum, st.pfa));
        r.points.back().wall_seconds = st.seconds;  // task time (not wall time) of this gap
        // Per-gap extras (the lateral force of grating-grating) on this rank, after the sum.
        r.points.back().extra = g.extra_quantities_of(
            in.gaps[k], in.options.frequency, r.points.back().energy, r.points.back().energy_error);
      } else {
        PointResult incomplete;
        incomplete.gap = in.gaps[k];
        incomplete.complete = false;
        r.points.push_back(std::move(incomplete));
        r.cancelled = true;
      }
    }
    fit_thetas(g, in.options, r);
    r.wall_seconds = wall_seconds;
    out.push_back(std::move(r));
  }
  stats_.speculative = 0;
  for (const auto& [k, v] : values_)  // only finished gaps know which values they did not use
    if (!used_.count(k) && gaps_[std::get<0>(k)][std::get<1>(k)].finished) ++stats_.speculative;
  return out;
}

std::vector<RunResult> run_sweeps_in_rounds(const std::vector<SweepInput>& inputs, int slots,
                                            RoundStats* stats) {
  const auto t0 = std::chrono::steady_clock::now();
  std::optional<CancelScope> scope;
  if (!inputs.empty() && inputs.front().options.cancel)
    scope.emplace(inputs.front().options.cancel);
  SweepRounds rounds(inputs, slots);
  for (;;) {
    const std::vector<Task> tasks = rounds.next_round();
    if (tasks.empty()) break;
    const int n = static_cast<int>(tasks.size());
    std::vector<TaskValue> values(n);
    std::vector<char> done(n, 0);
    std::exception_ptr failure;
#pragma omp parallel for schedule(dynamic, 1) num_threads(std::max(1, slots))
    for (int i = 0; i < n; ++i) {
      // A task runs as on a rank's slot with one OpenMP thread (mpi.cc, Pool): without this, the
      // nested regions inside it would leave Eigen free to split a large product over threads,
      // and a block's rounding would depend on where it ran.
      omp_set_num_threads(1);
      try {
        values[i] = compute_task(inputs, tasks[i]);
        done[i] = 1;
      } catch (const Cancelled&) {
      } catch (...) {
#pragma omp critical(roundtrip_rounds_failure)
        if (!failure) failure = std::current_exception();
      }
    }
    if (failure) std::rethrow_exception(failure);
    for (int i = 0; i < n; ++i)
      if (done[i]) rounds.deliver(tasks[i], values[i]);
    if (cancellation_requested()) break;
  }
  std::vector<RunResult> out = rounds.results(seconds_since(t0));
  if (stats) *stats = rounds.stats();
  return out;
}

}  // namespace roundtrip::parallel
