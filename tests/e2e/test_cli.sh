# End to end: exit statuses and messages of the command line, and the
# guarantee that a failed build writes nothing.
. "$(dirname "$0")/lib.sh"

expect_exit 0 "$FITPROOF" --version
grep -q '^fitproof [0-9]' "$WORK/out" || fail "--version output"
pass
expect_exit 0 "$FITPROOF" --help
grep -q 'usage: fitproof COMMAND' "$WORK/out" || fail "--help output"
pass
expect_exit 0 "$FITPROOF" build --help
grep -q 'usage: fitproof build SPEC.yaml' "$WORK/out" || fail "build --help output"
pass
expect_exit 2 "$FITPROOF"
expect_exit 2 "$FITPROOF" frobnicate
expect_stderr "fitproof: error: unknown command 'frobnicate'; see 'fitproof --help'"
expect_exit 2 "$FITPROOF" build
expect_exit 2 "$FITPROOF" build x.yaml --colour
expect_stderr "fitproof: error: unknown option '--colour'; see 'fitproof --help'"

# A spec error: located message, exit 2, no output folder.
cp examples/cylinders/cylinders.csv "$WORK/"
cat >"$WORK/bad.yaml" <<'YAML'
fitproof: 1
title: Typo in a term
data:
  path: cylinders.csv
models:
  - id: main
    response: strength_mpa
    terms: [age_days, wc_ratoi]
YAML
expect_exit 2 "$FITPROOF" build "$WORK/bad.yaml"
expect_stderr "$WORK/bad.yaml:8:23: error: column 'wc_ratoi' is not in the data file; did you mean 'wc_ratio'?"
[ ! -e "$WORK/bad-report" ] || fail "a failed build created its output folder"
pass

# A data error: located in the data file.
printf 'y,x\n1,2\n3\n' >"$WORK/ragged.csv"
printf 'fitproof: 1\ndata: {path: ragged.csv}\nmodels: [{id: m, response: y, terms: [x]}]\n' \
    >"$WORK/ragged.yaml"
expect_exit 2 "$FITPROOF" build "$WORK/ragged.yaml"
expect_stderr "$WORK/ragged.csv:3:1: error: this row has 1 field but the header names 2 columns; check for a missing or extra delimiter"
[ ! -e "$WORK/ragged-report" ] || fail "a failed build created its output folder"
pass

# A missing spec file.
expect_exit 2 "$FITPROOF" build "$WORK/none.yaml"
expect_stderr "$WORK/none.yaml: error: cannot read the spec: No such file or directory"

# Refuses to replace a folder it did not write.
mkdir "$WORK/precious" && touch "$WORK/precious/thesis.tex"
cp examples/cylinders/cylinders.yaml "$WORK/ok.yaml"
expect_exit 2 "$FITPROOF" build "$WORK/ok.yaml" -o "$WORK/precious"
expect_stderr "$WORK/precious: error: this folder exists and was not written by fitproof; choose an empty or new folder with -o"
[ -e "$WORK/precious/thesis.tex" ] || fail "replaced a folder fitproof did not write"
pass
finish
