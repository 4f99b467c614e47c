#pragma once
// Reflection operator of a lamellar (binary) 1D grating on a substrate at imaginary frequency,
// in the Rayleigh basis of diffraction orders, by the Fourier modal method (FMM) with Li's
// factorization rules (Li, JOSA A 13, 1870 (1996)) and a stable recursion of surface admittances
// (only decaying exponentials e^{-lambda h} <= 1 appear; in the spirit of the S-matrix
// recursion of Li, JOSA A 13, 1024 (1996)).
//
// Geometry and conventions (SI at the interface):
//   grooves along y, period Lambda along x, z up towards the gap; the ridge tops are z = 0, the
//   ridges (eps_r) occupy |x - m Lambda| < f Lambda / 2 for -h < z < 0 (an even profile), the
//   grooves hold the gap medium (eps_m), the substrate (eps_s) fills z < -h; the medium fills
//   z > 0. Imaginary frequency xi (rad/s); Bloch vector (k_x, k_y) (1/m); orders
//   n = -N..N with k_n = k_x + n G, G = 2 pi / Lambda; kappa_n = sqrt(k_n^2 + k_y^2 +
//   eps_m xi^2/c^2). Fields ~ e^{i(k_n x + k_y y)} e^{-omega t}, omega = i xi, so Maxwell's
//   equations in the layer are real: with h = Z_0 H and lengths in units of c/xi,
//     d_z (E_x, E_y) = P (h_x, h_y),   d_z (h_x, h_y) = Q (E_x, E_y),
//     P = [[K Ee^-1 k_y, -(K Ee^-1 K + 1)], [k_y^2 Ee^-1 + 1, -k_y Ee^-1 K]],
//     Q = [[-k_y K, K^2 + Ee], [-(k_y^2 + Ai), k_y K]],
//   K = diag(k_n), Ee = [[eps]] (Toeplitz of the Fourier coefficients; Laurent's rule for the
//   products eps E_y, eps E_z with E_y, E_z continuous across the ridge walls), Ai = [[1/eps]]^-1
//   (inverse rule for eps E_x = D_x, continuous across the walls) (derived from Maxwell's
//   equations with Li's rules). Modes: P Q w = lambda^2 w, lambda > 0, solved in the symmetric
//   form of grating_fmm.cc (h~ = (-h_y, h_x), Cholesky of P~; Eigen's self-adjoint solver).
//   Basis ("tangential E"): amplitudes of (E_x of orders -N..N, E_y of orders -N..N) at z = 0;
//   down-going waves ~ e^{+kappa z}, up-going ~ e^{-kappa z}; R maps down-going to up-going.
//   In this basis a planar body reflects order n as r_TE u u^T - r_TM v v^T, u = (-k_y, k_n)/k,
//   v = (k_n, k_y)/k (planar.h sign convention: a perfect conductor gives -1).
// Balanced basis (reflect at xi > 0; derived): in c/xi units the TM admittance of a vacuum order
//   is (q0/k)^2 times its TE admittance, so one matrix holding both lost (k/q0)^2 digits (1e-2
//   of a film at 1e8 rad/s) and a metal made it worse. reflect therefore works with lengths in
//   1/G (G = 2 pi/Lambda), q = xi/(c G), eps entering only as q^2 eps (finite as xi -> 0 for
//   Drude), and per order the components (e.u, e.v) and (h~.u/Y_TE, h~.v/Y_TM) with the gap
//   medium's Y_TE = kappa, Y_TM = q^2 eps_m/kappa: the gap's admittance is 1, every W, V entry is
//   a product or a same-sign sum (the TE mode's h~.v = v_y q^2 (Ee phi)_n/lambda; the TM mode's
//   e.u = u_x q^2 zeta_n/lambda, its K Ee^-1 K parts cancelling exactly), and R = U R' U^T at the
//   end (U the per-order rotation). reflect_coupled keeps the c/xi form as the reference. Every
//   eps is capped at 1e9 at xi > 0 (grating_fmm.cc: Li's inverse rule cannot hold a metal's
//   1/eps below the vacuum's rounding; gold reaches 1e9 below 3.5e9 rad/s).
// xi = 0 (electrostatics; dielectric ridges and substrate; lamellar Drude conductors instead use
//   the equipotential of grating_pec.h, conductor_lamellar_static, in this same potential
//   basis): TE does not see a dielectric
//   (mu = 1, the grating's static TE reflection is 0); TM is the potential phi with
//   d_z^2 phi = Ee^-1 (K Ai K + k_y^2 Ee) phi and continuity of phi and D_z = -Ee d_z phi (Li's
//   rules as above; derived). Basis: potential amplitudes of orders -N..N; a planar body
//   reflects the potential by -r_TM (its static limit).
#include <Eigen/Dense>
#include <memory>
#include <string>
#include <utility>
#include <vector>

#include "solver/materials/material.h"
#include "solver/planar/planar.h"

