#!/usr/bin/env bash
# Strong scaling of `roundtrip run` under MPI on this machine: 1 rank x 1 thread (serial
# program), 1 rank x 2 threads, and mpirun with 1, 2, 4 ranks x 1 thread. With more ranks than
# cores (--oversubscribe) the ranks share cores: 4 ranks on 2 cores measure the dispatcher's
# overhead and balance, not a speed-up. Prints wall seconds and efficiency against 1 x 1, the CPU
# seconds (user + system of every process of the run, mpirun and ranks included: on a loaded
# machine the figure to compare) and the summary lines of the MPI runs (block items, shared scan).
#   benchmarks/mpi/strong_scaling.sh [CASE]    (needs ./build and ./build-mpi)
set -euo pipefail
cd "$(dirname "$0")/../.."
case_file=${1:-benchmarks/mpi/sphere_plate_4gaps.toml}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
mpirun=(mpirun --oversubscribe --allow-run-as-root)
seconds() {  # wall seconds of a command; its CPU seconds go to $tmp/cpu
  local t0 t1
  t0=$(date +%s.%N)
  /usr/bin/time -f "%U %S" -o "$tmp/time" "$@" > "$tmp/out" 2> "$tmp/err"
  t1=$(date +%s.%N)
  awk '{printf "%.2f", $1 + $2}' "$tmp/time" > "$tmp/cpu"
  echo "$t1 - $t0" | bc -l
}
echo "case: $case_file; load before: $(cut -d' ' -f1-3 /proc/loadavg); cores: $(nproc)"
t11=$(seconds ./build/roundtrip run "$case_file" -o "$tmp/a.h5" --threads 1 --quiet)
printf "%-28s %8.2f s  cpu %s s\n" "serial 1 thread" "$t11" "$(cat "$tmp/cpu")"
t12=$(seconds ./build/roundtrip run "$case_file" -o "$tmp/b.h5" --threads 2 --quiet)
printf "%-28s %8.2f s  efficiency %.2f  cpu %s s\n" "serial 2 threads" "$t12" \
  "$(echo "$t11 / (2 * $t12)" | bc -l)" "$(cat "$tmp/cpu")"
for n in 1 2 4; do
  t=$(seconds "${mpirun[@]}" -np "$n" ./build-mpi/roundtrip run "$case_file" -o "$tmp/m$n.h5" --threads 1)
  cores=$(( n < $(nproc) ? n : $(nproc) ))
  printf "%-28s %8.2f s  efficiency %.2f (per core used)  cpu %s s  %s\n" \
    "mpirun -np $n x 1 thread" "$t" "$(echo "$t11 / ($cores * $t)" | bc -l)" "$(cat "$tmp/cpu")" \
    "$(grep -o 'task time per rank.*' "$tmp/err")"
  grep -E 'split into|computed together' "$tmp/err" | sed 's/^/  /' || true
  for q in results/energy scan/0/results/energy scan/1/results/energy; do
    h5diff "$tmp/a.h5" "$tmp/m$n.h5" "$q" "$q" > /dev/null 2>&1 && echo "  $q identical to the serial run"
  done
done
echo "load after: $(cut -d' ' -f1-3 /proc/loadavg)"
