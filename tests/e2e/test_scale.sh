# End to end: the same data in other units give the same report up to the
# units. The response multiplied by 1e180 and by 1e-180, and one predictor
# multiplied by 1e180: every number of results.json that does not depend on
# the units (t, p, R², F, every diagnostic, flag counts) agrees with the
# run at 1 to 1e-8, estimates, standard errors and intervals are the
# factor times the ones at 1 (hand derivation: least squares is
# equivariant under a change of units), every text value (verdict codes,
# labels, reasons) is identical, and no standard error is null or zero.
# A narrative number with 12 decimals of 1e180 is written whole.
. "$(dirname "$0")/lib.sh"

# Invented data without a random generator (the same on every awk): a
# numeric predictor, a category, their interaction, a second predictor,
# rows in run order; the noise is the fractional part of a sine.
make_data() { # FILE YFACTOR XFACTOR
    awk -v fy="$2" -v fx="$3" 'function noise(i,  s) { s = sin(i * 12.9898) * 43758.5453; return (s - int(s)) * 2 - 1 }
    BEGIN {
        print "t,x,g,z,y"
        split("a b c", level, " "); shift[1] = 0; shift[2] = 2; shift[3] = -1
        for (i = 1; i <= 72; i++) {
            x = (i * 37 % 100) / 10; g = i % 3 + 1; z = noise(i + 1000)
            y = 3 + 1.5 * x + shift[g] + (g == 2 ? 0.3 * x : 0) + 0.5 * z + noise(i) * (1 + 0.1 * x)
            if (i == 20) y += 5
            printf "%d,%.17g,%s,%.17g,%.17g\n", i, x * fx, level[g], z, y * fy
        }
    }' >"$1"
}

make_spec() { # FOLDER
    cat >"$1/s.yaml" <<'YAML'
fitproof: 1
title: Units
data:
  path: d.csv
  columns:
    t: {kind: numeric}
    x: {kind: numeric}
    g: {kind: category, levels: [a, b, c]}
    z: {kind: numeric}
    y: {kind: numeric}
models:
  - {id: m, response: y, terms: [x, g, z, [x, g]], order_by: t}
report:
  formats: [markdown, json]
  sections:
    - summary
    - models
    - text: "The slope of z is @{m.estimate[z]:dp12}."
    - appendix
YAML
}

build_at() { # NAME YFACTOR XFACTOR
    mkdir -p "$WORK/$1"
    make_data "$WORK/$1/d.csv" "$2" "$3"
    make_spec "$WORK/$1"
    expect_exit 0 "$FITPROOF" build "$WORK/$1/s.yaml" -o "$WORK/$1/out"
}

# compare BASE OTHER FACTOR MODE: MODE response (first powers scale by
# FACTOR) or predictor (first powers only checked to be present and > 0).
compare() {
    awk -v factor="$3" -v mode="$4" '
    function abs(v) { return v < 0 ? -v : v }
    function num(s) { return s ~ /^-?[0-9]/ }
    BEGIN { bad = 0 }
    FNR == NR { base[FNR] = $0; next }
    {
        line = $0; want = base[FNR]
        if (line ~ /sha256|"path"|"title"/) next
        key = line; sub(/^ *"/, "", key); sub(/".*/, "", key)
        v = line; sub(/^[^:]*: */, "", v); sub(/,$/, "", v)
        w = want; sub(/^[^:]*: */, "", w); sub(/,$/, "", w)
        if (v ~ /^[{[]/) next
        first = key ~ /^(estimate|std_error|ci_low|ci_high|hc[0-3]|sigma)$/
        if (first && key != "estimate" && key !~ /^ci_/ && (v == "null" || v + 0 <= 0)) {
            print "standard error null or not positive at line " FNR ": " line; bad = 1; next
        }
        if (!num(w) || !num(v)) {
            if (v != w && !(key ~ /^(rss|tss|sum_of_squares|rss_small|rss_big)$/)) {
                print "line " FNR " differs: " line " -- at 1: " want; bad = 1
            }
            next
        }
        # in the data units of the response or of a predictor (readings at
        # a value, predictor ranges): only the run at 1 holds them as written
        if (key ~ /^(rss|tss|sum_of_squares|log_likelihood|aic|bic|value|min|max|median)$/) next
        if (first) {
            if (mode != "response") next
            got = v / factor; tol = 1e-8 * abs(w) + 1e-8
        } else {
            got = v; tol = 1e-8 * abs(w) + 1e-12
        }
        if (abs(got - w) > tol) { print "line " FNR " " key ": " v " against " w " at 1"; bad = 1 }
    }
    END { exit bad }' "$WORK/$1/out/results.json" "$WORK/$2/out/results.json" >"$WORK/cmp" ||
        fail "$2 against $1: $(head -5 "$WORK/cmp")"
    pass
}

build_at one 1 1
build_at big 1e180 1
build_at small 1e-180 1
build_at wide 1 1e180
compare one big 1e180 response
compare one small 1e-180 response
compare one wide 1e180 predictor

# The sums of squares at 1e±180 are beyond double's range: null, as
# docs/results.md says; at 1 they are numbers.
grep -q '"rss": null' "$WORK/big/out/results.json" || fail "rss at 1e180 is not null"
grep -q '"rss": null' "$WORK/small/out/results.json" || fail "rss at 1e-180 is not null"
grep -q '"rss": [0-9]' "$WORK/one/out/results.json" || fail "rss at 1 is not a number"
pass

# The report's sentences are the same apart from the numbers.
words() { sed -E '/^\| data \|/d; s/−?[0-9][0-9.,]*(e[-+][0-9]+|×10[⁰¹²³⁴⁵⁶⁷⁸⁹⁻]+)?//g; s/[;,]//g' "$1"; }
diff <(words "$WORK/one/out/report.md") <(words "$WORK/big/out/report.md") >"$WORK/diff" ||
    fail "report words differ at 1e180: $(head -8 "$WORK/diff")"
pass

# 12 decimals of a slope near -1.6e179 are written whole: 180 digits, a point
# and 12 decimals, not cut at a field's width.
grep -Eq 'slope of z is -[0-9]{180}\.[0-9]{12}\.' "$WORK/big/out/report.md" ||
    fail "dp12 of a value near 1e180 not written whole: $(grep 'slope of z' "$WORK/big/out/report.md")"
pass

finish
