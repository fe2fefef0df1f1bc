# End to end: data.pushdown on a private PostgreSQL server (pg.sh). The
# same rows built from a CSV file and with pass one in the server agree to
# 10 significant digits in every number of results.json; all eleven NIST
# StRD linear sets, loaded as numeric, reach at least the digits of the
# in-process engine against NIST's certified values (printed as measured
# lines); a double precision column falls back with the reason stated.
# Skipped by name when the server binaries are not installed.
. "$(dirname "$0")/lib.sh"
. "$(dirname "$0")/pg.sh"
if ! pg_available; then
    skip "PostgreSQL pushdown" "the PostgreSQL server binaries are not installed; scripts/install-deps.sh installs the postgresql package"
    finish
    exit 0
fi
pg_start pushdown
pass

# numbers FILE: every number of the models' coefficients and fit, one a
# line (not the database's own account, models[].pushdown, which only one
# build has).
numbers() {
    /usr/bin/python3 -c 'import json, sys
r = json.load(open(sys.argv[1]))
for m in r["models"]:
    m.pop("pushdown", None)
print(json.dumps(r, indent=1))' "$1" | grep -E '"(estimate|std_error|t|p|ci_low|ci_high|r_squared|adj_r_squared|sigma|f|f_p|rss|aic|bic|log_likelihood)":' |
        grep -v 'null' | sed 's/.*: //; s/,$//'
}
# agree A B: every pair of numbers agrees to 10 significant digits.
agree() {
    paste <(numbers "$1") <(numbers "$2") | awk '
        { a = $1 + 0; b = $2 + 0; s = (a < 0 ? -a : a); if ((b < 0 ? -b : b) > s) s = (b < 0 ? -b : b)
          d = a - b; if (d < 0) d = -d
          if (s > 1e-300 && d / s > 5e-11) { print "line " NR ": " $1 " vs " $2; bad = 1 } }
        END { if (NR < 20) { print "only " NR " numbers"; bad = 1 }; exit bad }'
}

# The cylinders rows: a numeric predictor, its square and a category
# interaction, as numeric columns.
dir="$WORK/cylinders"
mkdir -p "$dir"
cp examples/cylinders/cylinders.csv "$dir/"
pg_sql -c "CREATE TABLE cylinders (cylinder_id integer, age_days numeric, wc_ratio numeric, admixture text, strength_mpa numeric)" \
    -c "\\copy cylinders FROM '$dir/cylinders.csv' WITH (FORMAT csv, HEADER true)"
model='models:\n  - {id: m, response: strength_mpa, order_by: cylinder_id, terms: [wc_ratio, {polynomial: age_days, degree: 2}, admixture, [wc_ratio, admixture]]}\n'
# build_both NAME TABLE MODEL: MODEL from TABLE.csv and from the server's
# TABLE with pushdown: $dir/NAME-csv.yaml and NAME-pd.yaml, built into
# NAME-csv-report and NAME-pd-report.
build_both() {
    printf "fitproof: 1\ndata:\n  path: $2.csv\n${3}report:\n  residuals_table: true\n" >"$dir/$1-csv.yaml"
    printf "fitproof: 1\ndata:\n  postgres: \"%s\"\n  table: $2\n  key: cylinder_id\n  pushdown: true\n$3" \
        "$pg_connection" >"$dir/$1-pd.yaml"
    expect_exit 0 "$FITPROOF" build "$dir/$1-csv.yaml" -o "$dir/$1-csv-report"
    expect_exit 0 "$FITPROOF" build "$dir/$1-pd.yaml" -o "$dir/$1-pd-report"
}
build_both main cylinders "$model"
grep -q '"used": true' "$dir/main-pd-report/results.json" ||
    fail "pushdown not used: $(grep -A3 '"pushdown"' "$dir/main-pd-report/results.json")"
grep -q '"name": "cross-products"' "$dir/main-pd-report/results.json" || fail "pass one not listed"
grep -q '"rows_scanned": 147' "$dir/main-pd-report/results.json" ||
    fail "rows scanned: $(grep rows_scanned "$dir/main-pd-report/results.json")"
