#!/usr/bin/python3
"""Plots of a roundtrip results file (layout: README.md, "HDF5 results").

    /usr/bin/python3 io/plot/roundtrip_plot.py RESULT.h5 [-o DIR]     (or: roundtrip plot ...)

Writes, as PNG and SVG, into DIR (default: the directory of RESULT.h5), names prefixed with the
file's stem:
  <stem>_pfa.*          E/E_PFA - 1 (and F, F') against L/R, with the theta fit's leading term
                        theta L/R where the file has one (kinds with a PFA length)
  <stem>_force.*        |F| and |F'| against L, with their PFA values where present
  <stem>_drude_plasma.* Drude/plasma ratio of F against L (scans over a material only)
  <stem>_surface_models.* Q/Q_ref - 1 against L for each surface model of a [scan] plate.surface
                        axis, the first model the reference (Q = F, else E)
  <stem>_spectrum.*     per-frequency contributions w_j s(xi_j) to E at up to four gaps
Scans draw one curve per scan point. Needs Debian's python3-matplotlib and python3-h5py.
"""
import argparse
import os
import sys

import h5py
import matplotlib

matplotlib.use("Agg")  # files only, no display
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402


def text(v):
    return v.decode() if isinstance(v, bytes) else str(v)


def runs(f):
    """(label, group, attrs) for each run: the file itself, or each /scan/<k>."""
    if "scan" in f:
        keys = sorted(f["scan"].keys(), key=int)
        return [(text(f["scan"][k].attrs["scan_label"]), f["scan"][k]) for k in keys]
    return [("", f)]


def save(fig, out_dir, stem, name, written):
    for ext in ("png", "svg"):
        path = os.path.join(out_dir, f"{stem}_{name}.{ext}")
        fig.savefig(path, dpi=150 if ext == "png" else None, bbox_inches="tight")
        written.append(path)
    plt.close(fig)


def unit_of(ds):
    return text(ds.attrs.get("units", ""))


def plot_pfa(f, out_dir, stem, written):
    rs = [(lab, g) for lab, g in runs(f) if "results/energy_ratio" in g or "results/force_ratio" in g]
    if not rs:
        return
    fig, ax = plt.subplots(figsize=(6.4, 4.4))
    markers = {"energy": "o", "force": "s", "gradient": "^"}
    names = {"energy": "E", "force": "F", "gradient": "F\u2032"}
    for lab, g in rs:
        # The R of Q/Q_PFA = 1 + theta L/R: the sphere radius, or R_eff of two spheres.
        R = next((float(g.attrs[k]) for k in ("pfa_length_m", "sphere_radius_m") if k in g.attrs), None)
        if R is None:
            continue
        x = g["results/gap"][:] / R
        for q in ("energy", "force", "gradient"):
            if f"results/{q}_ratio" not in g:
                continue
            y = g[f"results/{q}_ratio"][:] - 1.0
            line, = ax.plot(x, y, markers[q], label=f"{names[q]}/{names[q]}_PFA \u2212 1 {lab}".strip())
            fit = f"results/pfa_theta/{q}"
            if fit in g:
                a = g[fit].attrs
                xs = np.linspace(0.0, float(np.max(x)), 100)
                ax.plot(xs, float(a["theta"]) * xs, "-", color=line.get_color(), lw=1,
                        label=f"\u03b8 L/R, \u03b8 = {float(a['theta']):.3f} \u00b1 "
                              f"{float(a['uncertainty']):.3f}")
    ax.axhline(0.0, color="0.6", lw=0.8)
    ax.set_xlabel("L/R (gap over the PFA length: sphere radius, or R_eff of two spheres)")
    ax.set_ylabel("Q/Q_PFA \u2212 1 (1)")
    ax.set_title("Departure from the proximity force approximation")
    ax.set_xlim(left=0.0)
    ax.legend(fontsize=7)
    save(fig, out_dir, stem, "pfa", written)


