# End to end: a spreadsheet (.xlsx) as the data source. The workbooks are
# under tests/data/xlsx, written by tests/data/xlsx/generate.py (openpyxl
# for the examples' rows, hand-written XML for the edge cases). Each
# example's workbook gives the same results.json as its CSV file — rows
# included, since a sheet's row numbers are the file's line numbers when
# the header is in row 1 — and the edge cases, dates and bad workbooks
# give the cells, kinds and located messages written out below.
. "$(dirname "$0")/lib.sh"

books=tests/data/xlsx
FITPROOF_ABS=$(cd "$(dirname "$FITPROOF")" && pwd)/$(basename "$FITPROOF")
numbers='"(estimate|std_error|t|p|ci_low|ci_high|robust_se|f|sum_of_squares|vif)":'

for example in cylinders tablets parcels; do
    dir="$WORK/$example"
    mkdir "$dir"
    cp "examples/$example/$example.csv" "examples/$example/$example.yaml" "$books/$example.xlsx" "$dir/"
    sed "s|^  path: $example.csv|  path: $example.xlsx|" "examples/$example/$example.yaml" >"$dir/book.yaml"
    "$FITPROOF" build "$dir/$example.yaml" -o "$dir/csv-report" >/dev/null 2>&1
    status=$?
    [ "$status" -le 1 ] || fail "$example: the CSV build failed with $status"
    expect_exit "$status" "$FITPROOF" build "$dir/book.yaml" -o "$dir/book-report"
    diff <(grep -v '"path"\|"sha256"' "$dir/csv-report/results.json") \
         <(grep -v '"path"\|"sha256"' "$dir/book-report/results.json") >"$WORK/diff" ||
        fail "$example: results differ: $(head -20 "$WORK/diff")"
    pass
    # The digest is the workbook's own bytes: verify checks the file.
    grep -q "\"sha256\": \"$(sha256sum "$dir/$example.xlsx" | cut -d' ' -f1)\"" \
        "$dir/book-report/manifest.json" || fail "$example: the manifest's digest is not the file's"
    expect_exit 0 "$FITPROOF" verify "$dir/book-report"
    grep -q '^reproduced' "$WORK/out" || fail "$example: verify did not reproduce"
    pass
done
grep -q '"source": "xlsx",' "$WORK/cylinders/book-report/manifest.json" &&
    grep -q '"sheet": "cylinders"' "$WORK/cylinders/book-report/manifest.json" ||
    fail "the manifest does not name the sheet"
grep -q 'read from `cylinders.xlsx` (sheet cylinders; rows are numbered as in the sheet)' \
    "$WORK/cylinders/book-report/report.md" || fail "the report does not name the sheet"
pass
# The workbook is stored in the folder; a changed stored copy is refused
# by its digest.
cmp -s "$WORK/cylinders/book-report/data/cylinders.xlsx" "$WORK/cylinders/cylinders.xlsx" ||
    fail "the workbook was not stored"
printf 'x' >>"$WORK/cylinders/book-report/data/cylinders.xlsx"
expect_exit 2 "$FITPROOF" verify "$WORK/cylinders/book-report"
grep -q 'data/cylinders.xlsx: error: its SHA-256 is' "$WORK/err" || fail "verify missed the change: $(cat "$WORK/err")"
pass

# The second sheet, by name and by position, under two title rows.
dir="$WORK/batch"
mkdir "$dir"
cp examples/cylinders/cylinders.csv examples/cylinders/cylinders.yaml "$books/batch12.xlsx" "$dir/"
"$FITPROOF" build "$dir/cylinders.yaml" -o "$dir/csv-report" >/dev/null 2>&1 || fail "CSV build"
for sheet in '"Batch 12"' 2; do
    sed "s|^  path: cylinders.csv|  path: batch12.xlsx\n  sheet: $sheet\n  header_row: 3|" \
        examples/cylinders/cylinders.yaml >"$dir/book.yaml"
    expect_exit 0 "$FITPROOF" build "$dir/book.yaml" -o "$dir/book-$sheet"
    diff <(grep -E "$numbers" "$dir/csv-report/results.json") \
         <(grep -E "$numbers" "$dir/book-$sheet/results.json") >"$WORK/diff" ||
        fail "sheet $sheet: results differ: $(head "$WORK/diff")"
    # Rows are named by their sheet row: two rows below their file line.
    grep -q '"max_cooks_line": 103,' "$dir/book-$sheet/results.json" &&
        grep -q '"max_cooks_line": 101,' "$dir/csv-report/results.json" || fail "sheet rows"
    pass
