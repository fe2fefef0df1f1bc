#!/usr/bin/env bash
# Times `fitproof lint` (which loads the whole data file) against `wc -l` on
# the same file, cached, for generated files of the cylinders scenario, and
# reports peak memory against the size of the loaded column data.
#
#   bench/run.sh [ROWS...]          default: 100000 1000000 10000000
#
# Environment: BENCH_DIR (default /tmp/fitproof-bench) holds the generated
# files; FITPROOF (default build/fitproof); RUNS (default 5) timings per
# command, of which the fastest is reported. Needs GNU time (/usr/bin/time,
# Debian package `time`) for the peak memory.
set -eu
cd "$(dirname "$0")/.."
FITPROOF=${FITPROOF:-build/fitproof}
BENCH_DIR=${BENCH_DIR:-/tmp/fitproof-bench}
RUNS=${RUNS:-5}
[ $# -gt 0 ] || set -- 100000 1000000 10000000
[ -x /usr/bin/time ] || { echo "bench: needs GNU time (apt-get install time)" >&2; exit 1; }
[ -x "$FITPROOF" ] || make "$FITPROOF"
mkdir -p "$BENCH_DIR"
cc -O2 -std=c17 -o "$BENCH_DIR/gen_cylinders" bench/gen_cylinders.c

# fastest COMMAND...: the smallest wall time of RUNS runs, in seconds.
fastest() {
    local best= start end elapsed
    for _ in $(seq "$RUNS"); do
        start=$EPOCHREALTIME
        "$@" >/dev/null
        end=$EPOCHREALTIME
        elapsed=$(echo "$end - $start" | bc -l)
        if [ -z "$best" ] || [ "$(echo "$elapsed < $best" | bc -l)" = 1 ]; then best=$elapsed; fi
    done
    printf '%.3f' "$best"
}

# Column data: four numeric columns (8 bytes a cell) and two categories
# (4 bytes a cell) per row; the per-row line numbers (4 bytes) are not
# counted as column data.
# The resident memory of fitproof itself (code, libraries), from a 1-row file.
printf 'a,b\n1,2\n' >"$BENCH_DIR/tiny.csv"
printf 'fitproof: 1\ndata: {path: tiny.csv}\nmodels: [{id: m, response: b, terms: [a]}]\n' \
    >"$BENCH_DIR/tiny.yaml"
base_kb=$(/usr/bin/time -f '%M' "$FITPROOF" lint "$BENCH_DIR/tiny.yaml" 2>&1 >/dev/null | tail -1)
printf 'fitproof alone (a 1-row file): peak RSS %.1f MB\n\n' "$(echo "$base_kb * 1024 / 1000000" | bc -l)"
echo "| rows | file MB | wc -l s | lint s | ratio | lint CPU s | peak RSS MB | column data MB | memory ratio |"
echo "|---:|---:|---:|---:|---:|---:|---:|---:|---:|"
for rows in "$@"; do
    csv=$BENCH_DIR/cylinders-$rows.csv
    [ -s "$csv" ] || "$BENCH_DIR/gen_cylinders" "$rows" >"$csv"
    spec=$BENCH_DIR/cylinders-$rows.yaml
    cat >"$spec" <<YAML
fitproof: 1
title: Loading benchmark, $rows rows
data:
  path: cylinders-$rows.csv
models:
  - id: main
    response: strength_mpa
    terms: [age_days, wc_ratio, admixture, plant]
YAML
    cat "$csv" >/dev/null # into the page cache
    "$FITPROOF" lint "$spec" >/dev/null
    wc_s=$(fastest wc -l "$csv")
    lint_s=$(fastest "$FITPROOF" lint "$spec")
    read -r peak_kb cpu_s < <(/usr/bin/time -f '%M %U %S' "$FITPROOF" lint "$spec" 2>&1 >/dev/null |
        tail -1 | awk '{ print $1, $2 + $3 }')
    file_mb=$(echo "$(stat -c %s "$csv") / 1000000" | bc -l)
    data_mb=$(echo "$rows * (4 * 8 + 2 * 4) / 1000000" | bc -l)
    peak_mb=$(echo "$peak_kb * 1024 / 1000000" | bc -l)
    printf '| %s | %.1f | %s | %s | %.1f | %.2f | %.1f | %.1f | %.2f |\n' "$rows" "$file_mb" \
        "$wc_s" "$lint_s" "$(echo "$lint_s / $wc_s" | bc -l)" "$cpu_s" "$peak_mb" "$data_mb" \
        "$(echo "$peak_mb / $data_mb" | bc -l)"
done
