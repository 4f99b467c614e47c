"""Optical-data spread: a [scan] over several tabulated optical data sets of one material
(`model = "table"` materials of the case file) drawn as a band, min to max over the sets, with
each set as a thin line, beside the Drude and plasma models of the same scan. Values are shown
relative to the mean of the tabulated sets at each gap, Q/<Q>_sets, so that differences of a
few per cent are visible. Called by roundtrip_plot.py; writes <stem>_optical_spread.{png,svg}.
A material counts as Drude or plasma by its model in the case file (`model = "drude"` or
`"plasma"`) or, for built-in names, by "drude" or "plasma" in the name.
"""
import tomllib

import matplotlib.pyplot as plt
import matplotlib.ticker
import numpy as np


def _text(v):
    return v.decode() if isinstance(v, bytes) else str(v)


def _classify(name, user_models):
    model = user_models.get(name)
    if model == "table":
        return "table"
    if model in ("drude", "plasma"):
        return model
    if model is None:
        if "drude" in name:
            return "drude"
        if "plasma" in name:
            return "plasma"
    return None


def spread_groups(f):
    """[(title, quantity, gaps, {"table": [(name, values)], "drude": [...], "plasma": [...]})]
    for each set of scan points that differ only in the material and hold >= 2 tables."""
    if "scan" not in f or "input/case_file" not in f:
        return []
    try:
        case = tomllib.loads(_text(f["input/case_file"][()]))
    except tomllib.TOMLDecodeError:
        return []
    user_models = {k: v.get("model") for k, v in case.get("materials", {}).items()
                   if isinstance(v, dict)}
    pts = [f["scan"][k] for k in sorted(f["scan"].keys(), key=int)]
    keys = [k for k in pts[0].attrs if k.startswith("scan.") and k.endswith("material")]
    if not keys:
        return []
    key = keys[0]
    groups = {}
    for g in pts:
        others = tuple((k, _text(g.attrs[k])) for k in sorted(g.attrs)
                       if k.startswith("scan.") and k != key)
        groups.setdefault(others, []).append(g)
    out = []
    for others, members in groups.items():
        q = "force" if all("results/force" in g for g in members) else "energy"
        if not all(f"results/{q}" in g for g in members):
            continue
        gaps = members[0]["results/gap"][:]
        sets = {"table": [], "drude": [], "plasma": []}
        for g in members:
            if len(g["results/gap"]) != len(gaps) or not np.allclose(g["results/gap"][:], gaps):
                continue
            kind = _classify(_text(g.attrs[key]), user_models)
            if kind:
                sets[kind].append((_text(g.attrs[key]), g[f"results/{q}"][:]))
        if len(sets["table"]) >= 2:
            title = ", ".join(f"{k[5:]} = {v}" for k, v in others)
            out.append((title, q, gaps, sets))
    return out


def plot_optical_spread(f, out_dir, stem, written):
    groups = spread_groups(f)
    if not groups:
        return
    fig, axes = plt.subplots(1, len(groups), figsize=(6.4 * len(groups), 4.6), squeeze=False)
    for ax, (title, q, gaps, sets) in zip(axes[0], groups):
        sym = "F" if q == "force" else "E"
        L = gaps * 1e9
        tab = np.array([v for _, v in sets["table"]])
        ref = tab.mean(axis=0)
        rel = tab / ref
        spread = (rel.max(axis=0) - rel.min(axis=0))
        ax.fill_between(L, rel.min(axis=0), rel.max(axis=0), color="tab:orange", alpha=0.3,
                        lw=0, label=f"optical data sets: min\u2013max ({len(tab)} sets; "
                                    f"width {100 * spread.min():.2g}\u2013{100 * spread.max():.2g} %)")
        styles = ["-", ":", "--", "-."]
        for i, ((name, _), r) in enumerate(zip(sets["table"], rel)):
            ax.plot(L, r, styles[i % len(styles)], lw=0.8, color="tab:brown",
                    label=f"optical data: {name}")
        for kind, style, color in (("drude", "--", "tab:blue"), ("plasma", "-.", "tab:red")):
            for name, v in sets[kind]:
                ax.plot(L, v / ref, style, lw=1.4, color=color, label=f"{kind.capitalize()}: {name}")
        ax.axhline(1.0, color="0.6", lw=0.8)
        ax.set_xscale("log")
        ax.xaxis.set_major_formatter(matplotlib.ticker.ScalarFormatter())  # 100, 1000
        ax.xaxis.set_minor_formatter(matplotlib.ticker.FormatStrFormatter("%g"))
        ax.set_xlabel("gap L (nm)")
        ax.set_ylabel(f"{sym} / mean {sym} of the optical data sets (ratio)")
        ax.set_title("Spread of optical data" + (f" ({title})" if title else ""))
        ax.legend(fontsize=7)
    fig.tight_layout()
    for ext in ("png", "svg"):
        path = f"{out_dir}/{stem}_optical_spread.{ext}"
        fig.savefig(path, dpi=150 if ext == "png" else None, bbox_inches="tight")
        written.append(path)
    plt.close(fig)
