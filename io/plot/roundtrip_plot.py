#!/usr/bin/python3
"""Plots of a roundtrip results file (layout: README.md, "HDF5 results").

    /usr/bin/python3 io/plot/roundtrip_plot.py RESULT.h5 [-o DIR]     (or: roundtrip plot ...)

Writes, as PNG and SVG, into DIR (default: the directory of RESULT.h5), names prefixed with the
file's stem:
  <stem>_pfa.*          E/E_PFA - 1 (and F, F') against L/R, with the whole theta fit
                        theta x + theta2 x^2 + theta3 x^3 where the file has one
  <stem>_force.*        |F| and |F'| against L, with their PFA values where present
  <stem>_drude_plasma.* Drude/plasma ratio of F against L (scans over a material only)
  <stem>_surface_models.* Q/Q_ref - 1 against L for each surface model of a [scan] plate.surface
                        axis, the first model the reference (Q = F, else E)
  <stem>_spectrum.*     per-frequency contributions |w_j s(xi_j)| to E at up to four gaps, one
                        panel per scan point (log-log)
  <stem>_lateral.*      lateral force per area F_b = -dE/db against the offset b, one curve per
                        gap (and other scan parameters), with its PFA (kinds with [offsets])
  <stem>_optical_spread.*  scans over several tabulated data sets of one material: their band
                        (min-max, each set a thin line) beside Drude and plasma (spread_plot.py)
  <stem>_compare_<name>.*  comparisons with measured data (roundtrip compare; compare_plot.py)
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


DESCRIPTIONS = {}  # name -> axes as drawn (for --axes-json: tests read scales, labels, ticks back)


def describe(fig):
    fig.canvas.draw()
    out = []
    for ax in fig.axes:
        def ticks(axis, lim):
            lo, hi = sorted(lim)
            return [t.get_text() for t, v in zip(axis.get_ticklabels(), axis.get_ticklocs())
                    if t.get_text() and lo * (1 - 1e-9) <= v <= hi * (1 + 1e-9)]
        leg = ax.get_legend()
        out.append({"xscale": ax.get_xscale(), "yscale": ax.get_yscale(),
                    "xlabel": ax.get_xlabel(), "ylabel": ax.get_ylabel(), "title": ax.get_title(),
                    "xticks": ticks(ax.xaxis, ax.get_xlim()), "yticks": ticks(ax.yaxis, ax.get_ylim()),
                    "legend": [t.get_text() for t in leg.get_texts()] if leg else [],
                    "lines": [{"label": l.get_label(), "x": [float(v) for v in l.get_xdata()],
                               "y": [float(v) for v in l.get_ydata()]} for l in ax.get_lines()]})
    return out


def readable_log_ticks(ax, axis="x"):
    """A log axis spanning less than four decades gets labels at 1, 2, 5 (or 1, 3) x 10^k in plain
    numbers (matplotlib's default labels only the powers of ten: a 200-2000 nm axis had one)."""
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter
    a = ax.xaxis if axis == "x" else ax.yaxis
    lo, hi = sorted(ax.get_xlim() if axis == "x" else ax.get_ylim())
    if lo <= 0 or hi / lo > 1e4:
        return
    subs = ((1.0, 3.0) if hi / lo > 300 else (1.0, 2.0, 5.0) if hi / lo > 8
            else (1.0, 1.5, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0))
    a.set_major_locator(LogLocator(base=10, subs=subs))
    a.set_major_formatter(FuncFormatter(lambda v, _: f"{v:g}"))
    a.set_minor_formatter(NullFormatter())


def save(fig, out_dir, stem, name, written):
    DESCRIPTIONS[name] = describe(fig)
    for ext in ("png", "svg"):
        path = os.path.join(out_dir, f"{stem}_{name}.{ext}")
        fig.savefig(path, dpi=150 if ext == "png" else None, bbox_inches="tight")
        written.append(path)
    plt.close(fig)


def unit_of(ds):
    return text(ds.attrs.get("units", ""))


def plot_pfa(f, out_dir, stem, written):
    rs = [(lab, g) for lab, g in runs(f)
          if ("results/energy_ratio" in g or "results/force_ratio" in g)
          and any(k in g.attrs for k in ("pfa_length_m", "sphere_radius_m"))]
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
            line, = ax.plot(x, y, markers[q], label=f"{names[q]}/{names[q]}_PFA \u2212 1" +
                            (f" ({lab})" if lab else ""))
            fit = f"results/pfa_theta/{q}"
            if fit in g:
                # The whole fitted model Q/Q_PFA - 1 = theta x + theta2 x^2 + theta3 x^3 (the
                # coefficients the file stores; solver/pfa/theta_fit.h), not its first term only.
                a = g[fit].attrs
                c = [float(a[k]) for k in ("theta", "theta2", "theta3") if k in a]
                xs = np.linspace(0.0, float(np.max(x)), 100)
                ys = sum(ck * xs ** (k + 1) for k, ck in enumerate(c))
                ax.plot(xs, ys, "-", color=line.get_color(), lw=1,
                        label=f"fit: \u03b8 = {c[0]:.3f} \u00b1 {float(a['uncertainty']):.3f}")
    ax.axhline(0.0, color="0.6", lw=0.8)
    ax.set_xlabel("L/R (gap over the PFA length: sphere radius, or R_eff of two spheres)")
    ax.set_ylabel("Q/Q_PFA \u2212 1 (ratio)")
    ax.set_title("Departure from the proximity force approximation")
    ax.set_xlim(left=0.0)
    ax.legend(fontsize=8, framealpha=0.85)
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
                              label=f"|{sym}|" + (f" ({lab})" if lab else ""))
            if f"results/{q}_pfa" in g:
                ax.loglog(L * 1e9, np.abs(g[f"results/{q}_pfa"][:]), "--", color=line.get_color(),
                          label=f"|{sym}_PFA|" + (f" ({lab})" if lab else ""))
        ax.set_xlabel("gap L (nm)")
        ax.set_ylabel(f"|{sym}| ({units})")
        ax.set_title("Force" if q == "force" else "Force gradient")
        readable_log_ticks(ax, "x")
        readable_log_ticks(ax, "y")
        ax.legend(fontsize=8, framealpha=0.85)
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
        lab = ", ".join(f"{k[5:]} = {v}" for k, v in o) or (
            f"{text(d.attrs[key])} / {text(p.attrs[key])}")
        ax.semilogx(L * 1e9, d[f"results/{q}"][:] / p[f"results/{q}"][:], "o-", ms=3, label=lab)
    ax.set_xlabel("gap L (nm)")
    ax.set_ylabel(f"{sym}_Drude / {sym}_plasma (ratio)")
    ax.set_title(f"Drude against plasma model ({key[5:]})")
    readable_log_ticks(ax, "x")
    ax.legend(fontsize=8, framealpha=0.85)
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
    """|w_j s(xi_j)| on log-log axes (the terms span decades and are negative for attraction),
    up to four gaps per scan point, one panel per scan point."""
    rs = [(lab, g) for lab, g in runs(f) if "frequencies" in g and len(g["frequencies"].keys())]
    if not rs:
        return
    n = len(rs)
    cols = min(n, 2)
    rows = (n + cols - 1) // cols
    fig, axes = plt.subplots(rows, cols, figsize=(6.4 * cols, 4.4 * rows), squeeze=False)
    for i, (lab, g) in enumerate(rs):
        ax = axes[i // cols][i % cols]
        keys = sorted(g["frequencies"].keys(), key=int)
        pick = sorted({keys[int(round(j))] for j in np.linspace(0, len(keys) - 1, min(4, len(keys)))},
                      key=int)
        e_units = unit_of(g["results/energy"]) if "results/energy" in g else (
            "J/m^2" if int(g.attrs["per_area"]) else "J")
        for k in pick:
            fr = g["frequencies"][k]
            xi, w, sv = fr["xi"][:], fr["weight"][:], fr["s"][:]
            c = w * sv
            gap = float(fr.attrs["gap"])
            pos = (xi > 0) & (c != 0)
            label = f"L = {gap * 1e9:.4g} nm"
            if not (xi > 0).all():
                label += f" (\u03be = 0: {c[xi == 0].sum():.3g} {e_units})"
            ax.loglog(xi[pos], np.abs(c[pos]), ".-", ms=3, lw=0.8, label=label)
        rule = text(g.attrs.get("frequency_rule", ""))
        ax.set_xlabel("imaginary frequency \u03be (rad/s)")
        ax.set_ylabel(f"|w_j s(\u03be_j)|, share of E ({e_units})")
        ax.set_title(("Contributions per frequency" + (f"\n{lab}" if lab else "")) +
                     {"matsubara": " (Matsubara terms)", "pade-spectrum": " (Pade poles)"}.get(
                         rule, " (frequency nodes)"), fontsize=10)
        readable_log_ticks(ax, "x")
        ax.legend(fontsize=8, framealpha=0.85)
    for j in range(n, rows * cols):
        axes[j // cols][j % cols].set_visible(False)
    save(fig, out_dir, stem, "spectrum", written)


def plot_lateral(f, out_dir, stem, written):
    pts = [g for _, g in runs(f) if "results/lateral_force" in g and "offset_m" in g.attrs]
    if not pts:
        return
    # One curve per gap and per combination of the other scan parameters.
    def others(g):
        return tuple((k, text(g.attrs[k])) for k in sorted(g.attrs)
                     if k.startswith("scan.") and k != "scan.offset")
    curves = {}
    for g in pts:
        gaps = g["results/gap"][:]
        for i, L in enumerate(gaps):
            pfa = g["results/lateral_force_pfa"][i] if "results/lateral_force_pfa" in g else np.nan
            curves.setdefault((others(g), float(L)), []).append(
                (float(g.attrs["offset_m"]), float(g["results/lateral_force"][i]), float(pfa)))
    fig, ax = plt.subplots(figsize=(6.4, 4.4))
    unit = unit_of(pts[0]["results/lateral_force"])
    for (oth, L), rows in sorted(curves.items()):
        rows.sort()
        b = np.array([r[0] for r in rows]) * 1e9
        lab = f"L = {L * 1e9:g} nm" + "".join(f", {k[5:]} = {v}" for k, v in oth)
        line, = ax.plot(b, [r[1] for r in rows], "o-", label=lab)
        ax.plot(b, [r[2] for r in rows], "--", color=line.get_color(), lw=1, label=lab + " (PFA)")
    ax.axhline(0.0, color="0.6", lw=0.8)
    ax.set_xlabel("offset b of the upper grating's ridges (nm)")
    ax.set_ylabel(f"lateral force per area F_b = \u2212dE/db ({unit})")
    ax.set_title("Lateral force against the offset (> 0 pushes towards +x)")
    ax.legend(fontsize=8)
    save(fig, out_dir, stem, "lateral", written)


def main(argv):
    ap = argparse.ArgumentParser(description="Plots of a roundtrip results file (PNG and SVG).")
    ap.add_argument("result", help="results file written by `roundtrip run` (HDF5)")
    ap.add_argument("-o", "--output-dir", default=None, help="directory for the plots")
    ap.add_argument("--axes-json", default=None,
                    help="also write the axes as drawn (scales, labels, tick labels, legends) to "
                         "this JSON file")
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
    plot_lateral(f, out_dir, stem, written)
    # Drawn by their own modules beside this file (io/plot/): the optical-data band of a
    # material scan and the comparisons with measured data (`roundtrip compare`).
    import compare_plot  # noqa: E402
    import spread_plot  # noqa: E402
    spread_plot.plot_optical_spread(f, out_dir, stem, written)
    compare_plot.plot_all(f, out_dir, stem, written)
    if a.axes_json:
        import json
        with open(a.axes_json, "w") as fh:
            json.dump(DESCRIPTIONS, fh, indent=1)
    for p in written:
        print(p)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
