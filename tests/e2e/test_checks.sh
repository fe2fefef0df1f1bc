# End to end: the spec's checks decide the exit status (1 when one fails,
# after the report is written; 0 when all pass), a located error for a
# check that names no coefficient of its model (exit 2, nothing written),
# and residuals_<model>.csv on request.
. "$(dirname "$0")/lib.sh"

cp tests/data/diagnostics/kilns.csv tests/data/diagnostics/formula.csv "$WORK/"
spec() { # spec FILE CHECKS...: the kilns model with the given check lines
    local file=$1
    shift
    {
        printf 'fitproof: 1\ndata:\n  path: kilns.csv\n'
        printf '  columns: {clay: {kind: category}, shelf: {kind: category}}\n'
        printf 'models:\n  - id: kilns\n    response: shrinkage_pct\n'
        printf '    terms: [moisture_pct, temperature_c, clay, shelf]\n    order_by: batch\n'
        printf 'report: {residuals_table: true}\nchecks:\n'
        printf '%s\n' "$@"
    } >"$file"
}

# All pass: exit 0.
spec "$WORK/pass.yaml" "  - {model: kilns, require: positive, coefficient: moisture_pct}" \
    "  - {model: kilns, require: metric, metric: r_squared, at_least: 0.5}"
expect_exit 0 "$FITPROOF" build "$WORK/pass.yaml" -o "$WORK/pass"
grep -q '"passed": true' "$WORK/pass/results.json" || fail "passed check not in results.json"
pass

# One fails: the report is written all the same, the failure named, exit 1.
spec "$WORK/fail.yaml" "  - {model: kilns, require: positive, coefficient: moisture_pct}" \
    "  - {name: few rows, model: kilns, require: metric, metric: n_used, at_most: 10}"
expect_exit 1 "$FITPROOF" build "$WORK/fail.yaml" -o "$WORK/fail"
expect_stderr "fitproof: wrote $WORK/fail/
fitproof: check failed: few rows"
for file in report.md results.json fail.yaml residuals_kilns.csv; do
    [ -s "$WORK/fail/$file" ] || fail "missing $file after a failed check"
    pass
done
grep -q '"passed": false' "$WORK/fail/results.json" || fail "failed check not in results.json"
pass
# One header line and 80 rows, CRLF-terminated (RFC 4180).
[ "$(wc -l <"$WORK/fail/residuals_kilns.csv")" -eq 81 ] || fail "residuals table rows"
pass
[ "$(tr -cd '\r' <"$WORK/fail/residuals_kilns.csv" | wc -c)" -eq 81 ] || fail "CRLF line ends"
pass

# A check on a coefficient the model does not have: located error, exit 2.
spec "$WORK/bad.yaml" "  - {model: kilns, require: negative, coefficient: clay = whit}"
expect_exit 2 "$FITPROOF" build "$WORK/bad.yaml" -o "$WORK/bad"
expect_stderr "$WORK/bad.yaml:12:52: error: model 'kilns' has no coefficient 'clay = whit'; did you mean 'clay = white'?"
[ ! -e "$WORK/bad" ] || fail "a spec error wrote the report"
pass

# Formula-like text in the residual table is neutralized.
printf 'fitproof: 1\ndata: {path: formula.csv, columns: {step: {kind: category}}}\n%s\n%s\n' \
    'models: [{id: "a/b", response: y, terms: [x], order_by: step}]' \
    'report: {residuals_table: true}' >"$WORK/formula.yaml"
expect_exit 0 "$FITPROOF" build "$WORK/formula.yaml" -o "$WORK/formula"
grep -q "'=SUM(A1)" "$WORK/formula/residuals_a_b.csv" || fail "formula cell not neutralized"
pass
finish
