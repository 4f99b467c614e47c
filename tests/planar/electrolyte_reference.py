#!/usr/bin/python3
# Reference value for tests/planar/electrolyte_test.cc: the xi = 0 plate-plate integrand with ions
# in the gap (solver/planar/electrolyte.h), by direct mpmath quadrature of the stated formula
#   s_0 = (1/2pi) int_0^inf k dk ln(1 - D(k)^2 e^{-2 q L}),  q = sqrt(k^2 + kappa^2),
#   D(k) = (eps_b k - eps_m q)/(eps_b k + eps_m q),
# for two dielectric half-spaces eps_b = 3.9 in eps_m = 78.5 (no static TE term), L = 10 nm,
# kappa = 1e8 1/m (kappa L = 1), and dS/dL by mpmath.diff of the same quadrature. 30 digits.
import mpmath as mp

mp.mp.dps = 30
eb, em, L, kap = mp.mpf("3.9"), mp.mpf("78.5"), mp.mpf("1e-8"), mp.mpf("1e8")


def s0(L):
    def f(k):
        q = mp.sqrt(k * k + kap * kap)
        d = (eb * k - em * q) / (eb * k + em * q)
        return k * mp.log(1 - d * d * mp.exp(-2 * q * L))
    return mp.quad(f, [0, 1 / L, 10 / L, mp.inf]) / (2 * mp.pi)


print(mp.nstr(s0(L), 20))
print(mp.nstr(mp.diff(s0, L), 20))
