# End to end: the model engine's hard cases still give a report (exit 0,
# results.json written): exact collinearity, a declared level without rows,
# more coefficients than rows, models that are not nested; and the engine's
# keys (docs/results.md) are there. A bad prediction row is a located error.
. "$(dirname "$0")/lib.sh"

cat >"$WORK/data.csv" <<'CSV'
y,x,z,xz,g,w
4.1,1,2,3,a,1
5.3,2,1.5,3.5,a,2
4.7,3,3.5,6.5,a,1
7.9,1.5,0.5,2,b,0.5
8.8,2.5,2.5,5,b,1
8.1,3.5,1,4.5,b,2
2.2,1.25,4,5.25,c,1
3,2.25,3,5.25,c,1.5
2.5,3.25,2,5.25,c,1
CSV
cat >"$WORK/engine.yaml" <<'YAML'
fitproof: 1
title: Hard cases
data:
  path: data.csv
  columns:
    g: {kind: category, levels: [a, b, c, e]}
models:
  - {id: collinear, response: y, terms: [x, z, xz]}
  - {id: empty_level, response: y, terms: [x, g], standard_errors: hc3}
  - {id: too_many, response: y, terms: [{polynomial: x, degree: 4}, z, g, [z, g]]}
  - {id: weighted, response: y, terms: [x, g], weights: w, coding: sum}
compare:
  - [collinear, empty_level]
predict:
  - model: empty_level
    rows: [{x: 2, g: b}, {x: 9, g: a}, {x: 2, g: e}]
YAML
expect_exit 0 "$FITPROOF" build "$WORK/engine.yaml" -o "$WORK/report"
json="$WORK/report/results.json"
[ -s "$json" ] || fail "no results.json"
pass
for key in '"estimable": false' '"aliased_with"' '"robust_se"' '"hc3"' '"term_tests"' \
    '"sequential_tests"' '"predictions"' '"extrapolation": true' '"comparisons"' \
    '"reason": "not_nested"' '"standard_errors": "hc3"' '"coding": "sum"' \
    '"dropped_by_column"' '"outside_range"' '"df_residual": 0' '"levels_without_rows"'; do
    grep -qF -- "$key" "$json" || fail "results.json lacks $key"
    pass
done
grep -qF '"label": "g = e"' "$json" || fail "the declared level without rows has no coefficient"
pass
grep -qF '"label": "g: b vs average of levels"' "$json" || fail "no sum-coded label"
pass
! grep -qF '"label": "g: e vs average of levels"' "$json" || fail "sum coding kept a level without rows"
pass

# A prediction row naming an unknown level: located error, nothing written.
sed 's/{x: 2, g: e}/{x: 2, g: bb}/' "$WORK/engine.yaml" >"$WORK/bad.yaml"
expect_exit 2 "$FITPROOF" build "$WORK/bad.yaml" -o "$WORK/bad"
expect_stderr "$WORK/bad.yaml:16:50: error: 'bb' is not a level of 'g'; did you mean 'b'?"
[ ! -e "$WORK/bad" ] || fail "a failed build wrote its folder"
pass
finish
