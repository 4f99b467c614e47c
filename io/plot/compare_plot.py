#!/usr/bin/python3
"""Plot of a comparison with measured data (written by `roundtrip compare`, README "Comparing
with measurements"): data with error bars and every model against the measured gap (top), the
normalised residuals (data - model)/sigma (bottom).

    /usr/bin/python3 io/plot/compare_plot.py RESULT.h5 [--name NAME] [-o DIR]

Writes <stem>_compare_<name>.png and .svg into DIR (default: beside RESULT.h5), one pair per
comparison group (all of them without --name). Values in the data file's own units.
"""
import argparse
import os
import sys

import h5py
import matplotlib

matplotlib.use("Agg")  # files only, no display
import matplotlib.pyplot as plt  # noqa: E402
import matplotlib.ticker  # noqa: E402
import numpy as np  # noqa: E402


def text(v):
    return v.decode() if isinstance(v, bytes) else str(v)


def model_curve(f, g, m):
    """Computed gaps and values of the run behind model group m (shifted to the measured axis)."""
    k = int(m.attrs["scan_point"])
    run = f[f"scan/{k}"] if k >= 0 else f
    q = text(g.attrs["quantity"])
    ds = "force" if q == "pressure" else q
    L = run["results/gap"][:]
    v = run[f"results/{ds}"][:]
    order = np.argsort(L)
    return L[order] - float(m.attrs["offset"]), v[order]


def plot_comparison(f, name, out_dir, stem, written):
    g = f[f"comparison/{name}"]
    vu, vf = text(g.attrs["data_units"]), float(g.attrs["data_units_si_factor"])
    gu, gf = text(g.attrs["data_gap_units"]), float(g.attrs["data_gap_units_si_factor"])
    q = text(g.attrs["quantity"])
    L = g["gap"][:]
    d = g["value"][:]
    stat = g["stat_error"][:]
    sigma = np.sqrt(stat**2 + (g["syst_error"][:] ** 2 if "syst_error" in g else 0.0))
    models = [g["models"][k] for k in sorted(g["models"].keys(), key=int)]
    # |Q| on log axes where the data span decades and keep one sign; else Q on linear axes.
    one_sign = np.all(d > 0) or np.all(d < 0)
    log_y = one_sign and np.max(np.abs(d)) / np.min(np.abs(d)) > 10.0
    sgn = np.sign(d[0]) if log_y else 1.0
    log_x = np.max(L) / np.min(L) > 3.0
    fig, (ax, axr) = plt.subplots(2, 1, figsize=(7.0, 6.4), sharex=True,
                                  gridspec_kw={"height_ratios": [3, 1.3]})
    ax.errorbar(L / gf, sgn * d / vf, yerr=sigma / vf, fmt="o", ms=3, color="k", capsize=2,
                label=f"data ({os.path.basename(text(g.attrs['data_file']))})", zorder=3)
    lo, hi = np.min(L), np.max(L)
    for i, m in enumerate(models):
        Lm, vm = model_curve(f, g, m)
        keep = (Lm >= lo * 0.9) & (Lm <= hi * 1.1)
        delta = float(m.attrs["offset"])
        chi = float(m.attrs["reduced_chi2"])
        lab = f"{text(m.attrs['label'])}: \u03c7\u00b2/dof = {chi:.3g}"
        if int(g.attrs["offset_fitted"]):
            lab += f", \u03b4 = {delta / gf:.3g} {gu}"
        line, = ax.plot(Lm[keep] / gf, sgn * vm[keep] / vf, "-", lw=1, label=lab)
        ax.plot(L / gf, sgn * m["model"][:] / vf, "x", ms=4, color=line.get_color())
        axr.plot(L / gf, m["normalized_residual"][:], "o-", ms=3, lw=0.8, color=line.get_color())
    axr.axhspan(-1.0, 1.0, color="0.9", zorder=0)
    axr.axhline(0.0, color="0.5", lw=0.8)
    if log_x:
        ax.set_xscale("log")
        for a in (ax, axr):  # plain numbers (150, 200, ...) rather than 2x10^2
            a.xaxis.set_major_formatter(matplotlib.ticker.ScalarFormatter())
            a.xaxis.set_minor_formatter(matplotlib.ticker.FormatStrFormatter("%g"))
    if log_y:
        ax.set_yscale("log")
    sym = {"force": "F", "pressure": "P", "gradient": "F\u2032", "energy": "E"}[q]
    ax.set_ylabel((f"\u2212{sym}" if sgn < 0 else sym) + f" ({vu})")
    ax.set_title(f"Measured {q} against the models (comparison \u201c{name}\u201d)")
    ax.legend(fontsize=7)
    axr.set_xlabel(f"measured gap L ({gu})" + (", models at L + \u03b4" if int(g.attrs["offset_fitted"]) else ""))
    axr.set_ylabel("(data \u2212 model)/\u03c3")
    fig.tight_layout()
    for ext in ("png", "svg"):
        path = os.path.join(out_dir, f"{stem}_compare_{name}.{ext}")
        fig.savefig(path, dpi=150 if ext == "png" else None, bbox_inches="tight")
        written.append(path)
    plt.close(fig)


def plot_all(f, out_dir, stem, written, only=None):
    if "comparison" not in f:
        return
    for name in sorted(f["comparison"].keys()):
        if only is None or name == only:
            plot_comparison(f, name, out_dir, stem, written)


def main(argv):
    ap = argparse.ArgumentParser(description="Plot of a comparison with measured data.")
    ap.add_argument("result", help="results file holding /comparison/<name> (HDF5)")
    ap.add_argument("--name", default=None, help="the comparison to draw (default: all)")
    ap.add_argument("-o", "--output-dir", default=None, help="directory for the plots")
    a = ap.parse_args(argv)
    try:
        f = h5py.File(a.result, "r")
    except OSError as e:
        print(f"roundtrip compare: error: {a.result}: cannot open as HDF5 ({e})", file=sys.stderr)
        return 1
    if a.name is not None and f"comparison/{a.name}" not in f:
        print(f"roundtrip compare: error: {a.result}: no /comparison/{a.name}", file=sys.stderr)
        return 1
    out_dir = a.output_dir or os.path.dirname(os.path.abspath(a.result))
    stem = os.path.splitext(os.path.basename(a.result))[0]
    written = []
    plot_all(f, out_dir, stem, written, a.name)
    for p in written:
        print(p)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
