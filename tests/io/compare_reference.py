#!/usr/bin/python3
"""Reference for tests/io/compare_test.cc (OffsetFitAgreesWithScipyCurveFit): the offset fit of
`roundtrip compare` done by scipy.optimize.curve_fit (Levenberg-Marquardt, MINPACK) on the
analytic model, with absolute sigma, and chi^2 p-values by scipy.stats.chi2.sf.

    /usr/bin/python3 tests/io/compare_reference.py DATA.csv MODEL A LAMBDA

DATA.csv: the compare data format with columns gap [nm], pressure [mPa], stat_error [mPa].
MODEL 1: P(L) = -A/L^4;  MODEL 2: P(L) = -A/L^4 exp(-L/LAMBDA)  (SI: L in m, P in Pa).
Model at L + delta (L_theory = L_measured + delta). Prints one line:
    delta  sigma_delta  chi2_min  p(chi2_min, N-1)  chi2(delta=0)  p(chi2(0), N)
(delta, sigma_delta in m; sigma_delta = sqrt(pcov), the linearised uncertainty).
"""
import sys

import numpy as np
from scipy.optimize import curve_fit
from scipy.stats import chi2 as chi2_dist

path, which, A, lam = sys.argv[1], int(sys.argv[2]), float(sys.argv[3]), float(sys.argv[4])
rows = [l for l in open(path) if l.strip() and not l.startswith("#")][1:]
data = np.array([[float(c) for c in r.split(",")] for r in rows])
L, P, s = data[:, 0] * 1e-9, data[:, 1] * 1e-3, data[:, 2] * 1e-3


def model(x, delta):
    y = x + delta
    v = -A / y**4
    return v * np.exp(-y / lam) if which == 2 else v


# Fit in nm (delta of order 1) so that MINPACK's step sizes are well scaled.
popt, pcov = curve_fit(lambda x, d: model(x, d * 1e-9), L, P, p0=[0.0], sigma=s,
                       absolute_sigma=True, xtol=1e-14, ftol=1e-14)
delta = popt[0] * 1e-9
sigma_delta = np.sqrt(pcov[0, 0]) * 1e-9
chi2 = float(np.sum(((P - model(L, delta)) / s) ** 2))
chi2_0 = float(np.sum(((P - model(L, 0.0)) / s) ** 2))
n = len(L)
print(f"{delta:.17g} {sigma_delta:.17g} {chi2:.17g} {chi2_dist.sf(chi2, n - 1):.17g} "
      f"{chi2_0:.17g} {chi2_dist.sf(chi2_0, n):.17g}")
