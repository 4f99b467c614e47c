#!/bin/sh
# The speed targets of issue 17 in one command: the daily sweep (R = 150 um gold sphere over gold,
# 10 gaps 150 nm - 1 um, Drude and plasma, 300 K, E, F, F', rel_tol 1e-4), gold sphere-plate at
# R/L = 10^4 and 300 K (E, F, F'), and perfect conductors at R/L = 10^4 and T = 0 (E). Each case
# goes through benchmarks/sweep.sh: wall time, peak memory and CPU share of the run, frequencies
# per gap, and the worst relative difference of E, F, F' against the same case at a 10x tighter
# rel_tol (which takes 3-4x as long: about 20 minutes for all three on a quiet 2-core machine;
# --no-reference skips those runs, about 4 minutes). Other options go to sweep.sh.
#   benchmarks/speed_targets.sh [--no-reference] [--threads N] [--bin ./build/roundtrip]
set -eu
here=$(dirname "$0")
for c in gold_sweep_150um gold_rl10000_300K pec_rl10000_T0; do
  echo "== $c (goals: daily sweep < 60 s; gold R/L = 10^4 300 K < 10 min; PEC R/L = 10^4 T = 0 < 5 min)"
  "$here/sweep.sh" "$here/cases/$c.toml" "$@"
done
