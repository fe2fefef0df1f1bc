# End to end: PostgreSQL across shards. Three private servers from
# Debian's binaries (tests/e2e/pg_cluster.sh): a coordinator whose table
# `coupons` is partitioned by plant into foreign tables on two shard
# servers (postgres_fdw), and, on the coordinator too, the same rows in one
# plain table. 1e6 generated rows (2e4 under the sanitizers, whose build
# is some ten times slower; FITPROOF's path names asan; SHARDS_ROWS sets
# another count while iterating). One spec is built
# from the CSV file and from the one-server table, rows streamed; then
# with pushdown: true from the coordinator's partitioned table. tests/e2e/compare_results.py checks
# that every results.json number agrees to 10 significant digits and that
# verdicts, flags and lists are the same. EXPLAIN (VERBOSE) of the SQL of
# pass one shows each shard computing its partition's aggregate (a
# Foreign Scan whose Remote SQL holds the sums), and a hand-written
# pass-one aggregate returns, through the shards, cross-products equal to
# exact integer sums computed by Python from the CSV file
# (tests/e2e/exact_sums.py). Skipped by name when the server binaries or
# postgres_fdw are not installed.
. "$(dirname "$0")/lib.sh"
. "$(dirname "$0")/pg_cluster.sh"

if ! pg_cluster_binaries; then
    skip "PostgreSQL shards" "the PostgreSQL server binaries or postgres_fdw are not installed; scripts/install-deps.sh installs the postgresql package"
    finish
    exit 0
fi
here=$(dirname "$0")
rows=1000000
case "$FITPROOF" in *asan*) rows=20000 ;; esac
rows=${SHARDS_ROWS:-$rows}
pg_cluster_start "$rows"
pass

# spec NAME SOURCE: the model over the rows of SOURCE (data keys, one per
# line), in $WORK/NAME/spec.yaml.
spec() {
    mkdir -p "$WORK/$1"
    {
        printf 'fitproof: 1\ntitle: Tensile strength of coated coupons\ndata:\n'
        printf '%b' "$2"
        printf '  rows_are: coupons\n  columns:\n'
        printf '    oven: {kind: category, reference: east}\n'
        printf '    plant: {kind: category, reference: north}\n'
        printf 'models:\n  - id: main\n    response: strength_mpa\n'
        printf '    terms: [temp_c, {polynomial: hours, degree: 2}, oven, plant]\n'
        printf '    order_by: line\nreport:\n  archive_data: false\n  formats: [json]\n'
    } >"$WORK/$1/spec.yaml"
}
build() {
    expect_exit 0 "$FITPROOF" build "$WORK/$1/spec.yaml" -o "$WORK/$1/report"
}
compare() {
    /usr/bin/python3 "$here/compare_results.py" "$WORK/$1/report/results.json" \
        "$WORK/$2/report/results.json" >"$WORK/compare.out" ||
        fail "$1 against $2: $(cat "$WORK/compare.out")"
    echo "  $1 against $2: $(cat "$WORK/compare.out")"
    pass
}

ln -s "$pg_csv" "$WORK/coupons.csv"
spec csv '  path: ../coupons.csv\n'
# the in-process build also writes every row's studentized residual
# (database_checks.py takes the largest)
sed -i 's/^report:$/report:\n  residuals_table: true/' "$WORK/csv/spec.yaml"
spec local "  postgres: \"$pg_coordinator\"\n  table: coupons_local\n  key: line\n"
build csv
build local
grep -q "\"n_used\": $rows," "$WORK/csv/report/results.json" || fail "the CSV build did not use every row"
compare csv local

# The comparison itself fails on a number off in its tenth digit, on
# another verdict and on one flagged row more.
/usr/bin/python3 - "$WORK/csv/report/results.json" "$WORK/changed" <<'PY'
import json, sys
results = json.load(open(sys.argv[1]))
model = results["models"][0]
def changed(name, edit):
    copy = json.loads(json.dumps(results))
    edit(copy["models"][0])
    with open("%s.%s.json" % (sys.argv[2], name), "w") as f:
        json.dump(copy, f)
def digit(m):
    m["coefficients"][1]["estimate"] *= 1 + 3e-10
def verdict(m):
    first = m["diagnostics"]["verdicts"][0]
    first["verdict"] = "violated" if first["verdict"] != "violated" else "no_departure_detected"
def flag(m):
    m["diagnostics"]["influence"]["rules"][0]["rows"] += 1
changed("digit", digit)
changed("verdict", verdict)
changed("flag", flag)
PY
for change in digit verdict flag; do
    ! /usr/bin/python3 "$here/compare_results.py" "$WORK/csv/report/results.json" \
        "$WORK/changed.$change.json" >"$WORK/compare.out" ||
        fail "compare_results.py missed a changed $change"
