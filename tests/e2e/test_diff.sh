# End to end: fitproof diff on two builds of the tablets example, the
# second on "next month's" data (tests/data/diff/tablets_next.csv: 10% more
# rows, press C about 25 N harder). The coefficients, their standard errors,
# the change in combined standard errors and which coefficients moved are
# checked against a statsmodels refit of both files, and the checks that
# flip against scipy/statsmodels tests of the same residuals
# (tests/reference/diff_statsmodels.py -> diff.expected.tsv).
. "$(dirname "$0")/lib.sh"

mkdir -p "$WORK/old" "$WORK/new"
cp examples/tablets/tablets.yaml examples/tablets/tablets.csv "$WORK/old/"
cp examples/tablets/tablets.yaml "$WORK/new/"
cp tests/data/diff/tablets_next.csv "$WORK/new/tablets.csv"
# The example declares checks that fail on purpose: exit 1.
expect_exit 1 "$FITPROOF" build "$WORK/old/tablets.yaml" -o "$WORK/old/report"
expect_exit 1 "$FITPROOF" build "$WORK/new/tablets.yaml" -o "$WORK/new/report"

# A folder against itself: same conclusions, exit 0.
expect_exit 0 "$FITPROOF" diff "$WORK/old/report" "$WORK/old/report"
grep -q '^\*\*Same conclusions.\*\*' "$WORK/out" || fail "a folder differs from itself"
pass
grep -q 'The two reports come from the same spec, byte for byte.' "$WORK/out" ||
    fail "same spec not said"
pass

# A folder as an earlier fitproof wrote it (verdict codes "holds" and
# "doubtful"): the same conclusions as today's folder of the same inputs.
cp -R "$WORK/old/report" "$WORK/earlier"
old_digest=$(sha256sum "$WORK/earlier/results.json" | cut -d' ' -f1)
sed -i -e 's/"verdict": "no_departure_detected"/"verdict": "holds"/' \
    -e 's/"verdict": "possible_departure"/"verdict": "doubtful"/' \
    -e 's/"format": "fitproof.results\/2"/"format": "fitproof.results\/1"/' "$WORK/earlier/results.json"
grep -q '"verdict": "holds"' "$WORK/earlier/results.json" && grep -q '"format": "fitproof.results/1"' "$WORK/earlier/results.json" || fail "test set-up: not rewritten"
new_digest=$(sha256sum "$WORK/earlier/results.json" | cut -d' ' -f1)
sed -i "s/$old_digest/$new_digest/" "$WORK/earlier/manifest.json"
expect_exit 0 "$FITPROOF" diff "$WORK/earlier" "$WORK/old/report"
grep -q '^\*\*Same conclusions.\*\*' "$WORK/out" || fail "earlier verdict codes read as changes: $(cat "$WORK/out")"
pass

# Earlier against later: something needs a look, exit 1, in all formats.
expect_exit 1 "$FITPROOF" diff "$WORK/old/report" "$WORK/new/report" -o "$WORK/diff.json"
grep -q '^\*\*Something needs a look.\*\*' "$WORK/out" || fail "no attention line"
pass
grep -q '^- Row by row: 240 rows in both, 0 only in the earlier data (removed or changed), 24 only in the later data (added or changed).$' "$WORK/out" ||
    fail "row counts"
pass
grep -q '"needs_attention": true' "$WORK/diff.json" || fail "needs_attention in JSON"
pass

