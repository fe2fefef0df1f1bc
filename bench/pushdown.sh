#!/usr/bin/env bash
# Pushdown across shards, by hand (bench/pushdown.md): ROWS generated rows
# (default 1e7) on two shard servers behind a coordinator
# (tests/e2e/pg_cluster.sh), one spec built twice from the coordinator's
# partitioned table: rows streamed, and with pushdown: true. Prints the
# wall time of each build, the bytes fitproof received from the server
# (strace: the sum of what each read/recvfrom on a socket returned), and
# the time of each SQL pass on the coordinator against the floor, a plain
# SELECT count(*) over the same table.
#
#   bench/pushdown.sh [ROWS]
set -u
cd "$(dirname "$0")/.."
rows=${1:-10000000}
FITPROOF=${FITPROOF:-build/fitproof}
. tests/e2e/lib.sh
. tests/e2e/pg_cluster.sh
pg_cluster_binaries || { echo "bench/pushdown.sh: needs Debian's postgresql package" >&2; exit 1; }
command -v strace >/dev/null || { echo "bench/pushdown.sh: needs strace (apt-get install strace)" >&2; exit 1; }

now() { date +%s.%N; }
seconds() { awk -v a="$1" -v b="$2" 'BEGIN { printf "%.2f", b - a }'; }

start=$(now)
PG_CLUSTER_LOCAL=0 pg_cluster_start "$rows"
echo "rows: $rows on 2 shards (generated and loaded in $(seconds "$start" "$(now)") s)"
rm -f "$pg_csv"

# spec NAME EXTRA: the model of tests/e2e/test_shards.sh over the
# coordinator's partitioned table.
spec() {
    mkdir -p "$WORK/$1"
    cat >"$WORK/$1/spec.yaml" <<YAML
fitproof: 1
title: Tensile strength of coated coupons
data:
  postgres: "$pg_coordinator"
  table: coupons
  key: line
$2  rows_are: coupons
  columns:
    oven: {kind: category, reference: east}
    plant: {kind: category, reference: north}
models:
  - id: main
    response: strength_mpa
    terms: [temp_c, {polynomial: hours, degree: 2}, oven, plant]
    order_by: line
report:
  archive_data: false
  formats: [json]
YAML
}

# received LOG: bytes returned by reads on sockets in an strace -yy log.
received() {
    awk '/^([0-9]+ +)?(read|recvfrom|recvmsg)\([0-9]+<(UNIX|TCP)/ && / = [0-9]+$/ { total += $NF }
        END { printf "%.0f", total }' "$1"
}

# measure NAME: one build's wall time, then one under strace for the bytes.
measure() {
    local t0 t1 status
    t0=$(now)
    "$FITPROOF" build "$WORK/$1/spec.yaml" -o "$WORK/$1/report" >"$WORK/$1/out" 2>&1
    status=$?
    t1=$(now)
    [ "$status" -le 1 ] || { echo "$1: build failed: $(cat "$WORK/$1/out")"; return 1; }
    strace -f -qq -yy -e trace=read,recvfrom,recvmsg -e signal=none -o "$WORK/$1/strace" \
        "$FITPROOF" build "$WORK/$1/spec.yaml" -o "$WORK/$1/report2" >/dev/null 2>&1
    printf '| %s | %s | %s |\n' "$1" "$(seconds "$t0" "$t1")" "$(received "$WORK/$1/strace")"
}

spec streaming ""
spec pushdown $'  pushdown: true\n'
echo
echo "| build | wall s | bytes received |"
echo "|---|---|---|"
measure streaming
if "$FITPROOF" lint "$WORK/pushdown/spec.yaml" >/dev/null 2>&1; then
    measure pushdown
    python3 -c 'import json, sys; print(json.load(open(sys.argv[1]))["models"][0]["pushdown"])' \
        "$WORK/pushdown/report/results.json" >"$WORK/account"
else
    echo "| pushdown | (this build has no data.pushdown) | |"
fi

# timed SQL: fastest of three runs, in seconds
timed() {
    local best="" t
    for _ in 1 2 3; do
        psql -X -q -At "$pg_coordinator" -c '\timing on' -c "$1" >"$WORK/timed.out" 2>&1 ||
            { echo "psql: $(cat "$WORK/timed.out")" >&2; return 1; }
        t=$(awk '/^Time: / { print $2 / 1000 }' "$WORK/timed.out")
        best=$(awk -v a="$best" -v b="$t" 'BEGIN { print (a == "" || b < a) ? b : a }')
    done
    printf '%.3f' "$best"
}
echo
echo "| SQL on the coordinator | s |"
echo "|---|---|"
echo "| SELECT count(*) FROM coupons (the floor) | $(timed 'SELECT count(*) FROM coupons') |"
echo "| count(*) grouped by the partition key, on the shards | $(timed 'SELECT sum(n) FROM (SELECT plant, count(*) AS n FROM coupons GROUP BY plant) AS p') |"
if [ -s "$WORK/account" ]; then
    python3 - "$WORK/pushdown/report/results.json" "$WORK" <<'PY'
import json, sys
for number, step in enumerate(json.load(open(sys.argv[1]))["models"][0]["pushdown"]["passes"], 1):
    with open("%s/pass%d.sql" % (sys.argv[2], number), "w") as f:
        f.write(step["sql"])
PY
    for file in "$WORK"/pass*.sql; do
        name=$(basename "$file" .sql)
        echo "| fitproof's $name | $(timed "$(cat "$file")") |"
    done
fi
echo "| the 36 cross-products of pass one, hand-written (tests/e2e/exact_sums.py) | $(timed "$(python3 tests/e2e/exact_sums.py sql coupons)") |"
