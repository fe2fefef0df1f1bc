# End to end: fitproof lint and fitproof scaffold — exact outputs, exit
# statuses, the data errors of the tests/bad corpus as lint reports them,
# and the promise that a scaffolded spec lints cleanly against its data.
. "$(dirname "$0")/lib.sh"
ROOT=$(pwd)
FIXTURES=$ROOT/tests/e2e/scaffold
case $FITPROOF in /*) ;; *) FITPROOF=$ROOT/$FITPROOF ;; esac

# expect_stdout TEXT: the last command's stdout is exactly TEXT.
expect_stdout() {
    [ "$(cat "$WORK/out")" = "$1" ] || fail "stdout was: $(cat "$WORK/out") -- expected: $1"
    pass
}

# ---- help and usage ----------------------------------------------------------
expect_exit 0 "$FITPROOF" lint --help
grep -q '^usage: fitproof lint SPEC.yaml \[--strict\]$' "$WORK/out" || fail "lint --help"
pass
expect_exit 0 "$FITPROOF" scaffold --help
grep -q '^usage: fitproof scaffold DATA.csv > SPEC.yaml$' "$WORK/out" || fail "scaffold --help"
pass
expect_exit 0 "$FITPROOF" build --help
grep -q '^usage: fitproof build SPEC.yaml \[-o DIR\] \[--strict\] \[--date YYYY-MM-DD|now\]$' "$WORK/out" || fail "build --help"
pass
expect_exit 0 "$FITPROOF" --help
grep -q '^  scaffold DATA.csv         print a commented starting spec for a data file$' "$WORK/out" || fail "--help"
pass
expect_exit 0 "$FITPROOF" --version
expect_stdout "fitproof 0.1.0"
expect_exit 2 "$FITPROOF" lint
expect_stderr "fitproof: error: lint needs a spec file, as in 'fitproof lint spec.yaml'; see 'fitproof --help'"
expect_exit 2 "$FITPROOF" scaffold a.csv b.csv
expect_stderr "fitproof: error: scaffold takes one data file; see 'fitproof --help'"
expect_exit 2 "$FITPROOF" lint --strictly x.yaml
expect_stderr "fitproof: error: unknown option '--strictly'; see 'fitproof lint --help'"
expect_exit 2 "$FITPROOF" scaffold --strict x.csv
expect_stderr "fitproof: error: unknown option '--strict'; see 'fitproof scaffold --help'"
expect_exit 2 "$FITPROOF" scaffold "$WORK/none.csv"
expect_stderr "fitproof: error: cannot read '$WORK/none.csv': No such file or directory"

# ---- lint ----------------------------------------------------------------------
cd "$ROOT/examples/cylinders" || fail "no example"
expect_exit 0 "$FITPROOF" lint cylinders.yaml
expect_stdout "fitproof: cylinders.yaml is ready to build: 150 rows of cylinders.csv, 5 columns (4 numeric, 1 category), 1 model"
[ ! -e cylinders-report.lint ] || fail "lint wrote something"
pass

cp "$ROOT/examples/cylinders/cylinders.csv" "$WORK/"
cat >"$WORK/where.yaml" <<'YAML'
fitproof: 1
data: {path: cylinders.csv}
where: {column: age_days, at_least: 28}
derive: [{name: log_age, from: age_days, transform: log}]
models:
  - {id: main, response: strength_mpa, terms: [log_age, wc_ratio, admixture]}
  - {id: small, response: strength_mpa, terms: [log_age]}
YAML
cd "$WORK" || fail "no work folder"
# 78 rows have age_days >= 28 (counted with awk when the test was written).
expect_exit 0 "$FITPROOF" lint where.yaml
expect_stdout "fitproof: where.yaml is ready to build: 78 rows of cylinders.csv (72 of 150 removed by where), 6 columns (5 numeric, 1 category), 2 models"

# A spec error only the data can reveal: lint builds the designs.
cat >"$WORK/term.yaml" <<'YAML'
fitproof: 1
data: {path: cylinders.csv}
models:
  - {id: main, response: strength_mpa, terms: [age_days, wc_ratoi]}
  - {id: second, response: admixture, terms: [age_days]}
YAML
expect_exit 2 "$FITPROOF" lint term.yaml
expect_stderr "term.yaml:4:58: error: column 'wc_ratoi' is not in the data file; did you mean 'wc_ratio'?
term.yaml:5:28: error: the response 'admixture' must be numeric, but the data make it a category: 'none' on line 2 of cylinders.csv is not a number; correct the values, or choose a numeric column"
[ ! -s "$WORK/out" ] || fail "lint printed a summary after errors"
pass

# Every data error of the corpus, as lint reports it (the same messages as
# build, which tests/e2e/test_bad.sh checks).
for folder in "$ROOT"/tests/bad/data-*/; do
    cd "$folder" || fail "no $folder"
    expect_exit 2 "$FITPROOF" lint spec.yaml
    [ "$(cat "$WORK/err")" = "$(cat expected.txt)" ] ||
        fail "$(basename "$folder"): lint said: $(cat "$WORK/err")"
    pass
done

# ---- scaffold --------------------------------------------------------------------
# scaffold_case DIR CSV EXPECTED: the exact spec, which then lints cleanly
# saved next to the data.
scaffold_case() {
    cd "$1" || fail "no $1"
    expect_exit 0 "$FITPROOF" scaffold "$2"
    cmp -s "$WORK/out" "$3" || fail "scaffold $2: $(diff "$3" "$WORK/out")"
    pass
    cp "$WORK/out" "$1/scaffolded-$$.yaml"
    "$FITPROOF" lint "scaffolded-$$.yaml" >"$WORK/lint" 2>&1
    local status=$?
    rm -f "$1/scaffolded-$$.yaml"
    [ "$status" -eq 0 ] || fail "scaffold of $2 does not lint: $(cat "$WORK/lint")"
    pass
}
scaffold_case "$ROOT/examples/cylinders" cylinders.csv "$FIXTURES/cylinders.expected.yaml"
scaffold_case "$FIXTURES" messy.csv "$FIXTURES/messy.expected.yaml"
scaffold_case "$FIXTURES" semicolon.csv "$FIXTURES/semicolon.expected.yaml"
scaffold_case "$FIXTURES" tabs.txt "$FIXTURES/tabs.expected.yaml"
scaffold_case "$FIXTURES" odd-numbers.csv "$FIXTURES/odd-numbers.expected.yaml"
scaffold_case "$FIXTURES" dates.csv "$FIXTURES/dates.expected.yaml"
scaffold_case "$FIXTURES" datetimes.csv "$FIXTURES/datetimes.expected.yaml"

# A data error stops scaffold with the located message.
printf 'a,b\n1,2\n3\n' >"$WORK/ragged.csv"
cd "$WORK" || fail "no work folder"
expect_exit 2 "$FITPROOF" scaffold ragged.csv
expect_stderr "ragged.csv:3:1: error: this row has 1 field but the header names 2 columns; check for a missing or extra delimiter"
# Without a numeric column there is no model to suggest.
printf 'a,b\nx,y\n' >"$WORK/words.csv"
expect_exit 2 "$FITPROOF" scaffold words.csv
expect_stderr "fitproof: error: words.csv has no numeric column a model could use as its response"
finish
