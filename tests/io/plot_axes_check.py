"""Reads back the axes `roundtrip_plot.py --axes-json` drew (after rendering) and checks them.

    /usr/bin/python3 plot_axes_check.py AXES.json RESULT.h5

Checks (common practice for scientific plots): a quantity spanning more than a decade is on a
log axis; every axis has at least 3 tick labels inside its range; dimensionless axes are named
as ratios, never "(1)"; legends name what they show (no bare "all"); the theta curve is the
whole stored model theta x + theta2 x^2 + theta3 x^3 (solver/pfa/theta_fit.h); one spectrum
panel per scan point. Prints what failed and exits 1.
"""
import json
import sys

import h5py
import numpy as np

axes = json.load(open(sys.argv[1]))
f = h5py.File(sys.argv[2], "r")
points = [f["scan"][k] for k in sorted(f["scan"].keys(), key=int)] if "scan" in f else [f]
bad = []


def need(cond, what):
    if not cond:
        bad.append(what)


for name, panels in axes.items():
    for i, a in enumerate(panels):
        where = f"{name}[{i}]"
        need(len(a["xticks"]) >= 3, f"{where}: x tick labels {a['xticks']}")
        need(len(a["yticks"]) >= 3, f"{where}: y tick labels {a['yticks']}")
        for lab in (a["xlabel"], a["ylabel"]):
            need("(1)" not in lab, f"{where}: dimensionless label '{lab}' says (1)")
        need(all(t.strip() != "all" for t in a["legend"]), f"{where}: legend {a['legend']}")
        need(len(a["legend"]) > 0, f"{where}: no legend")
        for ln in a["lines"]:
            y = np.abs(np.array(ln["y"]))
            y = y[y > 0]
            if len(y) > 1 and y.max() / y.min() > 30 and name != "pfa":
                need(a["yscale"] == "log", f"{where}: '{ln['label']}' spans decades, y is linear")

need(axes["force"][0]["xscale"] == "log" and axes["force"][0]["yscale"] == "log",
     "force: log-log")
need(len(axes["spectrum"]) == len(points), f"spectrum: {len(axes['spectrum'])} panels for "
     f"{len(points)} scan points")
if "pfa" in axes:
    ax = axes["pfa"][0]
    need("ratio" in ax["ylabel"], f"pfa: y label '{ax['ylabel']}'")
    fits = [ln for ln in ax["lines"] if ln["label"].startswith("fit:")]
    g = points[0]
    stored = [g[f"results/pfa_theta/{q}"].attrs for q in ("energy", "force", "gradient")
              if f"results/pfa_theta/{q}" in g]
    need(len(fits) >= len(stored) > 0, "pfa: a fit curve per stored fit")
    for ln, at in zip(fits, stored):
        x = np.array(ln["x"])
        c = [float(at[k]) for k in ("theta", "theta2", "theta3") if k in at]
        model = sum(ck * x ** (k + 1) for k, ck in enumerate(c))
        need(np.allclose(ln["y"], model, rtol=1e-9, atol=1e-15),
             f"pfa: curve '{ln['label']}' is not the stored model {c}")
if "drude_plasma" in axes:
    need("ratio" in axes["drude_plasma"][0]["ylabel"], "drude_plasma: y label")
for b in bad:
    print(b)
sys.exit(1 if bad else 0)
