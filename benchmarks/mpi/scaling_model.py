#!/usr/bin/python3
"""Model of a distributed run's wall time on P nodes (README "Clusters", scaling model).

Work items are frequency tasks (frequency_rounds.h) handed out largest first to whichever node
is free (greedy list scheduling, Graham, Bell Syst. Tech. J. 45, 1563 (1966): the makespan is at
most W/P + c_max, and at least max(W/P, c_max)). Each task costs one request and one reply
(the dispatcher's overhead per task, t_msg, measured on this machine) and each round a replay of
the frequency rules on rank 0 (negligible against the tasks).

Block tasks: a frequency whose s(xi) is one m sum (spheres) is cut into m chunks when a round has
fewer than ITEMS_PER_SLOT (4) tasks per node for its cost, as SweepRounds::split_largest does:
target = W / (4 P), parts = min(batches, ceil(cost / target)) with batches = BLOCKS / 8 (m blocks
come in batches of 8), chunks of ceil(batches / parts) batches. The tasks are then the chunks,
and c_max is the largest chunk (blocks of one frequency taken as equal in cost: at R/L = 1e4 the
block size 2 (l_max - m + 1) varies by a few per cent over the ~600 blocks).

  T(P) = max(W / P, c_max) .. W / P + c_max     (+ n t_msg / P)
  efficiency(P) = W / (P T(P))

usage: scaling_model.py ITEMS COST_MEAN COST_MAX [T_MSG] [P ...] [--blocks B]
  ITEMS      number of frequency tasks (gaps x frequencies x scan points)
  COST_MEAN  mean seconds per task on one node, COST_MAX the largest task
  --blocks B m blocks per frequency (spheres: the plan's estimate, solver/geometries/geometry.cc);
             0 or absent: frequencies are not split
"""
import math
import sys

ITEMS_PER_SLOT = 4.0  # solver/parallel/frequency_rounds.h, kItemsPerSlot
M_BATCH = 8  # solver/blocks/m_sum.h, kMBatch


def split(n, mean, cmax, blocks, p):
    """Tasks after block splitting on p nodes: (count, mean cost, largest cost)."""
    if blocks <= 0 or p < 2:
        return n, mean, cmax
    w = n * mean
    target = w / (ITEMS_PER_SLOT * p)
    batches = math.ceil(blocks / M_BATCH)

    def chunks(cost):
        if cost <= target:
            return 1
        parts = min(batches, math.ceil(cost / target))
        if parts < 2:
            return 1
        return math.ceil(batches / math.ceil(batches / parts))

    # Equal items of the mean cost, the largest one split by its own cost.
    k_mean, k_max = chunks(mean), chunks(cmax)
    count = (n - 1) * k_mean + k_max
    return count, w / count, max(mean / k_mean, cmax / k_max)


def model(n, mean, cmax, t_msg, p):
    w = n * mean
    lo = max(w / p, cmax) + n * t_msg / p
    hi = w / p + cmax + n * t_msg / p
    if p >= n:  # one task per node at most: the largest task is the time
        hi = cmax + t_msg
    return w, lo, hi


def main():
    args = sys.argv[1:]
    blocks = 0
    if "--blocks" in args:
        i = args.index("--blocks")
        blocks = int(args[i + 1])
        del args[i:i + 2]
    if len(args) < 3:
        print(__doc__)
        sys.exit(2)
    n, mean, cmax = int(args[0]), float(args[1]), float(args[2])
    t_msg = float(args[3]) if len(args) > 3 else 1e-3
    ps = [int(x) for x in args[4:]] or [1, 2, 4, 10, 30, 100]
    print(f"{n} tasks, mean {mean:g} s, largest {cmax:g} s, {t_msg:g} s per task overhead" +
          (f", {blocks} m blocks per frequency" if blocks else ""))
    print(f"{'nodes':>6} {'tasks':>6} {'largest [s]':>11} {'T best [s]':>11} {'T worst [s]':>12}"
          f" {'efficiency':>16}")
    for p in ps:
        k, kmean, kmax = split(n, mean, cmax, blocks, p)
        w, lo, hi = model(k, kmean, kmax, t_msg, p)
        print(f"{p:>6} {k:>6} {kmax:>11.4g} {lo:>11.4g} {hi:>12.4g} "
              f"{w / (p * hi):>7.2f} - {w / (p * lo):.2f}")


if __name__ == "__main__":
    main()