grep -q 'CASE WHEN \\"admixture\\"::text = ' "$dir/main-pd-report/results.json" || fail "no CASE for a level"
grep -q "^### Sums computed in the database" "$dir/main-pd-report/report.md" || fail "no appendix section"
grep -q '"reason": "partial"' "$dir/main-pd-report/results.json" || fail "no partial reason code"
grep -q "pass 1 (cross-products) scanned 147 rows; pass 2 (residuals) scanned 147 rows; pass 3 (lagged residuals) scanned 147 rows; pass 4 (top rows) scanned 147 rows. Computed in fitproof instead: the diagnostics the report shows, the figures and the term tests, from the rows read over the connection" \
    "$dir/main-pd-report/report.md" || fail "appendix: $(grep -A2 'Sums computed' "$dir/main-pd-report/report.md")"
grep -q '^SELECT count(\*) AS a0, sum(w \* x0 \* x0) AS a1' "$dir/main-pd-report/report.md" || fail "the SQL is not listed"
# Pass two's residual moments, largest leverage, Breusch-Pagan, RESET,
# influence maxima and flag counts and pass three's Durbin-Watson d
# against the in-process ones from the CSV build (database_checks.py).
/usr/bin/python3 "$(dirname "$0")/database_checks.py" "$dir/main-csv-report/results.json" \
    "$dir/main-pd-report/results.json" "pass two and three" --durbin-watson ||
    fail "the database's diagnostics differ from the in-process ones"
# The check fails on a value off in its ninth digit and on one row more.
for value in "RESET F" "Breusch-Pagan studentized" "max Cook's distance" "rows cooks_above_4_over_n" "top rows" "wc_ratio max"; do
    ! /usr/bin/python3 "$(dirname "$0")/database_checks.py" "$dir/main-csv-report/results.json" \
        "$dir/main-pd-report/results.json" perturbed --perturb "$value" >/dev/null ||
        fail "database_checks.py missed a changed $value"
done
agree "$dir/main-csv-report/results.json" "$dir/main-pd-report/results.json" >"$WORK/agree" ||
    fail "CSV and pushdown differ: $(head -5 "$WORK/agree")"
diff <(grep -E '"(verdict|flagged|n_flagged)"' "$dir/main-csv-report/results.json") \
    <(grep -E '"(verdict|flagged|n_flagged)"' "$dir/main-pd-report/results.json") >/dev/null ||
    fail "verdicts or flag counts differ"
pass

# Breusch–Pagan on other columns is summed in the database too, centred
# and solved in exact arithmetic: on the variance_columns, and on the
# design's columns without the weights for a weighted model. Each agrees
# with the in-process test to 10 digits (database_checks.py, which fails
# on a statistic off in its ninth digit), and the appendix names the
# columns.
pg_sql -c "CREATE TABLE cylinders_w AS SELECT *, (1 + cylinder_id % 3)::numeric AS weight FROM cylinders" \
    -c "\\copy cylinders_w TO '$dir/cylinders_w.csv' WITH (FORMAT csv, HEADER true)"
for case in variance_columns design_unweighted; do
    if [ "$case" = variance_columns ]; then
        table=cylinders
        other='variance_columns: [age_days, cylinder_id]'
        words='(age.\{1,2\}days, cylinder.\{1,2\}id)' # Markdown escapes the underscores
        regressors=variance_columns
    else
        table=cylinders_w
        other='weights: weight'
        words="(the design's columns, without the weights)"
        regressors=model
    fi
    build_both "$case" "$table" \
        "models:\n  - {id: m, response: strength_mpa, terms: [wc_ratio, age_days, admixture], $other}\n"
    grep -q "\"regressors\": \"$regressors\"" "$dir/$case-pd-report/results.json" ||
        fail "$case: $(grep -A2 '"breusch_pagan"' "$dir/$case-pd-report/results.json" | tail -3)"
    /usr/bin/python3 "$(dirname "$0")/database_checks.py" "$dir/$case-csv-report/results.json" \
        "$dir/$case-pd-report/results.json" "$case" || fail "$case: the database's diagnostics differ"
    ! /usr/bin/python3 "$(dirname "$0")/database_checks.py" "$dir/$case-csv-report/results.json" \
        "$dir/$case-pd-report/results.json" perturbed --perturb "Breusch-Pagan studentized" >/dev/null ||
        fail "$case: database_checks.py missed a changed Breusch-Pagan statistic"
    grep -q "the columns the constant-variance test regresses on $words" "$dir/$case-pd-report/report.md" ||
        fail "$case: appendix: $(grep -o 'Pass 2 summed, in the database.*' "$dir/$case-pd-report/report.md")"
    pass
