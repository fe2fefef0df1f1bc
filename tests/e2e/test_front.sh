# End to end: the front door — lint refuses what build refuses, with the
# same words, for checks that need the whole file or a long spec: a weight
# that is not positive far beyond the rows a design is checked on, a level
# that only late rows have (sum coding), thousands of repeated terms.
. "$(dirname "$0")/lib.sh"

FITPROOF_ABS=$(cd "$(dirname "$FITPROOF")" && pwd)/$(basename "$FITPROOF")

# inside DIR COMMAND...: runs COMMAND inside DIR (in this shell, so that a
# failed expectation stops the test).
inside() {
    cd "$1" || fail "no folder $1"
    shift
    "$@"
    cd - >/dev/null || exit 1
}

# same_refusal DIR MESSAGE: build and lint in DIR both exit 2 with MESSAGE.
same_refusal() {
    inside "$1" expect_exit 2 "$FITPROOF_ABS" build spec.yaml -o out
    expect_stderr "$2"
    [ ! -e "$1/out" ] || fail "build wrote a folder"
    inside "$1" expect_exit 2 "$FITPROOF_ABS" lint spec.yaml
    expect_stderr "$2"
}

# ---- a weight of zero on line 2502 of 3001 --------------------------------
mkdir "$WORK/weights"
awk 'BEGIN { print "y,x,w"; for (i = 1; i <= 3000; i++) printf "%d.5,%d,%s\n", i % 17, i % 13, (i == 2500 ? "0" : "1") }' \
    >"$WORK/weights/data.csv"
printf 'fitproof: 1\ndata: {path: data.csv}\nmodels:\n  - {id: main, response: y, terms: [x], weights: w}\n' \
    >"$WORK/weights/spec.yaml"
same_refusal "$WORK/weights" \
    "spec.yaml:4:50: error: weights must be positive, but weight column 'w' is 0 on line 2501 of data.csv; fix the value or remove the row"

# ---- an order_by cell missing on line 2801 of 3001 -------------------------
mkdir "$WORK/order"
awk 'BEGIN { print "y,x,t"; for (i = 1; i <= 3000; i++) printf "%d.5,%d,%s\n", i % 17, i % 13, (i == 2800 ? "" : i) }' \
    >"$WORK/order/data.csv"
printf 'fitproof: 1\ndata: {path: data.csv}\nmodels:\n  - {id: main, response: y, terms: [x], order_by: t}\n' \
    >"$WORK/order/spec.yaml"
same_refusal "$WORK/order" \
    "spec.yaml:4:51: error: order_by column 't' has no value on line 2801, a row model 'main' uses; fill it in or leave the row out with where:"

# ---- a level only the last row has: lint sees its coefficient -------------
mkdir "$WORK/levels"
awk 'BEGIN { print "y,x,g"; for (i = 1; i <= 3000; i++) printf "%d.5,%d,%s\n", i % 17, i % 13, (i == 3000 ? "late" : (i % 2 ? "a" : "b")) }' \
    >"$WORK/levels/data.csv"
cat >"$WORK/levels/spec.yaml" <<'YAML'
fitproof: 1
data: {path: data.csv}
models:
  - {id: main, response: y, terms: [x, g], coding: sum}
report:
  sections:
    - text: "Late rows: @{main.estimate[g: late vs average of levels]}."
YAML
inside "$WORK/levels" expect_exit 0 "$FITPROOF_ABS" lint spec.yaml
inside "$WORK/levels" expect_exit 0 "$FITPROOF_ABS" build spec.yaml -o out

# ---- 20 000 repeats of one term: refused at once, without exhausting memory
mkdir "$WORK/repeats"
printf 'y,x\n1,2\n2,3\n3,5\n' >"$WORK/repeats/data.csv"
awk 'BEGIN { printf "fitproof: 1\ndata: {path: data.csv}\nmodels:\n  - id: main\n    response: y\n    terms: [x"; for (i = 1; i < 20000; i++) printf ", x"; print "]" }' \
    >"$WORK/repeats/spec.yaml"
# (more entries than a list may hold: the spec's size limit refuses it first)
inside "$WORK/repeats" expect_exit 2 "$FITPROOF_ABS" lint spec.yaml
[ "$(sed -n 1p "$WORK/err")" = "spec.yaml:6:3013: error: this list has more than 1000 items, the most a spec may hold in one place; split the work into several specs" ] ||
    fail "repeats: $(sed -n 1p "$WORK/err")"
pass
# 999 repeats, within the limit: each repeat named, in one round.
awk 'BEGIN { printf "fitproof: 1\ndata: {path: data.csv}\nmodels:\n  - id: main\n    response: y\n    terms: [x"; for (i = 1; i < 999; i++) printf ", x"; print "]" }' \
    >"$WORK/repeats/spec.yaml"
inside "$WORK/repeats" expect_exit 2 "$FITPROOF_ABS" lint spec.yaml
[ "$(sed -n 1p "$WORK/err")" = "spec.yaml:6:16: error: model 'main' lists the term 'x' twice, here and at 6:13; remove one" ] ||
    fail "repeats: $(sed -n 1p "$WORK/err")"
[ "$(tail -n 1 "$WORK/err")" = "fitproof: 948 further errors not shown" ] || fail "repeats: $(tail -n 1 "$WORK/err")"
pass
inside "$WORK/repeats" expect_exit 2 "$FITPROOF_ABS" build spec.yaml -o out
[ ! -e "$WORK/repeats/out" ] || fail "repeats: build wrote a folder"

# ---- -o naming a file, or a folder of other files: refused before computing
touch "$WORK/n3.csv"
expect_exit 2 "$FITPROOF" build examples/cylinders/cylinders.yaml -o "$WORK/n3.csv"
expect_stderr "$WORK/n3.csv: error: this is a file, not a folder; -o names the folder the report is written into: choose an empty or new folder"
mkdir "$WORK/other" && touch "$WORK/other/notes.txt"
expect_exit 2 "$FITPROOF" build examples/cylinders/cylinders.yaml -o "$WORK/other"
expect_stderr "$WORK/other: error: this folder exists and was not written by fitproof; choose an empty or new folder with -o"

finish