namespace roundtrip {

/// Profile of the grating's ridges over one period (heights above the lowest point of the
/// profile; x from the crest, the profile is even in x).
enum class GratingProfile {
  kLamellar,    ///< ridges of width f Lambda and height `depth` (rectangular)
  kSinusoidal,  ///< h(x) = A (1 + cos(2 pi x / Lambda)), A = `amplitude`, crest to trough 2A
  kTriangular,  ///< h(x) = H (1 - 2|x|/Lambda), H = `depth` (symmetric, apex at x = 0)
  kTable,       ///< piecewise-linear h(x) through `table` (x in [-Lambda/2, Lambda/2], even)
};

struct LamellarGrating {
  double period = 0.0;    ///< Lambda (m), > 0
  double filling = 0.0;   ///< f in [0, 1]: fraction of the period occupied by ridges
  double depth = 0.0;     ///< h (m), >= 0 (0: no layer, the substrate alone)
  MaterialPtr ridge;      ///< eps_r of the ridges
  MaterialPtr substrate;  ///< eps_s under the grooves and ridges
  std::string describe() const;
  // Non-lamellar profiles (additive; lamellar gratings leave these at their defaults).
  GratingProfile profile = GratingProfile::kLamellar;
  double amplitude = 0.0;  ///< sinusoidal: A (m)
  /// table: (x, h) points (m), x increasing over [-Lambda/2, Lambda/2], h(-x) = h(x), min h = 0
  std::vector<std::pair<double, double>> table;
  /// Staircase slices for non-lamellar profiles (equal thickness, ridge set at the slice's
  /// mid-height); 0 = not set (the geometry chooses it by a convergence test).
  int slices = 0;
  /// Optional conformal coating (additive; geometry, layers and checks in grating_coating.h): a
  /// film of `coating` (eps_c), `coating_thickness` t (m) thick, over the whole profile (ridge
  /// tops, walls and groove floors); the top of the coated crest is then z = 0. None when null.
  MaterialPtr coating;
  double coating_thickness = 0.0;
  bool coated() const { return coating != nullptr; }
  /// Crest-to-trough height (m): depth (lamellar, triangular, table), 2A (sinusoidal).
  double height() const;
  /// Height of the profile at x (m), x in m from the crest, any x (periodic).
  double height_at(double x) const;
  /// The ridge set {x : h(x) > z} in one period as intervals [a, b] in units of the period,
  /// within [-1/2, 1/2] and symmetric about 0 (exact for every profile kind).
  std::vector<std::pair<double, double>> ridge_set(double z) const;
  /// The lamellar layers the FMM stacks, top first: (thickness m, ridge set). Lamellar: one
  /// layer; other profiles: `slices` layers of equal thickness (a staircase, Moharam & Gaylord,
  /// JOSA 72, 1385 (1982) for the slicing of surface-relief profiles), each holding the
  /// profile's mean level set over the slice (area-preserving; grating_fmm.cc).
  std::vector<std::pair<double, std::vector<std::pair<double, double>>>> layers() const;
};

/// A grating bound to one imaginary frequency xi >= 0 (rad/s), a gap medium and an order count
/// N (orders -N..N). Ridges and substrate both perfect conductors (lamellar, xi > 0): the
/// grooves' own modal method (grating_pec.h) instead of the FMM, with the same basis and
/// interface (at xi = 0 its static basis (phi, psi) of dimension 2(2N+1), grating_pec.h). Throws
/// std::invalid_argument for a perfect conductor mixed with another material or a non-lamellar
/// perfect conductor (not built). At xi = 0, lamellar Drude-like ridges on a Drude-like
/// substrate (no coating) are one equipotential conductor: conductor_lamellar_static
/// (grating_pec.h) in the potential basis (dimension 2N+1; TE is zero for Drude); other static
/// conductors (plasma-model metals, mixes with a dielectric, coatings, non-lamellar profiles)
/// throw (not built).
class GratingAtFrequency {
 public:
  GratingAtFrequency(const LamellarGrating& g, double xi, const Material& medium, int orders);
  /// Dimension of the basis: 2(2N+1) at xi > 0, 2N+1 at xi = 0 (the potential), 2(2N+1) at
  /// xi = 0 for a perfect conductor (the potentials phi and psi, grating_pec.h).
  int dim() const { return xi_ > 0.0 || pec_ ? 2 * m_ : m_; }
  /// True at xi = 0 when the basis holds both static scalars (phi, psi): perfect conductors.
  bool static_pair() const { return xi_ == 0.0 && pec_; }
  int orders() const { return n_; }
  double xi() const { return xi_; }
  /// The layer modes of one k_x line (conical decoupling, derived from the P~, Q~ forms of the
  /// header comment: the layer is invariant in y and z, so its modes are TE and TM with respect
  /// to x and lambda^2 = gamma^2 + k_y^2 (units c/xi), gamma^2 the eigenvalues at k_y = 0):
  ///   TE (E_x = 0): (K^2 + Ee) phi = gamma^2 phi,  w = (0, phi),
  ///     v = Q~ w / lambda = (-k_y K phi, gamma^2 phi) / lambda;
  ///   TM (H_x = 0): Ai (K Ee^-1 K + 1) zeta = gamma^2 zeta,  v = (zeta, 0),
  ///     w = P~ v / lambda = ((K Ee^-1 K + 1) zeta, k_y Ee^-1 K zeta) / lambda;
  ///   xi = 0: (K Ai K) w = gamma^2 Ee w, the same w for every k_y.
  /// (Verified against the coupled 2M x 2M eigenproblem in tests/gratings/grating_fmm_test.cc.)
  /// Two M x M symmetric eigenproblems per layer and k_x serve every k_y of that line.
  struct Line {
    double kx = 0.0;  ///< 1/m
    struct LayerModes {
      Eigen::VectorXd g2_te, g2_tm;    ///< gamma^2 (xi = 0: g2_tm only)
      Eigen::MatrixXd phi;             ///< TE eigenvectors (M x M)
      Eigen::MatrixXd zeta;            ///< TM: v columns (xi = 0: the potential's modes w)
      Eigen::MatrixXd tm_top, tm_bot;  ///< (K Ee^-1 K + 1) zeta, Ee^-1 K zeta (xi = 0: Ee w)
    };
    std::vector<LayerModes> layers;  ///< top first, as the layer stack
  };
  Line line(double kx) const;
  /// The reflection operator at Bloch vector (k_x, k_y) (1/m); layout in the header comment.
  Eigen::MatrixXd reflect(double kx, double ky) const { return reflect(line(kx), ky); }
  /// The same from the modes of the line of k_x (cheap per k_y: no eigenproblem).
  Eigen::MatrixXd reflect(const Line& line, double ky) const;
  /// The block of the order indices lo..hi (0..2N) of every component (the rows and columns of
  /// the orders that reach the other body; a perfect conductor forms only those).
  Eigen::MatrixXd reflect(const Line& line, double ky, int lo, int hi) const;
  /// The same by the coupled 2M x 2M eigenproblem per (k_x, k_y) (the reference of the
  /// decoupled form; tests only).
  Eigen::MatrixXd reflect_coupled(double kx, double ky) const;