done

# pushdown: auto leaves 147 rows to the in-process fit, and says so.
sed 's/pushdown: true/pushdown: auto/' "$dir/main-pd.yaml" >"$dir/auto.yaml"
expect_exit 0 "$FITPROOF" build "$dir/auto.yaml" -o "$dir/auto-report"
grep -q '"used": false' "$dir/auto-report/results.json" || fail "auto: pushdown used on 147 rows"
grep -q '"reason": "below_auto_rows"' "$dir/auto-report/results.json" ||
    fail "auto: $(grep '"reason"' "$dir/auto-report/results.json")"
grep -q "which was not done: the spec leaves it to fitproof, which runs the passes in the server from 1000000 rows on" \
    "$dir/auto-report/report.md" || fail "auto: $(grep -A2 'Sums computed' "$dir/auto-report/report.md")"
agree "$dir/main-csv-report/results.json" "$dir/auto-report/results.json" >"$WORK/agree" ||
    fail "auto differs from the CSV build: $(head -5 "$WORK/agree")"
# ... and a value other than true, false or auto is refused where it stands.
sed 's/pushdown: true/pushdown: always/' "$dir/main-pd.yaml" >"$dir/bad.yaml"
expect_exit 2 "$FITPROOF" build "$dir/bad.yaml" -o "$dir/bad-report"
grep -q "bad.yaml:[0-9]*:[0-9]*: error: data.pushdown must be true, false or auto, found 'always'" "$WORK/err" ||
    fail "bad pushdown value: $(cat "$WORK/err")"
pass

# The guard: a double precision column is not summed exactly, so the rows
# are fitted in process and the reason is given.
pg_sql -c "CREATE TABLE cylinders_float AS SELECT cylinder_id, age_days, wc_ratio::double precision AS wc_ratio, admixture, strength_mpa FROM cylinders"
sed 's/table: cylinders$/table: cylinders_float/' "$dir/main-pd.yaml" >"$dir/float.yaml"
expect_exit 0 "$FITPROOF" build "$dir/float.yaml" -o "$dir/float-report"
grep -q '"used": false' "$dir/float-report/results.json" || fail "float: pushdown used"
grep -q '"reason": "float_column"' "$dir/float-report/results.json" ||
    fail "float: $(grep '"reason"' "$dir/float-report/results.json")"
grep -q "\"reason_text\": \"column 'wc_ratio' is a floating-point type" "$dir/float-report/results.json" ||
    fail "float: $(grep '"reason_text"' "$dir/float-report/results.json")"
grep -q "which was not done: column 'wc.\{1,2\}ratio' is a floating-point type (real or double precision), whose sums PostgreSQL does not keep exact; the rows were streamed and fitted in process instead.$" "$dir/float-report/report.md" ||
    fail "float: the report does not say why: $(grep -A3 "Sums computed" "$dir/float-report/report.md")"
agree "$dir/main-csv-report/results.json" "$dir/float-report/results.json" >"$WORK/agree" ||
    fail "the fallback differs: $(head -5 "$WORK/agree")"
pass

