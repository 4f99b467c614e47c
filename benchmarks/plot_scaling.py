#!/usr/bin/python3
"""Log-log plot of the sphere-plate scaling study (CSV from roundtrip_bench_sphere_plate_scaling
--csv): wall time and peak memory of one frequency against R/L, with the fitted power laws.
    /usr/bin/python3 benchmarks/plot_scaling.py scaling.csv scaling.png
"""
import csv
import sys

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402


def main(src, dst):
    with open(src) as f:
        header = f.readline().strip("# \n")
        rows = [r for r in csv.DictReader(f) if r["study"] == "scaling"]
    x = np.array([float(r["R_over_L"]) for r in rows])
    t = np.array([float(r["seconds"]) for r in rows])
    m = np.array([float(r["peak_MiB"]) for r in rows])
    fig, ax = plt.subplots(1, 2, figsize=(9, 3.8))
    for a, y, label, unit in ((ax[0], t, "wall time", "s"), (ax[1], m, "peak memory", "MiB")):
        a.loglog(x, y, "o", ms=4, label="measured")
        sel = x >= 50
        if sel.sum() >= 2:
            p, c = np.polyfit(np.log(x[sel]), np.log(y[sel]), 1)
            xx = np.geomspace(x[sel].min(), x.max(), 50)
            a.loglog(xx, np.exp(c) * xx**p, "-", lw=1, label=f"fit (R/L \u2265 50): \u221d (R/L)^{p:.2f}")
        a.set_xlabel("R/L")
        a.set_ylabel(f"{label} of one frequency ({unit})")
        a.grid(True, which="both", lw=0.3)
        a.legend(fontsize=8)
    fig.suptitle("sphere\u2013plate, Drude gold, \u03be = c/2L, E, F, F\u2032 (" + header + ")", fontsize=8)
    fig.tight_layout()
    fig.savefig(dst, dpi=120)
    print(f"wrote {dst}")


if __name__ == "__main__":
    if len(sys.argv) != 3:
        sys.exit("usage: plot_scaling.py scaling.csv scaling.png")
    main(sys.argv[1], sys.argv[2])