done
# The same cells through a range, and scaffold's spec for the sheet lints.
sed 's|^  path: cylinders.csv|  path: batch12.xlsx\n  sheet: "Batch 12"\n  range: A3:E153|' \
    examples/cylinders/cylinders.yaml >"$dir/range.yaml"
expect_exit 0 "$FITPROOF" build "$dir/range.yaml" -o "$dir/range-report"
diff <(grep -E "$numbers" "$dir/csv-report/results.json") \
     <(grep -E "$numbers" "$dir/range-report/results.json") >/dev/null || fail "range: results differ"
pass
(cd "$dir" && "$FITPROOF_ABS" scaffold batch12.xlsx --sheet "Batch 12" --header-row 3 >scaffold.yaml 2>"$WORK/err") ||
    fail "scaffold: $(cat "$WORK/err")"
grep -q '^  sheet: "Batch 12"$' "$dir/scaffold.yaml" && grep -q '^  header_row: 3$' "$dir/scaffold.yaml" ||
    fail "scaffold's data section: $(head -10 "$dir/scaffold.yaml")"
(cd "$dir" && "$FITPROOF_ABS" lint scaffold.yaml >"$WORK/out" 2>&1) || fail "scaffold's spec: $(cat "$WORK/out")"
pass

# Dates: serial numbers with a date format, against the CSV's ISO dates.
dir="$WORK/dates"
mkdir "$dir"
cp "$books/dates.xlsx" "$dir/"
{
    echo "batch_started,temperature,yield"
    echo "2025-03-03,20.5,71.2"
    echo "2025-03-01,21.0,70.1"
    echo "2025-03-07,19.5,74.9"
    echo "2025-03-10,22.5,77.0"
    echo "2025-03-12,20.0,79.3"
    echo "2025-03-15,21.5,81.8"
    echo "2025-03-20,23.0,85.1"
} >"$dir/runs.csv"
printf 'fitproof: 1\ndata:\n  path: runs.csv\n  columns: {batch_started: {kind: date}}\nwhere: {column: batch_started, below: 2025-03-20}\nmodels:\n  - {id: m, response: yield, terms: [batch_started, temperature]}\n' >"$dir/csv.yaml"
printf 'fitproof: 1\ndata:\n  path: dates.xlsx\nwhere: {column: batch_started, below: 2025-03-20}\nmodels:\n  - {id: m, response: yield, terms: [batch_started, temperature]}\n' >"$dir/book.yaml"
expect_exit 0 "$FITPROOF" build "$dir/csv.yaml" -o "$dir/csv-report"
expect_exit 0 "$FITPROOF" build "$dir/book.yaml" -o "$dir/book-report"
diff <(grep -v '"path"\|"sha256"' "$dir/csv-report/results.json") \
     <(grep -v '"path"\|"sha256"' "$dir/book-report/results.json") >"$WORK/diff" ||
    fail "dates: results differ: $(head "$WORK/diff")"
grep -q 'counted in days from 2025-03-01, the earliest date among the rows kept' \
    "$dir/book-report/report.md" || fail "dates: no origin"
pass

