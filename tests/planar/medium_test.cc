// Plates across a dielectric medium: the Lifshitz energy vanishes for a matched medium and
// changes sign when the medium's eps lies between the plates' (uses solver/geometries/plate_plate).
#include <gtest/gtest.h>

#include <cmath>

#include "solver/geometries/plate_plate.h"
#include "solver/materials/library.h"
#include "solver/materials/models.h"
#include "solver/planar/layered.h"
#include "solver/run.h"

namespace roundtrip {
namespace {

RunOptions options() {
  RunOptions o;
  o.frequency.rel_tol = 1e-7;  // far below the effects compared
  o.quantities.force = false;
  return o;
}

TEST(PlatesInMedium, MatchedMediumGivesNoInteraction) {
  // r = 0 when eps_plate = eps_medium (standard), so ln(1 - r r e^{-2 kappa L}) = 0.
  const MaterialPtr silica = builtin_material("silica");
  const PlanarPtr p = make_half_space(silica);
  const RunResult r = run_sweep(*make_plate_plate(p, p, silica), {20e-9, 200e-9}, options());
  for (const auto& pt : r.points) EXPECT_EQ(pt.energy, 0.0) << pt.gap;
}

TEST(PlatesInMedium, IntermediateMediumMakesEnergyRepulsive) {
  // eps_a < eps_m < eps_b at all xi: r_a r_b < 0, E > 0 (Dzyaloshinskii, Lifshitz, Pitaevskii,
  // Adv. Phys. 10, 165 (1961); measured by Munday, Capasso, Parsegian, Nature 457, 170 (2009)).
  const MaterialPtr a = make_constant("a", 2.0), m = make_constant("m", 3.0),
                    b = make_constant("b", 5.0);
  const RunResult rep =
      run_sweep(*make_plate_plate(make_half_space(a), make_half_space(b), m), {50e-9}, options());
  ASSERT_TRUE(std::isfinite(rep.points[0].energy));
  EXPECT_GT(rep.points[0].energy, 0.0);
  // Swapping the medium to the outside of the range restores attraction (eps_m < eps_a, eps_b).
  const RunResult att = run_sweep(
      *make_plate_plate(make_half_space(a), make_half_space(b), make_vacuum()), {50e-9}, options());
  EXPECT_LT(att.points[0].energy, 0.0);
}

TEST(PlatesInMedium, ThickCoatingActsAsItsOwnHalfSpace) {
  // A 10 um gold film on silicon at a 50 nm gap: kappa_Au^2 >= wp^2 xi/((xi+gamma) c^2), so
  // e^{-2 kappa t} < e^{-20} for xi > 5e-4 gamma = 2.7e10 rad/s; below that lies ~1e-5 of the
  // frequency scale c/(2L) = 3e15 rad/s. The energy equals gold half-spaces' (derived).
  const MaterialPtr au = builtin_material("gold-drude"), si = builtin_material("silicon");
  const PlanarPtr film = make_layered({{au, 10e-6}}, si), half = make_half_space(au);
  const double ef = run_sweep(*make_plate_plate(film, film), {50e-9}, options()).points[0].energy;
  const double eh = run_sweep(*make_plate_plate(half, half), {50e-9}, options()).points[0].energy;
  EXPECT_NEAR(ef / eh, 1.0, 1e-6);  // 10 x the requested rel_tol
}

TEST(PlatesInMedium, ThinGoldFilmAttractsLessThanBulkGold) {
  // A 5 nm gold film on silica is more transparent than bulk gold: weaker attraction at 100 nm
  // (Lifshitz with the Airy formula; the trend is standard, e.g. Bordag et al., Phys. Rep. 353, 1
  // (2001), sec. 5), and it lies between bulk gold and bare silica.
  const MaterialPtr au = builtin_material("gold-drude"), silica = builtin_material("silica");
  const PlanarPtr thin = make_layered({{au, 5e-9}}, silica), bulk = make_half_space(au),
                  bare = make_half_space(silica);
  const double et = run_sweep(*make_plate_plate(thin, thin), {100e-9}, options()).points[0].energy;
  const double eb = run_sweep(*make_plate_plate(bulk, bulk), {100e-9}, options()).points[0].energy;
  const double es = run_sweep(*make_plate_plate(bare, bare), {100e-9}, options()).points[0].energy;
  EXPECT_LT(eb, et);
  EXPECT_LT(et, es);
  EXPECT_LT(es, 0.0);
}

}  // namespace
}  // namespace roundtrip
