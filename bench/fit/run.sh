#!/usr/bin/env bash
# Fit benchmark, run by hand (not part of `make test`):
#   bench/fit/run.sh [ROWS] [auto|dense|streaming] [REPEATS]
# generates ROWS rows (default 10 million) of invented cylinders data under
# /tmp/fitproof-bench/, builds bench_fit against the sources, and reports
# load / design / fit seconds and peak memory; `wc -l` on the same file is
# timed for scale.
set -eu
cd "$(dirname "$0")/../.."
rows=${1:-10000000}
solver=${2:-auto}
repeats=${3:-1}
dir=/tmp/fitproof-bench
mkdir -p "$dir"
if [ ! -s "$dir/cylinders.csv" ] || [ "$(($(wc -l <"$dir/cylinders.csv") - 1))" -ne "$rows" ]; then
    /usr/bin/python3 bench/fit/generate.py "$rows" "$dir/cylinders.csv"
fi
make -s build/fitproof
objects=$(ls build/obj/src/*/*.o build/obj/build/gen/*.o | grep -v '/cli/main.o')
cc -std=c17 -O2 -g -Wall -Wextra -Werror bench/fit/bench_fit.c $objects \
    $(pkg-config --libs gsl yaml-0.1 jansson) -lm -o "$dir/bench_fit"
echo "wc -l:"
( time wc -l "$dir/cylinders.csv" ) 2>&1 | grep -E 'real|cylinders'
"$dir/bench_fit" bench/fit/bench.yaml "$solver" "$repeats"
