#pragma once
// Complete Fermi-Dirac integrals of order j = 1/2 and -1/2 (Blakemore's normalisation):
//   F_j(eta) = (1/Gamma(j+1)) int_0^inf t^j dt / (1 + e^{t - eta}),   F_j -> e^eta as eta -> -inf,
// so that a parabolic band holds n = N_c F_{1/2}(eta) carriers per volume and dn/dmu =
// N_c F_{-1/2}(eta)/(k_B T) (standard; Blakemore, Solid-State Electron. 25, 1067 (1982)).
// eta <= 40: quadrature in t = u^2 (Boost.Math tanh-sinh on [0, sqrt eta], exp-sinh beyond; for
// eta <= 0 the scaled integrand 2 u^{2j+1} e^{-u^2}/(1 + e^{eta - u^2})). eta > 40: Sommerfeld's
// expansion F_j = eta^{j+1}/Gamma(j+2) [1 + sum_k 2(1 - 2^{1-2k}) zeta(2k) (j+1)_{(2k)} eta^{-2k}]
// with the falling factorial (j+1)_{(2k)} = (j+1) j ... (j+2-2k), 8 terms (standard; the next term
// is below 1e-25 at eta = 40; the remainder is exponentially small, ~e^{-eta}: measured 1e-9 at
// eta = 20 against mpmath, hence the switch at 40).

namespace roundtrip::special {

/// F_{1/2}(eta) e^{-eta} for eta <= 0, F_{1/2}(eta) otherwise (see log_fermi_dirac).
double fermi_dirac_half(double eta);
double fermi_dirac_minus_half(double eta);
/// ln F_j(eta) for j = 1/2 (half = true) or -1/2, finite for every finite eta.
double log_fermi_dirac(bool half, double eta);
/// The eta with N_c F_{1/2}(eta) = n, for ratio = n/N_c > 0 (monotone; TOMS 748 on a bracket).
double fermi_dirac_half_inverse(double ratio);
/// F_{-1/2}(eta)/F_{1/2}(eta), finite for every finite eta (-> 1 as eta -> -inf, 3/(2 eta) as
/// eta -> inf).
double fermi_dirac_ratio(double eta);

}  // namespace roundtrip::special