# NIST StRD: certified estimates and standard errors (tests/data/nist).
# digits CERTIFIED RESULTS: the fewest correct significant digits over the
# estimates and standard errors (15 when exact to double).
digits() {
    paste <(grep -o '"\(estimate\|std_error\)": "[^"]*"' "$1" | sed 's/.*: "//; s/"$//') \
        <(grep -E '^          "(estimate|std_error)": ' "$2" | sed 's/.*: //; s/,$//') |
        awk 'function abs(v) { return v < 0 ? -v : v }
             NF == 2 && $1 != "" { c = $1 + 0; r = $2 + 0; e = c != 0 ? abs(r - c) / abs(c) : abs(r); d = e > 0 ? -log(e) / log(10) : 15
               if (d > 15) d = 15; if (NR == 1 || d < m) m = d }
             END { printf "%.2f\n", m }'
}
for set in norris pontius noint1 noint2 longley wampler1 wampler2 wampler3 wampler4 wampler5 filip; do
    cert="tests/data/nist/$set.certified.json"
    header=$(head -n 1 "tests/data/nist/$set.csv")
    columns=$(echo "$header" | sed 's/,/ numeric, /g; s/$/ numeric/')
    pg_sql -c "CREATE TABLE $set (line serial, $columns)" \
        -c "\\copy $set ($header) FROM 'tests/data/nist/$set.csv' WITH (FORMAT csv, HEADER true)"
    intercept=$(grep -q '"intercept": false' "$cert" && echo false || echo true)
    degree=$(grep -o '"degree": [0-9]*' "$cert" | grep -o '[0-9]*$')
    if [ -n "$degree" ] && [ "$degree" -gt 1 ]; then
        terms="[{polynomial: x, degree: $degree}]"
    else
        terms="[$(echo "$header" | cut -d, -f2- | sed 's/,/, /g')]"
    fi
    body="models:\n  - {id: nist, response: y, intercept: $intercept, terms: $terms}\n"
    cp "tests/data/nist/$set.csv" "$WORK/$set.csv"
    printf "fitproof: 1\ndata:\n  path: $set.csv\n$body" >"$WORK/$set-csv.yaml"
    printf "fitproof: 1\ndata:\n  postgres: \"%s\"\n  table: $set\n  key: line\n  pushdown: true\n$body" \
        "$pg_connection" >"$WORK/$set-pd.yaml"
    "$FITPROOF" build "$WORK/$set-csv.yaml" -o "$WORK/$set-csv" >/dev/null 2>&1
    [ $? -le 1 ] || fail "$set: the CSV build failed"
    "$FITPROOF" build "$WORK/$set-pd.yaml" -o "$WORK/$set-pd" >/dev/null 2>"$WORK/err"
    [ $? -le 1 ] || fail "$set: the pushdown build failed: $(cat "$WORK/err")"
    grep -q '"used": true' "$WORK/$set-pd/results.json" ||
        fail "$set: pushdown not used: $(grep '"reason"' "$WORK/$set-pd/results.json")"
    in_process=$(digits "$cert" "$WORK/$set-csv/results.json")
    pushed=$(digits "$cert" "$WORK/$set-pd/results.json")
    echo "  measured: NIST $set: $pushed digits with pushdown, $in_process in process"
    awk -v a="$pushed" -v b="$in_process" 'BEGIN { exit !(a + 0 >= b + 0) }' ||
        fail "$set: pushdown reached $pushed digits, in process $in_process"
    pass
done

# The exact (XᵀWX)⁻¹ replaces the in-process one: a prediction on Norris's
# data, its fitted value, standard error and leverage against the same
# quantities in exact rational arithmetic (exact_prediction.py, Python's
# fractions module), to 10 significant digits. (On Longley's data the
# quadratic form xᵀ(XᵀWX)⁻¹x, summed in long double from the rounded
# entries, keeps only about 9 digits either way.)
point="x: 500"
cp "$WORK/norris-pd.yaml" "$WORK/predict.yaml"
printf "predict:\n  - model: nist\n    rows:\n      - {%s}\n" "$point" >>"$WORK/predict.yaml"
expect_exit 0 "$FITPROOF" build "$WORK/predict.yaml" -o "$WORK/predict"
/usr/bin/python3 tests/e2e/exact_prediction.py tests/data/nist/norris.csv 500 >"$WORK/exact"
for what in fit se_fit leverage; do
    want=$(awk -v k="$what" '$1 == k { print $2 }' "$WORK/exact")
    got=$(grep -o "\"$what\": [^,]*" "$WORK/predict/results.json" | head -1 | sed 's/.*: //')
    awk -v a="$got" -v b="$want" 'BEGIN { d = a - b; if (d < 0) d = -d; s = b < 0 ? -b : b; exit !(s > 0 && d / s < 5e-11) }' ||
        fail "prediction $what: $got, exact $want"
done
pass
finish
