#pragma once
// Layers of a grating with several materials per period, as the Fourier modal method stacks them
// (grating_fmm.h), and the geometry of an optional conformal coating (LamellarGrating::coating).
//
// Coating geometry (heights z above the substrate's top, the profile's trough h = 0; x from the
// crest in units of m):
//   inner surface: the profile h(x) (ridge material below it, substrate below z = 0);
//   outer surface: h_out(x), the coating fills h(x) < z < h_out(x), the gap medium lies above.
//   lamellar:  the ridge grown by t on every face with square corners (the Minkowski sum of ridge
//              and substrate with the square [-t, t]^2): h_out = h + t over |x| < f Lambda/2 + t,
//              t over the rest of the groove floor. Layers, top first (for t < h): the top slab
//              (t thick: coating of width f Lambda + 2t), the ridge layer (h - t: coating | ridge
//              | coating | gap), the bottom slab (t: ridge on the coating of the groove floor);
//              for t >= h the middle layer is a homogeneous coating film of t - h. f = 0 (no
//              ridges): a coating film t on the substrate h below the ridge-top plane, as the
//              uncoated f = 0 grating. Supported: 2t < (1 - f) Lambda (the grooves stay open) or
//              f = 1 (a coating film on a ridge film).
//   other profiles: the normal offset at distance t (the outer parallel curve; the Minkowski sum
//              with the disk of radius t, rounded over crests, cusped where the offsets of two
//              flanks meet): h_out(x) = max_{|u| <= t} [h(x + u) + sqrt(t^2 - u^2)] (derived),
//              evaluated at kOuterSamples + 1 points over a period (a scan of the maximum and a
//              golden-section refinement) and interpolated linearly (error ~ dx^2/(8 t) at a
//              rounded crest: 1e-3 nm at Lambda = 400 nm, t = 20 nm). Both surfaces are cut
//              into slices of at most (H + t)/`slices`, with the ridge's crest H a slice
//              boundary (ceil(S t/(H + t)) slices above it, ceil(S H/(H + t)) below), each slice
//              holding the mean level sets of both (as LamellarGrating::layers; a single
//              interval that closes inside the slice counts as [0, 0] there, which keeps the
//              crest's area). Supported: t < Lambda / 2.
// L is measured from the top of the coated crest (z = H + t).
#include <string>
#include <utility>
#include <vector>

#include "solver/scatterers/grating_fmm.h"

namespace roundtrip {

/// Materials of a layer's segments (the gap medium is the background, not listed).
enum class GratingPhase { kRidge = 1, kCoating = 2 };

/// One interval [lo, hi] (units of the period, within [-1/2, 1/2]) of a material.
struct GratingSegment {
  double lo = 0.0, hi = 0.0;
  GratingPhase phase = GratingPhase::kRidge;
};

/// A lamellar layer: thickness (m) and its non-gap segments (disjoint; the union of the segments
/// of each phase is even about x = 0).
struct GratingLayer {
  double thickness = 0.0;
  std::vector<GratingSegment> segments;
};

/// The layers the FMM stacks, top first: uncoated, `layers()` with every interval of the ridge;
/// coated, the staircase of the header (lamellar: exact, 3 layers or fewer).
std::vector<GratingLayer> grating_layers(const LamellarGrating& g);

/// Toeplitz matrix (M x M, entries c_{i-j}) of the Fourier coefficients of the piecewise-constant
/// function that is `background` off the segments and value(phase) on them:
///   c_p = background delta_p0 + sum_phases (v_k - background) sum_i (sin 2 pi p b_i -
///   sin 2 pi p a_i) / (2 pi p),  c_0 = background + sum_k (v_k - background) sum_i (b_i - a_i)
/// (exact coefficients of each segment; real for an even function; standard). The sines by
/// Boost's sin_pi, exact at the integers (a full period gives c_p = 0 exactly).
Eigen::MatrixXd segment_toeplitz(double background, double ridge, double coating,
                                 const std::vector<GratingSegment>& segments, int m);

/// Height of the top of the coated profile above the substrate's top: H + t (H uncoated).
double grating_top(const LamellarGrating& g);

/// Height of the outer (coated) surface at x (m, any x; the profile itself when uncoated).
double coated_height_at(const LamellarGrating& g, double x);

/// The set {x : h_out(x) > z} in one period as intervals in units of the period (header).
std::vector<std::pair<double, double>> coated_set(const LamellarGrating& g, double z);

/// A vertical column of the sample for the PFA: its weight (fraction of the period), the depth of
/// its top below the top of the grating (m) and, from its top down, the coating and ridge
/// thicknesses (m) on the substrate.
struct GratingColumn {
  double weight = 0.0, below_top = 0.0, coating = 0.0, ridge = 0.0;
};
/// Lamellar: the exact columns (ridge, coated walls, groove); other profiles: `samples` columns
/// by the midpoint rule over half a period (even profile).
std::vector<GratingColumn> grating_columns(const LamellarGrating& g, int samples);

/// Why the coating's geometry is not built (thickness not > 0 or not finite, a coating that fills
/// the grooves); empty when it is (header: what is supported).
std::string coating_problem(const LamellarGrating& g);

}  // namespace roundtrip
