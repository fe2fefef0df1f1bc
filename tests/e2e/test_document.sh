# End to end: the report as a controlled document. Its date comes from
# meta.date, build --date or SOURCE_DATE_EPOCH (never from the clock
# unasked), is recorded in the manifest and reused by verify; meta's
# revision, history and people give the document-control section and the
# approval block, in the page and in results.json.
. "$(dirname "$0")/lib.sh"

mkdir "$WORK/lab"
cp examples/cylinders/cylinders.csv examples/cylinders/cylinders.yaml "$WORK/lab/"
spec=$WORK/lab/cylinders.yaml

# No date asked for: none shown, none recorded (SOURCE_DATE_EPOCH unset).
expect_exit 0 env -u SOURCE_DATE_EPOCH "$FITPROOF" build "$spec" -o "$WORK/plain"
grep -q '\*\*Date:\*\*' "$WORK/plain/report.md" && fail "a date appeared unasked"
pass
grep -q report_date "$WORK/plain/manifest.json" && fail "a date was recorded unasked"
pass

# SOURCE_DATE_EPOCH: 1764633600 s after 1970-01-01 UTC is 2025-12-02
# (GNU date -u -d @1764633600 +%F prints it). Two builds: the same bytes.
expect_exit 0 env SOURCE_DATE_EPOCH=1764633600 "$FITPROOF" build "$spec" -o "$WORK/a"
expect_exit 0 env SOURCE_DATE_EPOCH=1764633600 "$FITPROOF" build "$spec" -o "$WORK/b"
diff -r "$WORK/a" "$WORK/b" >/dev/null || fail "two builds with one SOURCE_DATE_EPOCH differ"
pass
[ "$(date -u -d @1764633600 +%F)" = 2025-12-02 ] || fail "the reference date is wrong"
grep -q '^- \*\*Date:\*\* 2025-12-02$' "$WORK/a/report.md" || fail "date not on the page"
pass
grep -q '<strong>Date:</strong> 2025-12-02' "$WORK/a/report.html" || fail "date not in the HTML"
pass
grep -q '"date_source": "SOURCE_DATE_EPOCH"' "$WORK/a/results.json" || fail "date source in results.json"
pass
# verify reuses the recorded date, whatever the environment says now.
expect_exit 0 env SOURCE_DATE_EPOCH=1 "$FITPROOF" verify "$WORK/a"
grep -q '^  report date: 2025-12-02 (from SOURCE_DATE_EPOCH at the build)$' "$WORK/out" || fail "verify date line"
pass

# --date now reads the clock once; the manifest keeps it for verify.
expect_exit 0 "$FITPROOF" build "$spec" -o "$WORK/today" --date now
today=$(date -u +%F)
grep -q "^- \*\*Date:\*\* $today\$" "$WORK/today/report.md" ||
    grep -q "^- \*\*Date:\*\* $(date -u -d yesterday +%F)\$" "$WORK/today/report.md" || fail "--date now"
pass
expect_exit 0 "$FITPROOF" verify "$WORK/today"

# Refusals.
expect_exit 2 "$FITPROOF" build "$spec" -o "$WORK/x" --date 2026-02-30
expect_stderr "fitproof: error: --date takes a date written YYYY-MM-DD, or now; '2026-02-30' is neither"
expect_exit 2 env SOURCE_DATE_EPOCH=yesterday "$FITPROOF" build "$spec" -o "$WORK/x"
expect_stderr "fitproof: error: SOURCE_DATE_EPOCH is 'yesterday', which is not a whole number of seconds since 1970-01-01 UTC; set it to one (as in \$(date +%s)) or unset it"
[ ! -e "$WORK/x" ] || fail "a refused build wrote a folder"
pass

# Document control from meta.
cat >"$WORK/lab/controlled.yaml" <<'YAML'
fitproof: 1
title: Cylinder strength, mix 12
meta:
  client: Northfield Precast (invented)
  document_id: QA-2026-114
  date: 2026-12-01
  revision: B
  history:
    - {revision: A, date: 2026-11-03, change: first issue}
    - {revision: B, date: 2026-12-01, change: November batches added}
  prepared_by: {name: R. Okafor, role: QA statistics}
  reviewed_by: M. Lindqvist
  approved_by: [{name: A. Chen, role: Head of QA}]
