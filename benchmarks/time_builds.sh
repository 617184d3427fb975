#!/usr/bin/env bash
# Whole-process timings of one benchmark problem with two builds of fit_process_bench (e.g. before
# and after a change), interleaved A B A B, ROUNDS rounds; prints min and median wall time and user
# CPU time (s) of each, and its last line (evaluations, objective). Run on a machine as quiet as you
# can get it, and say how quiet it was:
#   benchmarks/time_builds.sh A/fit_process_bench B/fit_process_bench [problem] [rounds] [threads]
set -euo pipefail
bin_a=${1:?path to fit_process_bench of build A}
bin_b=${2:?path to fit_process_bench of build B}
problem=${3:-sand}
rounds=${4:-3}
threads=${5:-2}
declare -A wall=() cpu=() line=()
out=$(mktemp)
trap 'rm -f "$out"' EXIT
for ((r = 0; r < rounds; ++r)); do
  for which in A B; do
    bin=$bin_a
    [[ $which == B ]] && bin=$bin_b
    /usr/bin/time -f "%e %U" -o "$out" "$bin" "$problem" new "$threads" > "$out.line"
    read -r w u < "$out"
    wall[$which]+="$w "
    cpu[$which]+="$u "
    line[$which]=$(cat "$out.line")
    rm -f "$out.line"
    echo "round $((r + 1)) $which: wall $w s, user $u s, load $(cut -d' ' -f1 /proc/loadavg)" >&2
  done
done
stats() { echo "$1" | tr ' ' '\n' | grep -v '^$' | sort -g | awk '{a[NR]=$1} END {printf "min %.2f s, median %.2f s", a[1], (NR % 2 ? a[(NR+1)/2] : (a[NR/2]+a[NR/2+1])/2)}'; }
for which in A B; do
  echo "$which $problem, $threads threads, $rounds rounds: wall $(stats "${wall[$which]}"); user CPU $(stats "${cpu[$which]}") | ${line[$which]}"
done
