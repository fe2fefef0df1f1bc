# End to end: the binary builds the bundled example into a report folder,
# names every coefficient in the report, and writes the same bytes twice.
. "$(dirname "$0")/lib.sh"

spec=examples/cylinders/cylinders.yaml
expect_exit 0 "$FITPROOF" build "$spec" -o "$WORK/a"
for file in report.md results.json cylinders.yaml; do
    [ -s "$WORK/a/$file" ] || fail "missing $file"
    pass
done
cmp -s "$spec" "$WORK/a/cylinders.yaml" || fail "the archived spec differs from the spec"
pass
grep -q '"format": "fitproof.results/2"' "$WORK/a/results.json" || fail "results.json format key"
pass

# Every coefficient label in results.json appears in the report (Markdown
# escapes undone) both in the table and as a sentence.
# (Coefficient labels only: a label line followed by the coefficient's
# "parts"; the diagnostics' VIF entries have labels of their own.)
labels=$(awk '{ if (label != "" && $0 ~ /"parts":/) print label; label = "" }
    /^ *"label": ".*",$/ { label = $0; sub(/^ *"label": "/, "", label); sub(/",$/, "", label) }' \
    "$WORK/a/results.json")
[ "$(printf '%s\n' "$labels" | wc -l)" -eq 7 ] || fail "expected 7 coefficients"
plain=$(sed 's/\\//g' "$WORK/a/report.md")
while IFS= read -r label; do
    printf '%s\n' "$plain" | grep -qF "| $label |" || fail "no table row for $label"
    printf '%s\n' "$plain" | grep -qF -- "- **$label**: " || fail "no sentence for $label"
    pass
done <<<"$labels"
grep -q "does not replace, review by a qualified" "$WORK/a/report.md" || fail "no caution"
pass

# Same inputs, same bytes, whatever the locale and time zone.
expect_exit 0 env LC_ALL=de_DE.UTF-8 LANG=de_DE.UTF-8 TZ=Asia/Kolkata \
    "$FITPROOF" build "$spec" -o "$WORK/b"
for file in report.md results.json; do
    cmp -s "$WORK/a/$file" "$WORK/b/$file" || fail "$file differs between two builds"
    pass
done

# Rebuilding into an existing report folder replaces it.
expect_exit 0 "$FITPROOF" build "$spec" -o "$WORK/a"
[ ! -e "$WORK/a.old-"* ] 2>/dev/null || fail "old folder left behind"
pass

# The default folder is beside the spec, named after it.
cp examples/cylinders/cylinders.csv "$WORK/"
cp "$spec" "$WORK/lab.yaml"
expect_exit 0 "$FITPROOF" build "$WORK/lab.yaml"
[ -s "$WORK/lab-report/report.md" ] || fail "default output folder not used"
pass
finish