data: {path: cylinders.csv}
models:
  - {id: main, response: strength_mpa, terms: [age_days, wc_ratio]}
YAML
expect_exit 0 "$FITPROOF" build "$WORK/lab/controlled.yaml" -o "$WORK/c"
md=$WORK/c/report.md
grep -q '^- \*\*Document number:\*\* QA-2026-114$' "$md" || fail "meta key shown as a name"
pass
# (The appendix quotes the spec itself in a code block; the prose must not.)
awk '/^```/ { code = !code; next } !code' "$md" | grep -q 'document_id' &&
    fail "a spec key name reached the client text"
pass
grep -q '^- \*\*Revision:\*\* B$' "$md" && grep -q '^- \*\*Date:\*\* 2026-12-01$' "$md" || fail "revision and date"
pass
grep -q '^| B | 2026-12-01 | November batches added |$' "$md" || fail "history row"
pass
grep -q '^| Prepared | R. Okafor | QA statistics |  |  |$' "$md" &&
    grep -q '^| Reviewed | M. Lindqvist |  |  |  |$' "$md" &&
    grep -q '^| Approved | A. Chen | Head of QA |  |  |$' "$md" || fail "approval block"
pass
grep -q '<div class="callout approval"' "$WORK/c/report.html" || fail "approval block in HTML"
pass
grep -q '"date_source": "meta.date"' "$WORK/c/results.json" || fail "meta.date source"
pass
grep -q '"name": "A. Chen"' "$WORK/c/results.json" || fail "people in results.json"
pass
# Printed (where Chromium is installed): every page carries the revision
# and the date, and the approval block prints.
if command -v chromium >/dev/null 2>&1 && command -v pdftotext >/dev/null 2>&1; then
    print_pdf "$WORK/c/report.html" "$WORK/c.pdf"
    pdftotext -enc UTF-8 "$WORK/c.pdf" "$WORK/c.txt"
    pages=$(tr -cd '\f' <"$WORK/c.txt" | wc -c)
    dated=$(awk 'BEGIN { RS = "\f" } /revision B · 2026-12-01/ { n++ } END { print n + 0 }' "$WORK/c.txt")
    [ "$pages" -ge 2 ] && [ "$dated" -eq "$pages" ] || fail "$dated of $pages printed pages carry the date"
    pass
    grep -q 'Approved' "$WORK/c.txt" && grep -q 'A. Chen' "$WORK/c.txt" || fail "approval block not printed"
    pass
else
    skip "the dated pages printed by Chromium" "chromium or pdftotext is not installed"
fi
# meta.date and --date together: refused.
expect_exit 2 "$FITPROOF" build "$WORK/lab/controlled.yaml" -o "$WORK/x" --date 2026-12-02
expect_stderr "fitproof: error: the spec fixes the report's date (meta.date: 2026-12-01), so --date cannot change it; drop one of the two"

# Spec errors in document control, located.
cat >"$WORK/lab/bad.yaml" <<'YAML'
fitproof: 1
meta:
  date: 01/12/2026
  history:
    - {revision: A}
  approved_by: {role: Head of QA}
data: {path: cylinders.csv}
models:
  - {id: main, response: strength_mpa, terms: [age_days]}
YAML
expect_exit 2 "$FITPROOF" lint "$WORK/lab/bad.yaml"
expect_stderr "$WORK/lab/bad.yaml:3:9: error: meta.date must be a calendar date written YYYY-MM-DD (ISO 8601), as in 2026-12-01; '01/12/2026' is not
$WORK/lab/bad.yaml:5:7: error: an entry of meta.history needs a revision and a change, as in {revision: B, date: 2026-12-01, change: November data added}
$WORK/lab/bad.yaml:6:16: error: a person needs a name, as in {name: R. Okafor, role: QA statistics}"
finish
