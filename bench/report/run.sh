#!/usr/bin/env bash
# The whole report against reading the data, and against a Python script
# pipeline doing the same content (bench/report/peer.py). Run by hand:
#
#   bench/report/run.sh [ROWS...]        default: 100000 1000000 10000000
#   PEER_MAX=1000000 bench/report/run.sh # run the Python peer up to this size
#   WIDE=1 bench/report/run.sh 0         # only the wide design (1 800 rows, 902 coefficients)
#
# For each size: the cylinders file (bench/gen_cylinders.c, seeded), a spec
# with the 13-coefficient model (age, water-cement ratio, admixture, plant,
# age × admixture, ratio × plant; order_by cylinder_id; every figure;
# Markdown, HTML and JSON), then one run each of `fitproof lint`,
# `fitproof build --timings` and (up to PEER_MAX rows) the peer, each with
# wall, user + system seconds and peak RSS from GNU time, and the load
# average beside them (the machine may be shared: compare CPU seconds).
set -eu
cd "$(dirname "$0")/../.."
FITPROOF=${FITPROOF:-build/fitproof}
BENCH_DIR=${BENCH_DIR:-/tmp/fitproof-report-bench}
PEER_MAX=${PEER_MAX:-1000000}
PYTHON=${PYTHON:-/usr/bin/python3}
[ $# -gt 0 ] || set -- 100000 1000000 10000000
[ -x /usr/bin/time ] || { echo "bench: needs GNU time (apt-get install time)" >&2; exit 1; }
[ -x "$FITPROOF" ] || make "$FITPROOF"
mkdir -p "$BENCH_DIR"
cc -O2 -std=c17 -o "$BENCH_DIR/gen_cylinders" bench/gen_cylinders.c

# measure LABEL COMMAND...: one run; prints "| label | wall | cpu | peak MB | load |".
measure() {
    local label=$1
    shift
    local load
    load=$(cut -d' ' -f1 /proc/loadavg)
    /usr/bin/time -f '%e %U %S %M' -o "$BENCH_DIR/time" "$@" >/dev/null 2>"$BENCH_DIR/stderr" ||
        { cat "$BENCH_DIR/stderr" >&2; return 1; }
    read -r wall user sys kb <"$BENCH_DIR/time"
    printf '| %s | %s | %.2f | %.0f | %s |\n' "$label" "$wall" "$(echo "$user + $sys" | bc -l)" \
        "$(echo "$kb * 1024 / 1000000" | bc -l)" "$load"
}

echo "| run | wall s | CPU s | peak RSS MB | load |"
echo "|---|---:|---:|---:|---:|"
for rows in "$@"; do
    [ "$rows" = 0 ] && continue
    csv=$BENCH_DIR/cylinders-$rows.csv
    [ -s "$csv" ] || "$BENCH_DIR/gen_cylinders" "$rows" >"$csv"
    spec=$BENCH_DIR/cylinders-$rows.yaml
    cat >"$spec" <<YAML
fitproof: 1
title: Report benchmark, $rows rows
data:
  path: cylinders-$rows.csv
  columns:
    admixture: {kind: category, reference: none}
    plant: {kind: category}
models:
  - id: main
    response: strength_mpa
    terms: [age_days, wc_ratio, admixture, plant, [age_days, admixture], [wc_ratio, plant]]
    order_by: cylinder_id
report:
  formats: [markdown, html, json]
YAML
    cat "$csv" >/dev/null # into the page cache
    measure "lint $rows" "$FITPROOF" lint "$spec"
    measure "build $rows" "$FITPROOF" build "$spec" -o "$BENCH_DIR/out-$rows" --timings
    sed 's/^/    /' "$BENCH_DIR/stderr" | grep -v 'wrote'
    printf '    results.json: %s bytes\n' "$(stat -c %s "$BENCH_DIR/out-$rows/results.json")"
    if [ "$rows" -le "$PEER_MAX" ]; then
        measure "peer $rows" "$PYTHON" bench/report/peer.py cylinders "$csv" "$BENCH_DIR/peer-$rows"
    fi
done
if [ "${WIDE:-0}" = 1 ]; then
    wide=$BENCH_DIR/wide.csv
    "$PYTHON" - "$wide" <<'PY'
import random, sys
random.seed(7)
with open(sys.argv[1], "w") as f:
    f.write("site,x1,x2,y\n")
    for i in range(1800):
        s, x1, x2 = i % 900, random.uniform(0, 10), random.uniform(0, 5)
        f.write("s%03d,%.4f,%.4f,%.4f\n" % (s, x1, x2, 1 + 0.01 * s + 0.5 * x1 - 0.3 * x2 + random.gauss(0, 1)))
PY
    cat >"$BENCH_DIR/wide.yaml" <<'YAML'
fitproof: 1
title: Wide design
data:
  path: wide.csv
  columns:
    site: {kind: category}
models:
  - id: wide
    response: y
    terms: [site, x1, x2]
report:
  formats: [markdown, html, json]
YAML
    measure "build wide" "$FITPROOF" build "$BENCH_DIR/wide.yaml" -o "$BENCH_DIR/out-wide" --timings
    sed 's/^/    /' "$BENCH_DIR/stderr" | grep -v 'wrote'
    measure "peer wide" "$PYTHON" bench/report/peer.py wide "$wide" "$BENCH_DIR/peer-wide"
fi
