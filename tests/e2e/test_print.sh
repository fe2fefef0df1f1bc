# End to end: the HTML report printed to PDF by headless Chromium (Debian's
# chromium; text by pdftotext from poppler-utils). Every word of every
# table cell of the parcels and tablets reports is in the PDF's text, as
# often as the cells hold it (a column cut off at the page edge loses
# words); every page carries "page N of M", the title and the document id
# of the spec's meta. Skipped by name when chromium is not installed.
. "$(dirname "$0")/lib.sh"

name=$(basename "$0" .sh)
if ! command -v chromium >/dev/null 2>&1; then
    echo "skipped: $name (chromium not installed; scripts/install-deps.sh installs it)"
    exit 0
fi
command -v pdftotext >/dev/null 2>&1 || fail "pdftotext missing (Debian poppler-utils)"

# cell_words HTML: the words of every table cell, one a line (entities
# decoded, inner markup dropped). Hyphens split words on both sides, since
# a line may break after one.
cell_words() {
    grep -o '<t[dh][^>]*>.*</t[dh]>' "$1" |
        sed -e 's#</t[dh]>#\n#g' |
        sed -e 's#<t[dh][^>]*>##' -e 's#<[^>]*>##g' \
            -e 's#&lt;#<#g' -e 's#&gt;#>#g' -e 's#&quot;#"#g' -e "s#&\#39;#'#g" -e 's#&amp;#\&#g' |
        tr -s ' \t-' '\n\n\n' | grep -v '^$' || true
}

# pdf_words PDF: the words of the PDF's text, one a line, ligatures undone.
pdf_words() {
    pdftotext -enc UTF-8 "$1" - |
        sed -e 's/ﬁ/fi/g' -e 's/ﬂ/fl/g' -e 's/ﬀ/ff/g' -e 's/ﬃ/ffi/g' -e 's/ﬄ/ffl/g' |
        tr -s ' \t\f-' '\n\n\n\n' | grep -v '^$' || true
}

for example in parcels tablets; do
    spec=examples/$example/$example.yaml
    "$FITPROOF" build "$spec" -o "$WORK/$example" >"$WORK/out" 2>"$WORK/err"
    status=$?
    [ "$status" -eq 0 ] || [ "$status" -eq 1 ] || fail "build of $spec exited $status"
    html="$WORK/$example/report.html"
    pdf="$WORK/$example.pdf"
    print_pdf "$(cd "$(dirname "$html")" && pwd)/report.html" "$pdf"

    # Every cell word, counted, against the PDF's words.
    cell_words "$html" | sort | uniq -c >"$WORK/cells.count"
    pdf_words "$pdf" | sort | uniq -c >"$WORK/pdf.count"
    [ "$(wc -l <"$WORK/cells.count")" -gt 50 ] || fail "$example: too few table words read"
    missing=$(awk 'NR == FNR { have[$2] = $1; next }
                   { if (have[$2] + 0 < $1) printf "%s (%d of %d) ", $2, have[$2] + 0, $1 }' \
        "$WORK/pdf.count" "$WORK/cells.count")
    [ -z "$missing" ] || fail "$example: table words missing from the printed PDF: $missing"
    pass

    # Every page: its number, the title and the document id.
    pages=$(pdfinfo "$pdf" | sed -n 's/^Pages: *//p')
    [ "${pages:-0}" -gt 1 ] || fail "$example: could not read the page count"
    title=$(sed -n 's/^title: //p' "$spec")
    document_id=$(sed -n 's/^  document_id: //p' "$spec")
    [ -n "$document_id" ] || fail "$example: no document_id in the spec's meta"
    for page in $(seq 1 "$pages"); do
        pdftotext -f "$page" -l "$page" -enc UTF-8 "$pdf" "$WORK/page.txt"
        grep -q "page $page of $pages" "$WORK/page.txt" ||
            fail "$example: page $page does not say \"page $page of $pages\""
        grep -qF "$document_id" "$WORK/page.txt" || fail "$example: page $page has no document id"
        grep -qF "$title" "$WORK/page.txt" || fail "$example: page $page has no title"
    done
    pass

    # The contents list prints.
    pdftotext -f 1 -l 2 -enc UTF-8 "$pdf" - | grep -q '^Contents$' ||
        fail "$example: the contents list is not printed"
    pass
done

# A table longer than a page repeats its header row on every page it runs
# over: a category of 120 levels gives a coefficient table of 122 rows.
mkdir -p "$WORK/long"
awk 'BEGIN {
    print "site,dose,response"
    for (i = 0; i < 600; i++)
        printf "S%03d,%d,%.3f\n", i % 120, i % 7, 10 + (i % 120) * 0.05 + (i % 7) * 0.3 + ((i * 37) % 11) / 10
}' >"$WORK/long/sites.csv"
cat >"$WORK/long/sites.yaml" <<'SPEC'
fitproof: 1
title: Response by site
meta:
  document_id: LONG-TABLE-1
data:
  path: sites.csv
models:
  - id: main
    response: response
    terms: [dose, site]
SPEC
"$FITPROOF" build "$WORK/long/sites.yaml" -o "$WORK/long/out" >"$WORK/out" 2>"$WORK/err" ||
    fail "build of the long-table spec failed: $(cat "$WORK/err")"
print_pdf "$WORK/long/out/report.html" "$WORK/long.pdf"
pages=$(pdfinfo "$WORK/long.pdf" | sed -n 's/^Pages: *//p')
spanned=0
for page in $(seq 1 "$pages"); do
    pdftotext -layout -f "$page" -l "$page" -enc UTF-8 "$WORK/long.pdf" "$WORK/page.txt"
    # A page holding rows of the coefficient table (a level, its estimate,
    # then its standard error; the coefficient figure writes "estimate
    # (interval)" instead) must show the table's header.
    if grep -Eq '^ *site = S[0-9]{3} +[^ (]+ +[0-9.]+ ' "$WORK/page.txt"; then
        spanned=$((spanned + 1))
        grep -q 'Standard error' "$WORK/page.txt" ||
            fail "page $page continues the coefficient table without its header row"
    fi
done
[ "$spanned" -ge 2 ] || fail "the long coefficient table does not run over two pages"
pass
finish
