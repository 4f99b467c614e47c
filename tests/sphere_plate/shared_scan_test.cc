// The points of a material scan computed together (Geometry::at_frequency_shared: one set of
// momentum nodes and one Legendre recurrence per node for all spheres, solver/run.h
// SharedFrequencyValues) against each point run alone: the same numbers up to rounding, the
// same whatever the thread count, and every value computed ahead is used. Derived: the shared
// pass evaluates the same formulas (sphere_plate.cc) with the recurrence started at the lowest
// row any sphere needs.
#include <gtest/gtest.h>
#include <omp.h>

#include <cmath>
#include <cstdio>

#include "solver/blocks/plane_wave_nodes.h"
#include "solver/blocks/sphere_block.h"
#include "solver/constants.h"
#include "solver/geometries/sphere_plate.h"
#include "solver/materials/models.h"
#include "solver/run.h"
#include "solver/scatterers/sphere_body.h"
#include "solver/special/momentum_rule.h"

namespace roundtrip {
namespace {

// A recurrence started at a lower row changes entries at the level of rounding: 1e-12 is the
// band builder's own acceptance level against the full-range build (banded_w_test.cc).
constexpr double kRelTol = 1e-12;

std::shared_ptr<Geometry> sphere_over_own_plate(MaterialPtr m) {
  SpherePlateOptions o;
  o.radius = 5e-6;
  o.sphere = m;
  o.plate = make_half_space(m);
  o.rel_tol = 1e-3;
  return make_sphere_plate(o);
}

std::vector<std::shared_ptr<Geometry>> scan_geometries() {
  // Drude and plasma gold (common practice; Svetovoy et al., PRB 77, 035439 (2008)) and a
  // dielectric (eps = 4, invented) whose W bands differ from the metals'.
  const double wp = 9.0 * kRadPerSecondPerEv, gamma = 0.035 * kRadPerSecondPerEv;
  return {sphere_over_own_plate(make_drude("gold-drude", wp, gamma)),
          sphere_over_own_plate(make_plasma("gold-plasma", wp)),
          sphere_over_own_plate(make_constant("eps4", 4.0))};
}

RunOptions options() {
  RunOptions o;
  o.frequency.temperature_K = 300.0;
  o.frequency.rel_tol = 1e-3;
  o.quantities.gradient = true;
  return o;
}

double rel(double a, double b) { return std::abs(a - b) / std::abs(b); }

std::vector<RunResult> shared_runs(const std::vector<std::shared_ptr<Geometry>>& g,
                                   const std::vector<double>& gaps, SharedFrequencyValues& shared) {
  std::vector<RunResult> r;
  for (std::size_t k = 0; k < g.size(); ++k) {
    RunOptions o = options();
    o.shared = &shared;
    if (k == 0)
      for (std::size_t j = 1; j < g.size(); ++j) o.companions.push_back(g[j].get());
    r.push_back(run_sweep(*g[k], gaps, o));
  }
  return r;
}

TEST(SharedScan, MaterialScanComputedTogetherEqualsEachPointAlone) {
  const auto g = scan_geometries();
  ASSERT_TRUE(g[0]->shares_frequency_work_with(*g[1]));
  ASSERT_TRUE(g[0]->shares_frequency_work_with(*g[2]));
  // R/L = 50 and 20: blocks of more than 64 rows, built over bands (sphere_block.cc)
  const std::vector<double> gaps = {100e-9, 250e-9};
  SharedFrequencyValues shared;
  const std::vector<RunResult> together = shared_runs(g, gaps, shared);
  std::printf("values computed ahead %d, used %d\n", shared.stored(), shared.hits());
  EXPECT_GT(shared.hits(), 0);
  EXPECT_EQ(shared.hits(), shared.stored());  // same frequencies and accuracies at every point
  for (std::size_t k = 0; k < g.size(); ++k) {
    const RunResult alone = run_sweep(*g[k], gaps, options());
    for (std::size_t i = 0; i < gaps.size(); ++i) {
      const PointResult &a = together[k].points[i], &b = alone.points[i];
      ASSERT_TRUE(std::isfinite(a.energy) && std::isfinite(a.force) && std::isfinite(a.gradient));
      std::printf("point %zu, L = %g nm: rel. differences E %.1e, F %.1e, F' %.1e\n", k,
                  gaps[i] * 1e9, rel(a.energy, b.energy), rel(a.force, b.force),
                  rel(a.gradient, b.gradient));
      EXPECT_LE(rel(a.energy, b.energy), kRelTol) << k << " " << gaps[i];
      EXPECT_LE(rel(a.force, b.force), kRelTol) << k << " " << gaps[i];
      EXPECT_LE(rel(a.gradient, b.gradient), kRelTol) << k << " " << gaps[i];
      EXPECT_EQ(a.frequencies.terms.size(), b.frequencies.terms.size());
    }
  }
}

TEST(SharedScan, SharedScanDoesNotDependOnTheThreadCount) {
  const auto g = scan_geometries();
  const std::vector<double> gaps = {100e-9};
  const int before = omp_get_max_threads();
  omp_set_num_threads(1);
  SharedFrequencyValues s1;
  const auto one = shared_runs(g, gaps, s1);
  omp_set_num_threads(2);
  SharedFrequencyValues s2;
  const auto two = shared_runs(g, gaps, s2);
  omp_set_num_threads(before);
  for (std::size_t k = 0; k < g.size(); ++k) {
    EXPECT_EQ(one[k].points[0].energy, two[k].points[0].energy) << k;
    EXPECT_EQ(one[k].points[0].force, two[k].points[0].force) << k;
    EXPECT_EQ(one[k].points[0].gradient, two[k].points[0].gradient) << k;
  }
}

// Block level, where the spheres' bands differ: gold and a nearly transparent sphere (eps =
// 1.001, T_l ~ 1e-3 smaller, so its columns reach the negligible level at other rows) built
// together and each alone: the same recorded bands and zeros, entries within 1e-9
// (compare_sphere_blocks, the band builder's check against the full-range build).
TEST(SharedScan, BlocksBuiltTogetherEqualEachBuiltAlone) {
  const double R = 20e-6, L = 100e-9, D = R + L;  // R/L = 200
  const double xi = kSpeedOfLight / (2.0 * L);
  const double kappa = xi / kSpeedOfLight;
  const int lmax = 700;
  const auto vacuum = make_vacuum();
  const SphereBody gold{
      R, make_drude("gold-drude", 9.0 * kRadPerSecondPerEv, 0.035 * kRadPerSecondPerEv), {}};
  const SphereBody faint{R, make_constant("eps1.001", 1.001), {}};
  const MieLog mg = sphere_mie(gold, FieldKind::kElectromagnetic, xi, *vacuum, lmax);
  const MieLog mf = sphere_mie(faint, FieldKind::kElectromagnetic, xi, *vacuum, lmax);
  blocks::NodeSet ng, nf;
  const auto& rule = special::momentum_rule(2 * lmax, 2);
  blocks::fill_dynamic_nodes(rule, 2.0 * kappa * D, 2.0 * kappa, ng);
  nf = ng;
  for (std::size_t j = 0; j < ng.x.size(); ++j) ng.c_te[j] = 0.9, ng.c_tm[j] = -0.8;
  for (std::size_t j = 0; j < nf.x.size(); ++j) nf.c_te[j] = 1e-3, nf.c_tm[j] = -2e-3;
  const blocks::NodeSet* np[2] = {&ng, &nf};
  const MieLog* mp[2] = {&mg, &mf};
  int differing_bands = 0;
  for (int m : {0, 1, 7, 40}) {
    const auto both =
        blocks::sphere_dynamic_blocks(FieldKind::kElectromagnetic, m, lmax, np, mp, true);
    const LowRankBlock g =
        blocks::sphere_dynamic_block(FieldKind::kElectromagnetic, m, lmax, ng, mg, true);
    const LowRankBlock f =
        blocks::sphere_dynamic_block(FieldKind::kElectromagnetic, m, lmax, nf, mf, true);
    EXPECT_EQ(blocks::compare_sphere_blocks(both[0], g, m), "");
    EXPECT_EQ(blocks::compare_sphere_blocks(both[1], f, m), "");
    differing_bands += both[0].col_lo != both[1].col_lo || both[0].col_hi != both[1].col_hi;
  }
  EXPECT_GT(differing_bands, 0);  // the case this test is for
}

}  // namespace
}  // namespace roundtrip
