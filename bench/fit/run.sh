#!/usr/bin/env bash
# Fit benchmark, run by hand (not part of `make test`):
#   bench/fit/run.sh [ROWS] [auto|dense|streaming] [REPEATS]
# generates ROWS rows (default 10 million) of invented cylinders data under
# /tmp/fitproof-fit-bench/ (once per size), builds bench_fit against the
# sources, and reports load / design / fit CPU seconds and memory; `wc -l`
# on the same file is timed for scale. See bench/fit/README.md.
set -eu
cd "$(dirname "$0")/../.."
rows=${1:-10000000}
solver=${2:-auto}
repeats=${3:-1}
dir=/tmp/fitproof-fit-bench
mkdir -p "$dir"
data="$dir/cylinders-$rows.csv"
[ -s "$data" ] || /usr/bin/python3 bench/fit/generate.py "$rows" "$data"
sed "s|path: cylinders.csv|path: cylinders-$rows.csv|" bench/fit/bench.yaml >"$dir/bench-$rows.yaml"
make -s build/fitproof
objects=$(ls build/obj/src/*/*.o build/obj/build/gen/*.o | grep -v '/cli/main.o')
cc -std=c17 -O2 -g -Wall -Wextra -Werror bench/fit/bench_fit.c $objects \
    $(pkg-config --libs gsl yaml-0.1 jansson) -lm -o "$dir/bench_fit"
echo "wc -l:"
( time wc -l "$data" ) 2>&1 | grep -E 'real|cylinders'
"$dir/bench_fit" "$dir/bench-$rows.yaml" "$solver" "$repeats"