 private:
  struct Layer {
    double thickness;                    // m
    Eigen::MatrixXd ee, ai;              // Toeplitz [[eps]], [[1/eps]]^-1 (M x M)
    Eigen::LLT<Eigen::MatrixXd> ee_llt;  // [[eps]] = C C^T
    Eigen::MatrixXd ai_l;                // Ai = A A^T (Cholesky factor A)
  };
  Eigen::VectorXd scaled_orders(double kx) const;
  Eigen::MatrixXd pec_reflect(double kx, double ky, int lo = 0, int hi = -1) const;
  Eigen::MatrixXd conductor_reflect(double kx, double ky, int lo = 0, int hi = -1) const;
  LamellarGrating g_;
  bool pec_ = false;               // ridges and substrate perfect conductors: grating_pec.h
  bool conductor_static_ = false;  // xi = 0, Drude ridges and substrate: the equipotential
  double xi_, q0_ = 0.0, q_ = 0.0, eps_m_ = 1.0, eps_r_ = 0.0, eps_s_ = 0.0, eps_c_ = 0.0;
  int n_, m_;
  std::vector<Layer> layers_;  // top first
};

/// The block of order indices lo..hi (0-based) of each component of an operator (or vector) in
/// a basis of m orders per component (E_x, E_y at xi > 0; the potentials at xi = 0): the
/// orders that reach the partner body (grating_plate.cc).
Eigen::MatrixXd order_block(const Eigen::MatrixXd& full, int m, int lo, int hi);
Eigen::VectorXd order_block(const Eigen::VectorXd& full, int m, int lo, int hi);

/// The same basis for a planar body (block-diagonal in n): at xi > 0 r_TE u u^T - r_TM v v^T
/// per order, at xi = 0 -r_TM (static; with static_pair, the basis (phi, psi) of a perfectly
/// conducting grating: diag(-r_TM, -r_TE), grating_pec.h). k = 0 exactly: r_TE times the
/// identity.
Eigen::MatrixXd planar_reflection_in_orders(const PlanarAtFrequency& p, double xi, double period,
                                            int orders, double kx, double ky,
                                            bool static_pair = false);

/// kappa_n = sqrt(k_n^2 + k_y^2 + eps_m xi^2/c^2) (1/m) in the basis layout (repeated for the two
/// components at xi > 0, and at xi = 0 with static_pair).
Eigen::VectorXd orders_decay(double xi, double eps_m, double period, int orders, double kx,
                             double ky, bool static_pair = false);

}  // namespace roundtrip