done
pass

# A pass-one aggregate grouped by the partition key: each shard sums its
# own rows (the Remote SQL sent to each holds the sums and the GROUP BY),
# the coordinator adds two rows of partial sums, and nothing is lost.
sums=$(/usr/bin/python3 "$here/exact_sums.py" sql coupons)
pg_sql "$pg_coordinator" -c "EXPLAIN (VERBOSE) $sums"
for partition in coupons_north coupons_south; do
    grep -q "Relations: Aggregate on (public.$partition " "$WORK/psql.out" ||
        fail "the aggregate of $partition is not computed on its shard: $(cat "$WORK/psql.out")"
done
[ "$(grep -c 'Remote SQL: SELECT plant, sum(.* FROM public.coupons GROUP BY 1$' "$WORK/psql.out")" -eq 2 ] ||
    fail "the shards are not sent the sums: $(cat "$WORK/psql.out")"
pass
pg_sql "$pg_coordinator" -At -c "$sums"
/usr/bin/python3 "$here/exact_sums.py" check "$pg_csv" "$WORK/psql.out" >"$WORK/sums.out" ||
    fail "the shards' sums are not exact: $(cat "$WORK/sums.out")"
echo "  $(cat "$WORK/sums.out")"
pass

# With pushdown: the same numbers, the passes' account, and each pass's SQL
# computed on the shards. From 10⁶ rows on, pushdown: auto runs the passes
# (below it, as in the sanitizer build's smaller table, true is needed).
mode=true
[ "$rows" -ge 1000000 ] && mode=auto
spec pushdown "  postgres: \"$pg_coordinator\"\n  table: coupons\n  key: line\n  pushdown: $mode\n"
build pushdown
compare csv pushdown
results="$WORK/pushdown/report/results.json"
/usr/bin/python3 - "$results" "$rows" >"$WORK/passes.out" <<'PY' || fail "pushdown account: $(cat "$WORK/passes.out")"
import json, sys
account = json.load(open(sys.argv[1]))["models"][0]["pushdown"]
rows = int(sys.argv[2])
assert account["used"] is True, account
assert len(account["passes"]) >= 2, account
for number, step in enumerate(account["passes"], 1):
    assert step["rows_scanned"] == rows, step
    assert step["sql"].strip(), step
    with open("%s.pass%d.sql" % (sys.argv[1], number), "w") as f:
        f.write(step["sql"])
print(len(account["passes"]))
PY
pass
# Pass two's residual moments, Breusch-Pagan and RESET sums, summed on the
# shards, and its largest leverage (per shard, then over shards), and the
# influence pass's counts and maxima, against the in-process values of the
# CSV build.
/usr/bin/python3 "$here/database_checks.py" "$WORK/csv/report/results.json" "$results" \
    "shards" || fail "the database's diagnostics differ across shards"
pass
# The influence rules run in a pass of their own, ungrouped, so that the
# coordinator computes each row's leverage once (docs/shards.md).
grep -q '"name": "influence"' "$results" || fail "no influence pass"
! grep -q 'GROUP BY g0) AS fitproof_partitions$' "$results.pass3.sql" ||
    fail "the influence pass is grouped: $(cat "$results.pass3.sql")"
pass
# The top rows too: the coordinator keeps the 25 largest while the shards
# send their rows (a bounded sort), and only those 25 reach fitproof.
grep -q '"name": "top rows"' "$results" || fail "no top-rows pass"
pg_sql "$pg_coordinator" -c "EXPLAIN (VERBOSE) $(cat "$results.pass4.sql")"
grep -q "Limit" "$WORK/psql.out" || fail "the top-rows pass has no limit: $(cat "$WORK/psql.out")"
pass
# PostgreSQL 15 sends a shard only an aggregate grouped by the partition
# key (docs/shards.md): fitproof reads the key from the catalog and groups
# every pass by it, so each shard computes its own sums.
for number in 1 2; do
    grep -q 'GROUP BY g0) AS fitproof_partitions$' "$results.pass$number.sql" ||
        fail "pass $number is not grouped by the partition key: $(cat "$results.pass$number.sql")"
    pg_sql "$pg_coordinator" -c "EXPLAIN (VERBOSE) $(cat "$results.pass$number.sql")"
    for partition in coupons_north coupons_south; do
        grep -q "Relations: Aggregate on (public.$partition " "$WORK/psql.out" ||
            fail "pass $number: the aggregate of $partition is not computed on its shard: $(cat "$WORK/psql.out")"
    done
    [ "$(grep -c 'Remote SQL: SELECT .*sum(.* FROM public.coupons' "$WORK/psql.out")" -eq 2 ] ||
        fail "pass $number: the shards are not sent the sums: $(cat "$WORK/psql.out")"
    pass
done
finish