# The coefficients, in the model's order: estimate and standard error
# before and after, the change in combined SEs, moved or not.
awk '/"coefficients": \[/ { inside = 1 }
     inside && /"changed_verdicts"/ { inside = 0 }
     inside && /"estimate":/ { gsub(/[",]/, ""); value[++n] = $2 }
     inside && /"std_error":/ { gsub(/[",]/, ""); value[++n] = $2 }
     inside && /"shift_in_se":/ { gsub(/[",]/, ""); value[++n] = $2 }
     inside && /"moved":/ { gsub(/[",]/, ""); moved = $2 == "true" ? 1 : 0
         printf "%d", k++; for (i = 1; i <= n; i++) printf "\t%s", value[i]
         printf "\t%d\n", moved; n = 0 }' "$WORK/diff.json" >"$WORK/got.tsv"
grep -E '^[0-9]' tests/reference/diff.expected.tsv >"$WORK/want.tsv"
[ "$(wc -l <"$WORK/got.tsv")" -eq "$(wc -l <"$WORK/want.tsv")" ] ||
    fail "coefficient count: $(cat "$WORK/got.tsv")"
pass
# Relative agreement to 1e-9 on every number (statsmodels 0.13.5).
paste "$WORK/got.tsv" "$WORK/want.tsv" | awk -F'\t' '
    function off(a, b) { d = a - b; if (d < 0) d = -d; s = b < 0 ? -b : b
                         return s > 0 ? d / s : d }
    { for (i = 2; i <= 6; i++) if (off($i, $(i + 7)) > 1e-9) {
          print "coefficient " $1 " field " i ": " $i " vs " $(i + 7); bad = 1 }
      if ($7 != $14) { print "coefficient " $1 ": moved " $7 " vs " $14; bad = 1 } }
    END { exit bad }' >&2 || fail "diff numbers differ from statsmodels"
pass
grep -q '^| press = C | -4.808 (-7.220 to -2.397) | -1.247 (-3.948 to 1.454) | +1.94 |$' "$WORK/out" ||
    fail "press C row"
pass
# The checks statsmodels/scipy say flip are listed as flipped, and only those.
while IFS=$'\t' read -r kind name before after; do
    [ "$kind" = check ] || continue
    words=(failed passed)
    if [ "$before" != "$after" ]; then
        grep -qF "| $name | ${words[$before]} | ${words[$after]} |" "$WORK/out" ||
            fail "flipped check '$name' not listed"
    else
        grep -qF "| $name |" "$WORK/out" && fail "check '$name' listed although unchanged"
    fi
    pass
done <tests/reference/diff.expected.tsv
grep -q '^The other 6 checks gave the same result as before.$' "$WORK/out" || fail "unchanged checks"
pass

# HTML and Markdown outputs.
expect_exit 1 "$FITPROOF" diff "$WORK/old/report" "$WORK/new/report" -o "$WORK/diff.html"
[ -z "$(xmllint --html --noout "$WORK/diff.html" 2>&1)" ] || fail "diff.html is not clean HTML"
pass
grep -q '<td>press = C</td>' "$WORK/diff.html" || fail "HTML table"
pass
expect_exit 1 "$FITPROOF" diff "$WORK/old/report" "$WORK/new/report" -o "$WORK/diff.md"
cmp -s "$WORK/diff.md" "$WORK/out" || fail "diff.md is not what diff printed"
pass

# A spec change is listed line by line.
sed 's/^title: .*/title: Tablet hardness, line 4/' examples/tablets/tablets.yaml >"$WORK/new/tablets.yaml"
expect_exit 1 "$FITPROOF" build "$WORK/new/tablets.yaml" -o "$WORK/new/report"
expect_exit 1 "$FITPROOF" diff "$WORK/old/report" "$WORK/new/report"
line=$(grep -n '^title:' examples/tablets/tablets.yaml | cut -d: -f1)
grep -q "^-  *$line  title: Tablet hardness on compression line 4, late shift$" "$WORK/out" &&
    grep -q "^+  *$line  title: Tablet hardness, line 4$" "$WORK/out" || fail "spec lines"
pass

# Refusals: exit 2 with a located message, nothing written.
expect_exit 2 "$FITPROOF" diff "$WORK/old/report"
expect_stderr "fitproof: error: diff needs two report folders, as in 'fitproof diff old-report new-report'; see 'fitproof --help'"
expect_exit 2 "$FITPROOF" diff "$WORK/old/report" "$WORK/new/report" -o "$WORK/diff.txt"
expect_stderr "fitproof: error: -o takes a file ending in .md, .html or .json; see 'fitproof --help'"
mkdir "$WORK/empty"
expect_exit 2 "$FITPROOF" diff "$WORK/old/report" "$WORK/empty" -o "$WORK/refused.json"
grep -q "^$WORK/empty/manifest.json: error: " "$WORK/err" || fail "not a report folder"
[ ! -e "$WORK/refused.json" ] || fail "a refused diff wrote its output"
pass
sed -i 's/"r_squared": 0\.8/"r_squared": 0.9/' "$WORK/new/report/results.json"
expect_exit 2 "$FITPROOF" diff "$WORK/old/report" "$WORK/new/report"
expect_stderr "$WORK/new/report/results.json: error: the file does not match the folder's manifest, so the folder was changed after it was written; run 'fitproof verify $WORK/new/report' to see what changed"
finish
