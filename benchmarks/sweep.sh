#!/bin/sh
# Sweep benchmark (issue 17): run a case at its rel_tol and, unless --no-reference, the same case
# at a tighter rel_tol (default 10x tighter), then print wall time, peak memory (GNU time),
# frequencies per gap and the largest relative difference of E, F, F' between the two runs.
#   benchmarks/sweep.sh benchmarks/cases/gold_sweep_150um.toml [--reference-tol 1e-5]
#       [--reference FILE.h5] [--no-reference] [--threads N] [--bin ./build/roundtrip]
# A run is "within rel_tol" when every |Q - Q_ref| <= rel_tol |Q_ref| (Q = E, F, F' at every gap
# and scan point). The reference file can be reused across builds with --reference.
set -eu
case_file=$1; shift
bin=./build/roundtrip
ref_tol=""
ref_file=""
no_ref=0
threads=""
while [ $# -gt 0 ]; do
  case $1 in
    --reference-tol) ref_tol=$2; shift 2 ;;
    --reference) ref_file=$2; shift 2 ;;
    --no-reference) no_ref=1; shift ;;
    --threads) threads="--threads $2"; shift 2 ;;
    --bin) bin=$2; shift 2 ;;
    *) echo "sweep.sh: unknown option $1" >&2; exit 2 ;;
  esac
done
out=${TMPDIR:-/tmp}/sweep_bench.$$
mkdir -p "$out"
stem=$(basename "$case_file" .toml)
timed_run() {  # case, h5, log
  rm -f "$2" "$2.journal"
  /usr/bin/time -v "$bin" run "$1" -o "$2" --quiet --restart $threads >"$3.out" 2>"$3.time" || {
    echo "run failed:"; cat "$3.time"; exit 4; }
  wall=$(sed -n 's/.*Elapsed (wall clock) time (h:mm:ss or m:ss): //p' "$3.time")
  peak=$(sed -n 's/.*Maximum resident set size (kbytes): //p' "$3.time")
  cpu=$(sed -n 's/.*Percent of CPU this job got: //p' "$3.time")
  echo "$1: wall $wall, peak $(awk "BEGIN{printf \"%.0f\", $peak/1024}") MiB, CPU $cpu, load: $(cut -d' ' -f1-3 /proc/loadavg)"
}
echo "machine: $(nproc) cores, $(uptime)"
timed_run "$case_file" "$out/$stem.h5" "$out/$stem"
if [ $no_ref -eq 0 ] && [ -z "$ref_file" ]; then
  tol=$(sed -n 's/^rel_tol *= *//p' "$case_file" | head -1)
  [ -n "$ref_tol" ] || ref_tol=$(awk "BEGIN{print $tol/10}")
  sed "s/^rel_tol *=.*/rel_tol = $ref_tol/" "$case_file" >"$out/${stem}_ref.toml"
  timed_run "$out/${stem}_ref.toml" "$out/${stem}_ref.h5" "$out/${stem}_ref"
  ref_file="$out/${stem}_ref.h5"
fi
/usr/bin/python3 "$(dirname "$0")/compare_sweep.py" "$out/$stem.h5" ${ref_file:+"$ref_file"}
echo "files: $out"
