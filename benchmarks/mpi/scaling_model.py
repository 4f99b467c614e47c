#!/usr/bin/python3
"""Model of a distributed run's wall time on P nodes (README "Clusters", scaling model).

Work items are frequency tasks (frequency_rounds.h) handed out largest first to whichever node
is free (greedy list scheduling, Graham, Bell Syst. Tech. J. 45, 1563 (1966): the makespan is at
most W/P + c_max, and at least max(W/P, c_max)). Each task costs one request and one reply of
48 bytes (the dispatcher's overhead per task, t_msg, measured on this machine) and each round a
replay of the frequency rules on rank 0 (negligible against the tasks).

  T(P) = max(W / P, c_max) .. W / P + c_max     (+ n t_msg / P)
  efficiency(P) = W / (P T(P))

usage: scaling_model.py ITEMS COST_MEAN COST_MAX [T_MSG] [P ...]
  ITEMS      number of frequency tasks (gaps x frequencies x scan points)
  COST_MEAN  mean seconds per task on one node, COST_MAX the largest task
"""
import sys


def model(n, mean, cmax, t_msg, p):
    w = n * mean
    lo = max(w / p, cmax) + n * t_msg / p
    hi = w / p + cmax + n * t_msg / p
    if p >= n:  # one task per node at most: the largest task is the time
        hi = cmax + t_msg
    return w, lo, hi


def main():
    if len(sys.argv) < 4:
        print(__doc__)
        sys.exit(2)
    n, mean, cmax = int(sys.argv[1]), float(sys.argv[2]), float(sys.argv[3])
    t_msg = float(sys.argv[4]) if len(sys.argv) > 4 else 1e-3
    ps = [int(x) for x in sys.argv[5:]] or [1, 2, 4, 10, 30, 100]
    print(f"{n} tasks, mean {mean:g} s, largest {cmax:g} s, {t_msg:g} s per task overhead")
    print(f"{'nodes':>6} {'T best [s]':>11} {'T worst [s]':>12} {'efficiency':>16}")
    for p in ps:
        w, lo, hi = model(n, mean, cmax, t_msg, p)
        print(f"{p:>6} {lo:>11.4g} {hi:>12.4g} {w / (p * hi):>7.2f} - {w / (p * lo):.2f}")


if __name__ == "__main__":
    main()