def plot_force(f, out_dir, stem, written):
    rs = runs(f)
    if not any("results/force" in g for _, g in rs):
        return
    has_grad = any("results/gradient" in g for _, g in rs)
    fig, axes = plt.subplots(1, 2 if has_grad else 1, figsize=(11 if has_grad else 6.4, 4.4),
                             squeeze=False)
    for col, q, sym in ((0, "force", "F"), (1, "gradient", "F\u2032")):
        if col == 1 and not has_grad:
            continue
        ax = axes[0][col]
        units = ""
        for lab, g in rs:
            if f"results/{q}" not in g:
                continue
            L = g["results/gap"][:]
            units = unit_of(g[f"results/{q}"])
            line, = ax.loglog(L * 1e9, np.abs(g[f"results/{q}"][:]), "o-", ms=3,
                              label=f"|{sym}| {lab}".strip())
            if f"results/{q}_pfa" in g:
                ax.loglog(L * 1e9, np.abs(g[f"results/{q}_pfa"][:]), "--", color=line.get_color(),
                          label=f"|{sym}_PFA| {lab}".strip())
        ax.set_xlabel("gap L (nm)")
        ax.set_ylabel(f"|{sym}| ({units})")
        ax.set_title("Force" if q == "force" else "Force gradient")
        ax.legend(fontsize=7)
    save(fig, out_dir, stem, "force", written)


def plot_drude_plasma(f, out_dir, stem, written):
    if "scan" not in f:
        return
    pts = [f["scan"][k] for k in sorted(f["scan"].keys(), key=int)]
    mat_keys = [k for k in pts[0].attrs if k.startswith("scan.") and k.endswith("material")]
    if not mat_keys:
        return
    key = mat_keys[0]
    # Pair each Drude point with the plasma point whose other scan parameters are the same.
    def others(g):
        return tuple((k, text(g.attrs[k])) for k in sorted(g.attrs) if k.startswith("scan.") and k != key)
    drude = {others(g): g for g in pts if "drude" in text(g.attrs[key])}
    plasma = {others(g): g for g in pts if "plasma" in text(g.attrs[key])}
    pairs = [(o, drude[o], plasma[o]) for o in drude if o in plasma]
    if not pairs:
        return
    fig, ax = plt.subplots(figsize=(6.4, 4.4))
    q = "force" if "results/force" in pairs[0][1] else "energy"
    sym = "F" if q == "force" else "E"
    for o, d, p in pairs:
        L = d["results/gap"][:]
        lab = ", ".join(f"{k[5:]} = {v}" for k, v in o) or "all"
        ax.semilogx(L * 1e9, d[f"results/{q}"][:] / p[f"results/{q}"][:], "o-", ms=3, label=lab)
    ax.set_xlabel("gap L (nm)")
    ax.set_ylabel(f"{sym}_Drude / {sym}_plasma (1)")
    ax.set_title(f"Drude against plasma model ({key[5:]})")
    ax.legend(fontsize=7)
    save(fig, out_dir, stem, "drude_plasma", written)


def plot_surface_models(f, out_dir, stem, written):
    """Relative difference of each surface model to the first one ([scan] <plate>.surface)."""
    if "scan" not in f:
        return
    pts = [f["scan"][k] for k in sorted(f["scan"].keys(), key=int)]
    keys = [k for k in pts[0].attrs if k.startswith("scan.") and k.endswith(".surface")]
    if not keys:
        return
    key = keys[0]
    # Compare points that differ only in the surface model; the first model is the reference.
    def others(g):
        return tuple((k, text(g.attrs[k])) for k in sorted(g.attrs) if k.startswith("scan.") and k != key)
    ref_name = text(pts[0].attrs[key])
    refs = {others(g): g for g in pts if text(g.attrs[key]) == ref_name}
    q = "force" if "results/force" in pts[0] else "energy"
    sym = "F" if q == "force" else "E"
    fig, ax = plt.subplots(figsize=(6.4, 4.4))
    drawn = False
    for g in pts:
        name = text(g.attrs[key])
        ref = refs.get(others(g))
        if name == ref_name or ref is None:
            continue
        L = g["results/gap"][:]
        rel = g[f"results/{q}"][:] / ref[f"results/{q}"][:] - 1.0
        extra = ", ".join(f"{k[5:]} = {v}" for k, v in others(g))
        ax.semilogx(L * 1e9, rel, "o-", ms=3, label=name + (f" ({extra})" if extra else ""))
        drawn = True
    if not drawn:
        plt.close(fig)
        return
    ax.axhline(0.0, color="0.6", lw=0.6)
    ax.set_xlabel("gap L (nm)")
    ax.set_ylabel(f"{sym} / {sym}_{ref_name} - 1 (1)")
    ax.set_title(f"Surface models against \"{ref_name}\" ({key[5:]})")
    ax.legend(fontsize=7)
    save(fig, out_dir, stem, "surface_models", written)


