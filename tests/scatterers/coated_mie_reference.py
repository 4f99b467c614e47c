#!/usr/bin/python3
"""Reference Mie amplitudes of a coated sphere at imaginary frequency, for
tests/scatterers/coated_mie_test.cc. Independent of the C++ recursion: it solves the interface
conditions directly as a 4 x 4 linear system with mpmath's besseli/besselk at 40 digits.

Sphere: outer radius R = 1 um, Drude-gold shell (wp = 9 eV, gamma = 35 meV, the library's
"gold-drude") of thickness 50 nm on a polystyrene core (the library's two-oscillator
"polystyrene": C = 0.103 at 5.54e14 rad/s, C = 1.447 at 1.354e16 rad/s), in vacuum.
xi = x c / R. Radial functions f in region j: A i_l(k_j r) + B k_l(k_j r), k_j = sqrt(eps_j) xi/c,
i_l = sqrt(pi/2z) I_{l+1/2} (mpmath besseli), k_l = sqrt(2/(pi z)) K_{l+1/2} (its
terminating series). Interface conditions (mu = 1):
TE: f and (r f)' continuous; TM: k_j f and (r f)'/k_j continuous. Outside f = i_l + T k_l.
Each basis function is scaled to 1 at the radius where it is largest, so the system is well
conditioned at any order and size. Prints l, x, log|T_TE|, sign, log|T_TM|, sign.
Run: /usr/bin/python3 tests/scatterers/coated_mie_reference.py
"""
import mpmath as mp

mp.mp.dps = 40
C = mp.mpf(299792458)
EV = mp.mpf('1.602176634e-19') / mp.mpf('1.054571817e-34')  # rad/s per eV
WP, GAMMA = 9 * EV, mp.mpf('0.035') * EV
R, T_SHELL = mp.mpf('1e-6'), mp.mpf('50e-9')
A = R - T_SHELL


def eps_gold(xi):
    return 1 + WP**2 / (xi * (xi + GAMMA))


def eps_ps(xi):
    e = mp.mpf(1)
    for c, w in ((mp.mpf('0.103'), mp.mpf('5.54e14')), (mp.mpf('1.447'), mp.mpf('1.354e16'))):
        e += c * w**2 / (w**2 + xi**2)
    return e


def il(l, z):
    return mp.sqrt(mp.pi / (2 * z)) * mp.besseli(l + mp.mpf(1) / 2, z)


def kl(l, z):
    # sqrt(2/(pi z)) K_{l+1/2}(z) by its terminating series (DLMF 10.49.12, all terms positive;
    # mpmath's besselk fails to converge at order 1000.5 and argument 1e4):
    # e^{-z}/z sum_{k=0}^{l} (l+k)!/(k! (l-k)!) (2z)^{-k}
    s, term = mp.mpf(0), mp.mpf(1)
    for k in range(l + 1):
        s += term
        term *= mp.mpf((l + k + 1) * (l - k)) / ((k + 1) * 2 * z)
    return mp.exp(-z) / z * s


def basis(l, kind, k, r, r0):
    """(g, (r g)') at r for g(r) = f(k r)/f(k r0), f = i_l or k_l."""
    z = k * r
    if kind == 'i':
        f, f1, n = il(l, z), il(l + 1, z), il(l, k * r0)
        df = f1 + l / z * f
    else:
        f, f1, n = kl(l, z), kl(l + 1, z), kl(l, k * r0)
        df = l / z * f - f1
    return f / n, (f + z * df) / n


def amplitudes(l, x):
    xi = x * C / R
    k1, k2, k3 = mp.sqrt(eps_ps(xi)) * xi / C, mp.sqrt(eps_gold(xi)) * xi / C, xi / C
    out = []
    for pol in ('TE', 'TM'):
        # value and derivative weights: TE (1, 1); TM (k, 1/k)
        wv = (lambda k: 1) if pol == 'TE' else (lambda k: k)
        wd = (lambda k: 1) if pol == 'TE' else (lambda k: 1 / k)
        # unknowns: a (core i), b (shell i), c (shell k), t = T k_l(x)/i_l(x)
        c_i_a = basis(l, 'i', k1, A, A)
        s_i_a, s_k_a = basis(l, 'i', k2, A, R), basis(l, 'k', k2, A, A)
        s_i_r, s_k_r = basis(l, 'i', k2, R, R), basis(l, 'k', k2, R, A)
        o_i, o_k = basis(l, 'i', k3, R, R), basis(l, 'k', k3, R, R)
        M = mp.matrix([
            [wv(k1) * c_i_a[0], -wv(k2) * s_i_a[0], -wv(k2) * s_k_a[0], 0],
            [wd(k1) * c_i_a[1], -wd(k2) * s_i_a[1], -wd(k2) * s_k_a[1], 0],
            [0, wv(k2) * s_i_r[0], wv(k2) * s_k_r[0], -wv(k3) * o_k[0]],
            [0, wd(k2) * s_i_r[1], wd(k2) * s_k_r[1], -wd(k3) * o_k[1]],
        ])
        rhs = mp.matrix([0, 0, wv(k3) * o_i[0], wd(k3) * o_i[1]])
        t = mp.lu_solve(M, rhs)[3]
        # T = t i_l(x)/k_l(x)
        logT = mp.log(abs(t)) + mp.log(il(l, x)) - mp.log(kl(l, x))
        out.append((logT, int(mp.sign(t))))
    return out


if __name__ == '__main__':
    for l in (1, 10, 100, 1000):
        for x in ('1e-3', '1', '100', '1e4'):
            (lte, ste), (ltm, stm) = amplitudes(l, mp.mpf(x))
            print('{%d, %s, %s, %d, %s, %d},' % (l, x, mp.nstr(lte, 17), ste, mp.nstr(ltm, 17), stm))
