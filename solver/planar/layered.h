#pragma once
// Layered planar body: films on a substrate, reflection seen from the medium.
//
// Recursive Airy formula at imaginary frequency (standard; e.g. Born & Wolf, Principles of Optics,
// §1.6; Lifshitz-formula form in Bordag, Mohideen, Mostepanenko, Phys. Rep. 353, 1 (2001)):
//   R_j = (r_{j-1,j} + R_{j+1} e^{-2 kappa_j t_j}) / (1 + r_{j-1,j} R_{j+1} e^{-2 kappa_j t_j}),
// started from the last film/substrate interface, with kappa_j = sqrt(k^2 + eps_j xi^2/c^2) and
//   TE r_ij = (kappa_i - kappa_j)/(kappa_i + kappa_j),
//   TM r_ij = (eps_j kappa_i - eps_i kappa_j)/(eps_j kappa_i + eps_i kappa_j)  (seen from i),
// signs as in planar.h (PEC: r_TE = -1, r_TM = +1). Layers are listed from the gap side (j = 1)
// down to the substrate; thicknesses in metres. Any number of layers; e^{-2 kappa t} <= 1 keeps the
// recursion bounded (|R| <= 1 on the imaginary axis).
//
// xi = 0 uses the exact static limits of each layer (consistent with half_space.cc):
//   TM: the first conductor from the gap side reflects with r = +1 and hides what lies below;
//       dielectric layers above it have kappa = k and r_ij = (eps_j - eps_i)/(eps_j + eps_i).
//   TE: dielectrics and Drude conductors have kappa = k (transparent), plasma conductors
//       kappa = sqrt(k^2 + k_p^2), a perfect conductor reflects with -1.
#include <vector>

#include "solver/materials/material.h"
#include "solver/planar/planar.h"

namespace roundtrip {

struct Layer {
  MaterialPtr material;
  double thickness = 0.0;  ///< m, > 0
};

/// Films `layers` (gap side first) on a half-space `substrate`. Throws std::invalid_argument for
/// a null material or a thickness that is not finite and > 0. No layers gives the half-space.
PlanarPtr make_layered(std::vector<Layer> layers, MaterialPtr substrate);

/// Films `layers` on a hydrodynamic nonlocal half-space of `metal` (hydrodynamic.h, beta in m/s):
/// the recursion starts from the nonlocal r seen from the last film. At xi = 0 the substrate's TE
/// stays local (the longitudinal wave is TM-only) and a conductor film still hides it in TM.
/// Throws std::invalid_argument as make_layered and make_hydrodynamic do.
PlanarPtr make_layered_on_hydrodynamic(std::vector<Layer> layers, MaterialPtr metal, double beta);

}  // namespace roundtrip
