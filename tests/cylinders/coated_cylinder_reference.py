#!/usr/bin/python3
"""Reference T-matrices of a coated cylinder at imaginary frequency, for
tests/cylinders/coated_cylinder_test.cc. Independent of the C++ transfer: it solves the interface
conditions of the two interfaces directly as one 8 x 8 linear system with mpmath's
besseli/besselk at 50 digits (columns equilibrated, so that
I_m and K_m of large arguments do not make the system look singular).

Basis and conventions of solver/scatterers/cylinder_t.h: (psi_E, psi_H) = (E_z, eta_0 H_z),
angular factor e^{i m phi} e^{i k_z z}; region j (eps_j, p_j = sqrt(k_z^2 + eps_j k_0^2),
k_0 = xi/c): psi = A I_m(p_j rho) + B K_m(p_j rho); continuity at rho = a and rho = b of
psi_E, psi_H, p^2 E_phi = c psi_E - k_0 psi_H', p^2 eta_0 H_phi = eps k_0 psi_E' + c psi_H,
c = k_z m / rho. Outside psi = a I_m(p rho) + b K_m(p rho), b = T a. Prints m and
T_EE, T_EH, T_HE, T_HH for each case.
Run: /usr/bin/python3 tests/cylinders/coated_cylinder_reference.py
"""
import mpmath as mp

mp.mp.dps = 50
C = mp.mpf(299792458)


def fns(m, p, rho):
    """I, I', K, K' (derivatives in rho) at p rho."""
    x = p * rho
    i, k = mp.besseli(m, x), mp.besselk(m, x)
    ip = p * (mp.besseli(m - 1, x) + mp.besseli(m + 1, x)) / 2
    kp = -p * (mp.besselk(m - 1, x) + mp.besselk(m + 1, x)) / 2
    return i, ip, k, kp


def tmatrix(m, xi, kz, e1, a, e2, b, em):
    k0 = xi / C
    p1, p2, p = [mp.sqrt(kz**2 + e * k0**2) for e in (e1, e2, em)]
    # unknowns: 0 cE, 1 cH, 2 AE, 3 BE, 4 AH, 5 BH, 6 bE, 7 bH
    def rows(rho, eps, pp, terms):
        """terms: list of (column, pol, func value, derivative); returns the 4 field rows."""
        c = kz * m / rho
        out = [[mp.mpf(0)] * 8 for _ in range(4)]
        for col, pol, f, fp in terms:
            if pol == 'E':
                out[0][col] += f
                out[2][col] += c * f / pp**2
                out[3][col] += eps * k0 * fp / pp**2
            else:
                out[1][col] += f
                out[2][col] += -k0 * fp / pp**2
                out[3][col] += c * f / pp**2
        return out

    A = mp.zeros(8, 8)
    i1, i1p, _, _ = fns(m, p1, a)
    ia, iap, ka, kap = fns(m, p2, a)
    inner = rows(a, e1, p1, [(0, 'E', i1, i1p), (1, 'H', i1, i1p)])
    shell_a = rows(a, e2, p2, [(2, 'E', ia, iap), (3, 'E', ka, kap), (4, 'H', ia, iap),
                               (5, 'H', ka, kap)])
    ib, ibp, kb, kbp = fns(m, p2, b)
    shell_b = rows(b, e2, p2, [(2, 'E', ib, ibp), (3, 'E', kb, kbp), (4, 'H', ib, ibp),
                               (5, 'H', kb, kbp)])
    io, iop, ko, kop = fns(m, p, b)
    outer = rows(b, em, p, [(6, 'E', ko, kop), (7, 'H', ko, kop)])
    for r in range(4):
        for col in range(8):
            A[r, col] = inner[r][col] - shell_a[r][col]
            A[4 + r, col] = shell_b[r][col] - outer[r][col]
    scale = [max(abs(A[r, col]) for r in range(8)) for col in range(8)]
    for col in range(8):
        for r in range(8):
            A[r, col] /= scale[col]
    T = []
    for pol in ('E', 'H'):  # incident a = unit E or unit H: moves to the right-hand side
        inc = rows(b, em, p, [(6 if pol == 'E' else 7, pol, io, iop)])
        rhs = mp.matrix([0] * 4 + [inc[r][6 if pol == 'E' else 7] for r in range(4)])
        x = mp.lu_solve(A, rhs)
        T.append((x[6] / scale[6], x[7] / scale[7]))
    return T[0][0], T[1][0], T[0][1], T[1][1]  # T_EE, T_EH, T_HE, T_HH


CASES = [
    # (name, xi, kz, eps core, a, eps shell, b, eps medium)
    ("glass core, silicon shell, k_z = 0", mp.mpf('3e14'), 0, mp.mpf('2.25'), mp.mpf('0.6e-6'),
     mp.mpf('11.7'), mp.mpf('1e-6'), 1),
    ("glass core, silicon shell, k_z = 2e6", mp.mpf('3e14'), mp.mpf('2e6'), mp.mpf('2.25'),
     mp.mpf('0.6e-6'), mp.mpf('11.7'), mp.mpf('1e-6'), 1),
    ("eps 1e3 core, eps 2 shell, medium 1.77, k_z = 5e6", mp.mpf('1e15'), mp.mpf('5e6'),
     mp.mpf('1e3'), mp.mpf('0.8e-6'), mp.mpf('2'), mp.mpf('1e-6'), mp.mpf('1.77')),
]

if __name__ == "__main__":
    for name, xi, kz, e1, a, e2, b, em in CASES:
        print("#", name)
        for m in (0, 1, 2, 5):
            t = tmatrix(m, xi, kz, e1, a, e2, b, em)
            print(m, " ".join(mp.nstr(v, 17) for v in t))
