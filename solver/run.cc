// Separation sweeps (run.h). Each gap is independent and computed in full by one thread, so the
// numbers do not depend on the thread count or schedule.
#include "solver/run.h"

#include <fmt/format.h>
#include <omp.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <exception>
#include <map>
#include <mutex>
#include <stdexcept>
#include <utility>

#include "solver/frequency/frequency_rule.h"
#include "solver/guards.h"
#include "solver/parallel_for.h"

namespace roundtrip {
namespace {

double seconds_since(std::chrono::steady_clock::time_point t0) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

PointResult run_point(const Geometry& geometry, int index, double gap, const RunOptions& options) {
  const auto t0 = std::chrono::steady_clock::now();
  const DerivativeOrder order = options.quantities.order();
  PointResult p;
  p.gap = gap;
  int evaluations = 0;
  if (options.gap_started) options.gap_started(index);
  // One s(xi): a companion's value computed ahead by the scan's lead point, or computed here
  // (together with this point's companions, whose values go to `shared`).
  const auto compute = [&](double xi, double rel_tol) {
    std::optional<Spectral> ahead;
    if (options.shared) ahead = options.shared->take(&geometry, gap, xi, rel_tol, order);
    if (ahead) return *ahead;
    if (options.shared && !options.companions.empty()) {
      const std::vector<Spectral> all =
          geometry.at_frequency_shared(xi, gap, order, rel_tol, options.companions);
      for (std::size_t c = 0; c < options.companions.size(); ++c)
        options.shared->put(options.companions[c], gap, xi, rel_tol, order, all[c + 1]);
      return all.front();
    }
    return geometry.at_frequency_within(xi, gap, order, rel_tol);
  };
  // The frequencies the rule asks for first when they are known before any value (the Pade
  // terms, planned_frequency_terms) are computed ahead, several at once, one thread each, when
  // the geometry parallelises inside a frequency and more than one thread is free: its blocks
  // then run one after another on that thread, so no barrier inside a frequency waits for the
  // slowest block of a step (whole runs on 2 threads: the efficiency of a one-gap R/L = 1000
  // run went from 0.80 to 0.88, the Drude/plasma demo from 0.86 to 0.96). omp_set_num_threads(1)
  // makes the frequency's own parallel loops and Eigen run single-threaded, as inside the serial
  // block loop, so every value equals the one computed when asked (tests/sphere_plate: 1 and 2
  // threads bitwise). The journal is consulted first (a resumed run computes only what it lacks);
  // the rule then takes the values in its own order and records the computed ones as before.
  struct Ahead {
    Spectral s;
    bool from_store = false;
  };
  std::map<std::pair<double, double>, Ahead> ahead;
  if (geometry.parallel_inside() && omp_get_max_threads() > 1) {
    std::vector<std::pair<double, double>> todo;
    for (const auto& key :
         planned_frequency_terms(geometry.frequency_scale(gap), options.frequency)) {
      Spectral v;
      if (options.store && options.store->lookup(index, key.first, v))
        ahead[key] = Ahead{v, true};
      else
        todo.push_back(key);
    }
    std::vector<Spectral> values(todo.size());
    parallel_for(0, static_cast<long>(todo.size()), [&](long i) {
      omp_set_num_threads(1);
      throw_if_cancelled();
      values[i] = compute(todo[i].first, todo[i].second);
    });
    for (std::size_t i = 0; i < todo.size(); ++i) ahead[todo[i]] = Ahead{values[i], false};
  }
  // A frequency asked for again (the rule wants it more accurate) is computed anew; the store
  // keeps the last value per frequency, so a resumed run sees the more accurate one.
  std::vector<double> asked;
  auto s = [&](double xi, double rel_tol) {
    throw_if_cancelled();
    Spectral v;
    const bool again = std::find(asked.begin(), asked.end(), xi) != asked.end();
    asked.push_back(xi);
    const auto a = again ? ahead.end() : ahead.find({xi, rel_tol});
    if (a != ahead.end()) {
      v = a->second.s;
      if (!a->second.from_store && options.store) options.store->record(index, xi, v);
    } else if (again || !(options.store && options.store->lookup(index, xi, v))) {
      v = compute(xi, rel_tol);
      if (options.store) options.store->record(index, xi, v);
    }
    if (options.frequency_progress) options.frequency_progress(index, ++evaluations);
    return v;
  };
  FrequencySum sum = sum_over_frequencies(TolerantSpectralFunction(s),
                                          geometry.frequency_scale(gap), options.frequency);
  p = point_result(geometry, gap, order, std::move(sum), geometry.pfa(gap, options.frequency));
  p.extra = geometry.extra_quantities_of(gap, options.frequency, p.energy, p.energy_error);
  p.wall_seconds = seconds_since(t0);
  return p;
}

}  // namespace

void SharedFrequencyValues::put(const Geometry* g, double gap, double xi, double rel_tol,
                                DerivativeOrder order, const Spectral& s) {
  std::lock_guard<std::mutex> lock(mutex_);
  values_[Key{g, gap, xi, rel_tol, static_cast<int>(order)}] = s;
  ++stored_;
}

std::optional<Spectral> SharedFrequencyValues::take(const Geometry* g, double gap, double xi,
                                                    double rel_tol, DerivativeOrder order) {
  std::lock_guard<std::mutex> lock(mutex_);
  const auto it = values_.find(Key{g, gap, xi, rel_tol, static_cast<int>(order)});
  if (it == values_.end()) return std::nullopt;
  const Spectral s = it->second;
  values_.erase(it);
  ++hits_;
  return s;
}

int SharedFrequencyValues::hits() const {
  std::lock_guard<std::mutex> lock(mutex_);
  return hits_;
}

int SharedFrequencyValues::stored() const {
  std::lock_guard<std::mutex> lock(mutex_);
  return stored_;
}

PointResult point_result(const Geometry& geometry, double gap, DerivativeOrder order,
                         FrequencySum frequencies, std::optional<PfaValues> pfa) {
  PointResult p;
  p.gap = gap;
  p.frequencies = std::move(frequencies);
  // Signs as in geometry.h: F = -dE/dL, dF/dL = -d2E/dL2.
  p.energy = p.frequencies.total.value;
  p.force = order >= DerivativeOrder::kForce ? -p.frequencies.total.d1 : 0.0;
  p.gradient = order >= DerivativeOrder::kGradient ? -p.frequencies.total.d2 : 0.0;
  p.energy_error = p.frequencies.abs_error;
  p.pfa = pfa;
  p.truncation = geometry.truncation(gap);
  if (const std::string why = geometry.unverified_truncation(gap); !why.empty()) {
    p.frequencies.converged = false;
    p.frequencies.message += (p.frequencies.message.empty() ? "" : "; ") + why;
  }
  return p;
}

void fit_thetas(const Geometry& geometry, const RunOptions& options, RunResult& result) {
  const auto R = geometry.pfa_length();
  if (!R) return;
  std::vector<double> x, re, rf, rg;
  for (const auto& p : result.points) {
    if (!p.complete || !p.pfa) continue;
    x.push_back(p.gap / *R);
    re.push_back(p.energy / p.pfa->energy);
    rf.push_back(p.force / p.pfa->force);
    rg.push_back(p.gradient / p.pfa->gradient);
  }
  const double tol = options.frequency.rel_tol;
  result.theta_energy = fit_theta(x, re, tol);
  if (options.quantities.force || options.quantities.gradient)
    result.theta_force = fit_theta(x, rf, tol);
  if (options.quantities.gradient) result.theta_gradient = fit_theta(x, rg, tol);
}

RunResult run_sweep(const Geometry& geometry, const std::vector<double>& gaps,
                    const RunOptions& options) {
  if (const std::string err = options.frequency.validate(); !err.empty())
    throw std::invalid_argument("frequency options: " + err);
  if (options.threads < 0)
    throw std::invalid_argument(fmt::format("threads = {} must be >= 0", options.threads));
  for (std::size_t i = 0; i < gaps.size(); ++i)
    if (!std::isfinite(gaps[i]) || !(gaps[i] > 0.0))
      throw std::invalid_argument(
          fmt::format("gaps[{}] = {} m must be finite and > 0", i, gaps[i]));

  const auto t0 = std::chrono::steady_clock::now();
  // options.cancel becomes the flag the geometries poll inside a frequency (guards.h).
  std::optional<CancelScope> cancel_scope;
  if (options.cancel) cancel_scope.emplace(options.cancel);
  RunResult result;
  result.kind = geometry.kind();
  result.description = geometry.describe();
  result.scale = geometry.scale();
  result.pfa_length = geometry.pfa_length().value_or(0.0);
  result.points.resize(gaps.size());

  const int n = static_cast<int>(gaps.size());
  int threads = options.threads > 0 ? options.threads : omp_get_max_threads();
  if (geometry.parallel_inside() || n < 2) threads = 1;
  if (threads > n) threads = std::max(n, 1);
  result.threads = threads;

  std::mutex progress_mutex;
  int done = 0;
  std::exception_ptr failure;
#pragma omp parallel for schedule(dynamic, 1) num_threads(threads)
  for (int i = 0; i < n; ++i) {
    try {
      result.points[i] = run_point(geometry, i, gaps[i], options);
    } catch (const Cancelled&) {
      result.points[i].gap = gaps[i];
      result.points[i].complete = false;
      continue;
    } catch (...) {
      std::lock_guard<std::mutex> lock(progress_mutex);
      if (!failure) failure = std::current_exception();
      continue;
    }
    std::lock_guard<std::mutex> lock(progress_mutex);
    ++done;
    if (options.progress) options.progress(done, n);
  }
  if (failure) std::rethrow_exception(failure);
  result.cancelled = cancellation_requested();
  fit_thetas(geometry, options, result);
  result.wall_seconds = seconds_since(t0);
  return result;
}

}  // namespace roundtrip
