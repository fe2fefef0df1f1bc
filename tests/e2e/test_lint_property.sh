# End to end, a property: for 200 specs, each a valid spec with one random
# change (most of them mistakes: spec, data, design, checks, narrative,
# data cells), lint refuses exactly the specs that build refuses, with the
# same message; where build succeeds, lint says ready and prints the same
# warnings. The changes come from a seeded generator (a linear congruential
# generator in shell arithmetic, the same on every machine), so every run
# tries the same 200 specs; $PROPERTY_SEED picks another set by hand.
. "$(dirname "$0")/lib.sh"

FITPROOF_ABS=$(cd "$(dirname "$FITPROOF")" && pwd)/$(basename "$FITPROOF")
seed=${PROPERTY_SEED:-20261202}
rand() { # next pseudo-random number in 0 .. 2^31-1 (Numerical Recipes' constants)
    seed=$(( (seed * 1103515245 + 12345) % 2147483648 ))
    r=$(( seed / 65536 ))
}
pick() { # pick WORD...: one of the words, at random, in $choice
    rand
    shift $(( r % $# ))
    choice=$1
}

# The valid spec; each @NAME@ is one place a change may go.
base_spec='fitproof: @VERSION@
title: Property test
@TOPKEY@data:
  path: @PATH@
@FORMAT@  columns:
    g: {kind: category, levels: @LEVELS@, reference: @REFERENCE@}
@DERIVE@@WHERE@models:
  - id: main
    response: @RESPONSE@
    terms: @TERMS@
@ORDER@  - id: small
    response: y
    terms: [x]
    weights: @WEIGHTS@
    intercept: @INTERCEPT@
checks:
  - {model: main, require: @REQUIRE@, coefficient: @COEF@}
compare:
  - @COMPARE@
predict:
  - model: main
    rows: [@PREDICT@]
report:
  formats: @FORMATS@
  confidence_level: @LEVEL@
  figures: []
@TEMPLATE@  sections: [summary, models, {text: "Fit: @REF@."}]
'
defaults='VERSION=1 TOPKEY= PATH=data.csv FORMAT= LEVELS=[a,b,c] REFERENCE=a DERIVE= WHERE=
RESPONSE=y TERMS=[x,g,[x,g]] ORDER= WEIGHTS=w INTERCEPT=true REQUIRE=positive COEF=x
COMPARE=[small,main] PREDICT={x:~2,~g:~b} FORMATS=[json] LEVEL=0.95 TEMPLATE= REF=@{main.r_squared}'

make_data() { # 30 rows; a row's values follow from its number
    echo "y,x,g,w,t"
    for i in $(seq 1 30); do
        set -- a b c
        shift $(( i % 3 ))
        echo "$(( (i * 37) % 23 + i )).$(( i % 10 )),$(( i % 7 + 1 )),$1,$(( i % 4 + 1 )),$(( i / 3 ))"
    done
}

# change: sets one place (or one data cell) at random; $what names it.
change() {
    pick VERSION TOPKEY PATH FORMAT LEVELS REFERENCE DERIVE WHERE RESPONSE TERMS TERMS ORDER \
        WEIGHTS INTERCEPT REQUIRE COEF COMPARE PREDICT FORMATS LEVEL TEMPLATE REF REF CELL CELL
    place=$choice
    case $place in
    VERSION) pick 0 2 1 '"1"' v1 ;;
    TOPKEY) pick 'titel: T\n' 'model: x\n' 'chekcs: []\n' 'meta: {client: C}\n' ;;
    PATH) pick nope.csv data.csv ./data.csv data ;;
    FORMAT) pick '  delimiter: ";"\n' '  decimal: comma\n' '  missing: [NA]\n' '  format: tsv\n' '  sha256: 00\n' ;;
    LEVELS) pick '[a,b]' '[a,b,c,d]' '[c,b,a]' '[a,a,b,c]' 'a' ;;
    REFERENCE) pick b c d '""' ;;
    DERIVE) pick 'derive:\n  - {name: lx, from: x, transform: log}\n' 'derive:\n  - {name: lx, from: g, transform: log}\n' \
        'derive:\n  - {name: x, from: y, transform: sqrt}\n' 'derive:\n  - {name: lt, from: t, transform: log}\n' \
        'derive:\n  - {name: cx, from: xx, transform: center}\n' ;;
    WHERE) pick 'where: {column: x, above: 2}\n' 'where: {column: q, above: 2}\n' 'where: {column: g, below: 2}\n' \
        'where: {column: g, is: z}\n' 'where: {column: x, above: 100}\n' 'where: {column: g, is_not: a}\n' ;;
    RESPONSE) pick g x w q Y t '""' ;;
    TERMS) pick '[x,g]' '[x,g,g]' '[x,zz]' '[xx,g]' '[x,[x,x]]' '[{polynomial: g, degree: 2}]' \
        '[{polynomial: x, degree: 11}]' '[x,{polynomial: x, degree: 2}]' '[x,[g,x],[x,g]]' '[t,g]' '[w,[x,g,w,t]]' \
        '[x,[x,g],w]' '[]' '[x,y]' ;;
    ORDER) pick '    order_by: t\n' '    order_by: nope\n' '    order_by: g\n' '    order_by: y\n' ;;
    WEIGHTS) pick g zz y x t ;;
    INTERCEPT) pick false no 0 ;;
    REQUIRE) pick linearity postive max_vif negative ;;
    COEF) pick xx '"g = b"' '"g: b"' '"baseline value"' X ;;
    COMPARE) pick '[main,main]' '[small,nope]' '[main,small]' '[small]' ;;
    PREDICT) pick '{x: abc, g: b}' '{x: 2, g: z}' '{x: 2}' '{x: 2, g: b, w: 1}' '{x: 50, g: c}' ;;
    FORMATS) pick '[jsn]' '[json, json]' '[markdown]' '[]' '[json, pdf]' ;;
    LEVEL) pick 95 0.9 1 0 '"high"' ;;
    TEMPLATE) pick '  template: nowhere.html\n' '  template: data.csv\n' ;;
    REF) pick '@{main.r_sqared}' '@{nope.r_squared}' '@{main.estimate[x]}' '@{check[zzz]}' \
        '@{main.estimate[q]}' '@{main.r_squared:pct}' '@{main.r_squared:percent}' '@{small.sigma}' '@{main}' ;;
    CELL) # one data cell: row 2..31, column 1..5
        rand
        cell_line=$(( r % 30 + 2 ))
        rand
        cell_column=$(( r % 5 + 1 ))
        pick NA 0x10 '' d 0 -1 abc 1e400 '1,5'
        ;;
    esac
    value=$choice
}