def plot_spectrum(f, out_dir, stem, written):
    lab, g = runs(f)[0]
    if "frequencies" not in g:
        return
    keys = sorted(g["frequencies"].keys(), key=int)
    if not keys:
        return
    pick = sorted({keys[int(round(i))] for i in np.linspace(0, len(keys) - 1, min(4, len(keys)))},
                  key=int)
    e_units = unit_of(g["results/energy"]) if "results/energy" in g else ("J/m^2" if int(g.attrs["per_area"]) else "J")
    fig, ax = plt.subplots(figsize=(6.4, 4.4))
    for k in pick:
        fr = g["frequencies"][k]
        xi, w, s = fr["xi"][:], fr["weight"][:], fr["s"][:]
        c = w * s
        gap = float(fr.attrs["gap"])
        pos = xi > 0
        label = f"L = {gap * 1e9:.4g} nm"
        if not pos.all():
            label += f" (\u03be = 0 term: {c[~pos].sum():.3g} {e_units})"
        ax.semilogx(xi[pos], c[pos], ".-", ms=3, lw=0.8, label=label)
    rule = text(g.attrs.get("frequency_rule", ""))
    ax.set_xlabel("imaginary frequency \u03be (rad/s)")
    ax.set_ylabel(f"contribution w_j s(\u03be_j) to E ({e_units})")
    ax.set_title("Contributions per frequency" + (f" ({lab})" if lab else "") +
                 ({"matsubara": ": Matsubara terms", "pade-spectrum": ": Pade poles"}.get(
                     rule, ": frequency nodes")))
    ax.legend(fontsize=7)
    save(fig, out_dir, stem, "spectrum", written)


def main(argv):
    ap = argparse.ArgumentParser(description="Plots of a roundtrip results file (PNG and SVG).")
    ap.add_argument("result", help="results file written by `roundtrip run` (HDF5)")
    ap.add_argument("-o", "--output-dir", default=None, help="directory for the plots")
    a = ap.parse_args(argv)
    try:
        f = h5py.File(a.result, "r")
    except OSError as e:
        print(f"roundtrip plot: error: {a.result}: cannot open as HDF5 ({e})", file=sys.stderr)
        return 1
    if text(f.attrs.get("format", "")) != "roundtrip-results":
        print(f"roundtrip plot: error: {a.result}: not a roundtrip results file", file=sys.stderr)
        return 1
    out_dir = a.output_dir or os.path.dirname(os.path.abspath(a.result))
    if not os.path.isdir(out_dir):
        print(f"roundtrip plot: error: -o = \"{out_dir}\": not a directory", file=sys.stderr)
        return 1
    stem = os.path.splitext(os.path.basename(a.result))[0]
    written = []
    plot_pfa(f, out_dir, stem, written)
    plot_force(f, out_dir, stem, written)
    plot_drude_plasma(f, out_dir, stem, written)
    plot_surface_models(f, out_dir, stem, written)
    plot_spectrum(f, out_dir, stem, written)
    for p in written:
        print(p)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
