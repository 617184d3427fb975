#!/usr/bin/env bash
# Whole-process timings, interleaved A B A B: the new default (least-squares multi-start) against
# the old (CRS2 4000 + BOBYQA) on each benchmark problem, ROUNDS rounds; prints min and median wall
# time (s) and the last run's line (evaluations, objective). Run on an idle machine:
#   benchmarks/time_fits.sh build/benchmarks/fit_process_bench [rounds] [threads]
set -euo pipefail
bin=${1:?path to fit_process_bench}
rounds=${2:-5}
threads=${3:-0}
for problem in mohr_coulomb cam_clay hyperbolic; do
  declare -A times=()
  declare -A line=()
  for ((r = 0; r < rounds; ++r)); do
    for mode in new old; do
      start=$(date +%s.%N)
      line[$mode]=$("$bin" "$problem" "$mode" "$threads")
      end=$(date +%s.%N)
      times[$mode]+="$(echo "$end - $start" | bc) "
    done
  done
  for mode in new old; do
    stats=$(echo ${times[$mode]} | tr ' ' '\n' | sort -g | awk '{a[NR]=$1} END {printf "min %.3f s, median %.3f s", a[1], (NR % 2 ? a[(NR+1)/2] : (a[NR/2]+a[NR/2+1])/2)}')
    echo "$problem $mode: $stats over $rounds runs | ${line[$mode]}"
  done
  unset times line
done