# spec_text PLACE VALUE: the base spec with PLACE set to VALUE.
spec_text() {
    local text=$base_spec name default
    for pair in $defaults; do
        name=${pair%%=*}
        default=${pair#*=}
        default=${default//\~/ } # a blank in a default is written ~
        [ "$name" = "$1" ] && default=$2
        text=${text//@$name@/$default}
    done
    printf '%b' "$text"
}

no_pandoc=$(path_without pandoc) # requested exports are then refused the same way everywhere
refused=0 accepted=0
# PROPERTY_KEEP=1 keeps the cases (the folder is printed), to look at by hand.
[ -n "${PROPERTY_KEEP:-}" ] && trap "" EXIT && echo "$WORK"
for n in $(seq 1 200); do
    change
    dir="$WORK/case$n"
    mkdir "$dir"
    make_data >"$dir/data.csv"
    if [ "$place" = CELL ]; then
        awk -F, -v OFS=, -v line="$cell_line" -v col="$cell_column" -v v="$value" \
            'NR == line { $col = v } { print }' "$dir/data.csv" >"$dir/d" && mv "$dir/d" "$dir/data.csv"
        spec_text NONE ''
    else
        spec_text "$place" "$value"
    fi >"$dir/spec.yaml"
    what="case $n ($place = '$value'${cell_line:+ at line $cell_line, column ${cell_column:-}})"
    cell_line=''
    cd "$dir" || exit 1
    PATH=$no_pandoc "$FITPROOF_ABS" build spec.yaml -o out >/dev/null 2>build.err
    build_status=$?
    PATH=$no_pandoc "$FITPROOF_ABS" lint spec.yaml >/dev/null 2>lint.err
    lint_status=$?
    cd - >/dev/null || exit 1
    if [ "$build_status" -eq 2 ]; then
        [ "$lint_status" -eq 2 ] || fail "$what: build refused it, lint said ready: $(cat "$dir/build.err")"
        cmp -s "$dir/build.err" "$dir/lint.err" ||
            fail "$what: lint and build differ: $(diff "$dir/build.err" "$dir/lint.err")"
        [ ! -e "$dir/out" ] || fail "$what: build refused it but wrote a folder"
        refused=$((refused + 1))
    else
        [ "$build_status" -le 1 ] || fail "$what: build exit $build_status: $(cat "$dir/build.err")"
        [ "$lint_status" -eq 0 ] || fail "$what: build succeeded, lint refused: $(cat "$dir/lint.err")"
        grep -v -e '^fitproof: wrote out/$' -e '^fitproof: check failed: ' "$dir/build.err" >"$dir/want"
        cmp -s "$dir/want" "$dir/lint.err" ||
            fail "$what: warnings differ: $(diff "$dir/want" "$dir/lint.err")"
        accepted=$((accepted + 1))
    fi
    pass
done
# Both outcomes must be common, or the property says little.
[ "$refused" -ge 100 ] && [ "$accepted" -ge 20 ] ||
    fail "only $refused refused and $accepted accepted of 200"
echo "  measured: lint property: $refused specs refused by both, $accepted accepted by both"
finish