# Hand-made edge cases: rich-text and phonetic shared strings, an inline
# string, a formula's cached text and number, dates in a built-in and a
# custom format, an empty cell run, a row of styles only.
dir="$WORK/edge"
mkdir "$dir"
cp "$books"/*.xlsx "$dir/"
edge_spec() {
    printf 'fitproof: 1\ndata:\n  path: %s\n%bmodels:\n  - {id: m, response: y, terms: [x]}\n' "$1" "$2" \
        >"$dir/spec.yaml"
}
edge_spec edge-cases.xlsx '  time_zone: UTC\n'
expect_exit 0 "$FITPROOF" build "$dir/spec.yaml" -o "$dir/report"
table=$(sed -n '/^| Column /,/^$/p' "$dir/report/report.md")
expected='| Column | Kind | Unit | Missing | Values |
|:---|:---|:---|---:|:---|
| site | category |  | 0 | east (1) reference, north ridge (2), south (1), west (1) |
| x | numeric |  | 1 | from 1 to 5, mean 3 |
| y | numeric |  | 1 | from 2.5 to 10.2, mean 6.3 |
| when | date | day | 0 | from 0 to 4, mean 2.1 |'
[ "$table" = "$expected" ] || fail "edge cases read as: $table"
grep -q '5 rows and 4 columns were read from `edge-cases.xlsx` (sheet hand made' "$dir/report/report.md" ||
    fail "edge cases: rows counted"
pass

# bad_book NAME SPEC-EXTRA EXPECTED: exit 2, the message, nothing written.
bad_book() {
    edge_spec "$1" "$2"
    (cd "$dir" && "$FITPROOF_ABS" build spec.yaml -o out >"$WORK/out" 2>"$WORK/err")
    local status=$?
    [ "$status" -eq 2 ] || fail "$1: exit $status, expected 2 ($(cat "$WORK/err"))"
    [ "$(cat "$WORK/err")" = "$3" ] || fail "$1: stderr was: $(cat "$WORK/err") -- expected: $3"
    [ ! -e "$dir/out" ] || fail "$1: an output folder was written"
    (cd "$dir" && "$FITPROOF_ABS" lint spec.yaml >"$WORK/out" 2>"$WORK/err")
    [ "$(cat "$WORK/err")" = "$3" ] || fail "$1: lint said: $(cat "$WORK/err")"
    pass
}
bad_book edge-cases.xlsx "" \
    "edge-cases.xlsx:hand made!D7: error: '2025-03-04T12:00:00' in column 'when' is a date-time without an offset from UTC, so the moment it names is unknown; write the offset (Z, +01:00) or name the data's time zone with data.time_zone"
bad_book formula-without-value.xlsx "" \
    "formula-without-value.xlsx:hand made!C2: error: the cell holds a formula (B2*2) without a computed value; open the workbook in a spreadsheet program, let it compute, and save it"
bad_book error-cell.xlsx "" \
    "error-cell.xlsx:hand made!C3: error: the cell holds the spreadsheet error #DIV/0!; correct its formula, or clear the cell to leave the value missing"
bad_book merged-header.xlsx "" \
    "merged-header.xlsx:hand made!B1: error: the header cells B1:C1 are merged, so the columns under them have no names of their own; unmerge them and give each column its name"
bad_book outside-cell.xlsx "" \
    "outside-cell.xlsx:hand made!F2: error: the cell holds a value outside the table's columns (the header A1:D1); clear it, name the cells to read with data.range, or point data.header_row at the row of column names"
bad_book batch12.xlsx "  sheet: Batch 13\n" \
    "spec.yaml:4:10: error: batch12.xlsx has no sheet 'Batch 13'; did you mean 'Batch 12'?"
bad_book batch12.xlsx "  sheet: 3\n" \
    "spec.yaml:4:10: error: batch12.xlsx has 2 sheets, so there is no sheet 3; count sheets from 1, or give the sheet's name"
bad_book batch12.xlsx "  sheet: Batch 12\n  header_row: 2\n" \
    "batch12.xlsx:Batch 12!A2: error: row 2 of the sheet is empty, so it names no columns; point data.header_row at the row of column names"
bad_book edge-cases.xlsx "  time_zone: UTC\n  columns: {x: {kind: category, levels: [one, two]}}\n" \
    "edge-cases.xlsx:hand made!B2: error: '1' in column 'x' is not one of the levels the spec declares; the declared levels are 'one', 'two'"
bad_book edge-cases.xlsx "  time_zone: UTC\n  delimiter: \";\"\n" \
    "spec.yaml:5:14: error: data.delimiter is not for a spreadsheet, whose cells carry their own types; remove it"
printf 'not a zip' >"$dir/broken.xlsx"
bad_book broken.xlsx "" \
    "spec.yaml:3:9: error: cannot read the workbook 'broken.xlsx': it is not a zip container: Not a zip archive; check that it is an .xlsx file (Office Open XML), not .xls or .ods"
# A range leaves the note beside the table out: the cell F2 is not read.
# (The sheet's one data row cannot be modelled, which lint says instead.)
printf 'fitproof: 1\ndata:\n  path: outside-cell.xlsx\n  range: A1:D3\nmodels:\n  - {id: m, response: y, terms: [x]}\n' >"$dir/spec.yaml"
(cd "$dir" && "$FITPROOF_ABS" lint spec.yaml >"$WORK/out" 2>"$WORK/err")
grep -q 'F2' "$WORK/err" && fail "range: the cell outside the range was read: $(cat "$WORK/err")"
[ "$(cat "$WORK/err")" = "spec.yaml:6:23: error: the response 'y' of model 'm' is 2 on every one of the 1 rows it uses in outside-cell.xlsx, so there is nothing to explain; choose a response that varies, or check the data and the row filter" ] ||
    fail "range: $(cat "$WORK/err")"
pass
finish
