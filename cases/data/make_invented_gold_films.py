#!/usr/bin/python3
"""Writes the three INVENTED optical data sets cases/data/invented-gold-film-{a,b,c}-nk.csv used by
cases/gold_optical_data_spread.toml (not measured data): made-up gold-like films of our own
demo scenario, each from an analytic Drude-Lorentz model
  eps(omega) = 1 - wp^2/(omega(omega + i gamma)) + sum_j C_j w_j^2/(w_j^2 - omega^2 - i g_j omega)
sampled at 301 log-spaced photon energies 0.01-100 eV; n + i k = sqrt(eps), k >= 0. The plasma
frequencies 7.9-8.9 eV span a range like the one reported between gold films prepared in
different ways (Svetovoy, van Zwol, Palasantzas, De Hosson, PRB 77, 035439 (2008)); the
numbers themselves are invented.

    /usr/bin/python3 cases/data/make_invented_gold_films.py
"""
import os

import numpy as np

FILMS = {
    "a": (8.9, 0.037, [(1.5, 3.0, 0.8), (2.0, 6.0, 2.0)]),
    "b": (8.4, 0.042, [(1.7, 3.1, 0.9), (2.2, 6.2, 2.2)]),
    "c": (7.9, 0.048, [(1.4, 2.9, 0.7), (1.8, 5.8, 1.9)]),
}

here = os.path.dirname(os.path.abspath(__file__))
E = np.logspace(-2, 2, 301)
for name, (wp, gamma, osc) in FILMS.items():
    eps = 1 - wp**2 / (E * (E + 1j * gamma))
    for C, w, g in osc:
        eps = eps + C * w**2 / (w**2 - E**2 - 1j * g * E)
    nk = np.sqrt(eps)
    nk = np.where(nk.imag < 0, -nk, nk)
    terms = ", ".join(f"({C}, {w} eV, {g} eV)" for C, w, g in osc)
    with open(os.path.join(here, f"invented-gold-film-{name}-nk.csv"), "w") as out:
        out.write(
            f"# INVENTED example table (not measured data): optical constants of a made-up gold-like\n"
            f"# film \"{name.upper()}\" of our own demo scenario (cases/gold_optical_data_spread.toml),\n"
            f"# written by cases/data/make_invented_gold_films.py from the Drude-Lorentz model\n"
            f"#   eps(omega) = 1 - wp^2/(omega(omega + i gamma)) + sum_j C_j w_j^2/(w_j^2 - omega^2 - i g_j omega)\n"
            f"# with wp = {wp} eV, gamma = {gamma} eV, (C, w, g) = {terms},\n"
            f"# sampled at 301 log-spaced photon energies 0.01-100 eV; n + i k = sqrt(eps), k >= 0.\n"
            "energy_eV,n,k\n")
        for e, z in zip(E, nk):
            out.write(f"{e:.10g},{z.real:.10g},{z.imag:.10g}\n")
