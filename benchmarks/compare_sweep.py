"""Frequencies per gap of a results file and, with a second (tighter) file, the largest relative
differences of E, F, F' over every gap and scan point (benchmarks/sweep.sh)."""
import sys

import h5py
import numpy as np


def points(f):
    if "scan" in f:
        return [(f["scan"][k].attrs.get("scan_label", k), f["scan"][k])
                for k in sorted(f["scan"], key=int)]
    return [("", f)]


def main(run, ref=None):
    with h5py.File(run, "r") as f:
        tol = float(points(f)[0][1].attrs["rel_tol"])
        print(f"{run}: rel_tol {tol:g}, wall_time_s {float(f.attrs['wall_time_s']):.2f}, "
              f"threads {f.attrs.get('threads', '?')}")
        worst = 0.0
        g = None
        for label, p in points(f):
            fr = p["frequencies"]
            n = [len(fr[str(i)]["xi"]) for i in range(len(p["results/gap"]))]
            print(f"  {label}: frequencies per gap {n} (total {sum(n)})")
            if ref is None:
                continue
            with h5py.File(ref, "r") as r:
                rp = dict(points(r))[label]
                for q in ("energy", "force", "gradient"):
                    if q not in p["results"]:
                        continue
                    a, b = p["results"][q][:], rp["results"][q][:]
                    d = np.abs(a - b) / np.abs(b)
                    worst = max(worst, d.max())
                    print(f"    {q:8s}: max |rel diff| vs reference {d.max():.2e} "
                          f"(gap {p['results/gap'][d.argmax()] * 1e9:.1f} nm)")
        if ref is not None:
            print(f"worst relative difference {worst:.2e}: "
                  f"{'within' if worst <= tol else 'NOT within'} rel_tol {tol:g}")


if __name__ == "__main__":
    main(*sys.argv[1:])
