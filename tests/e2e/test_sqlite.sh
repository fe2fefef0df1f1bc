# End to end: a SQLite database as the data source. Each example's rows,
# loaded into a database by the sqlite3 program, give the same results.json
# numbers as the CSV file of the same rows (bit-identical: both are read
# to the same doubles); the manifest records the query and SQLite's
# version; the folder stores the rows as received, and verify rebuilds
# from them (or from the database, with --database); bad sources are refused with
# a located message, exit 2 and nothing written.
. "$(dirname "$0")/lib.sh"

if ! command -v sqlite3 >/dev/null; then
    skip "SQLite sources" "the sqlite3 program is not installed; scripts/install-deps.sh installs it"
    finish
    exit 0
fi

# load_csv CSV DB TABLE: a table of NUMERIC-affinity columns (numbers stay
# numbers, words stay text) holding the CSV's rows, empty cells as NULL.
load_csv() {
    local header columns="" sets="" name
    header=$(head -n 1 "$1")
    local IFS=,
    for name in $header; do
        columns="$columns${columns:+, }\"$name\" NUMERIC"
        sets="$sets UPDATE \"$3\" SET \"$name\" = NULL WHERE \"$name\" = '';"
    done
    unset IFS
    sqlite3 "$2" "CREATE TABLE \"$3\" ($columns);" ".import --csv --skip 1 $1 $3" "$sets" ||
        fail "sqlite3 could not load $1"
}

# same_numbers A B: two results.json files equal but for the data's path
# and digest.
same_numbers() {
    diff <(grep -v '"path"\|"sha256"' "$1") <(grep -v '"path"\|"sha256"' "$2") >"$WORK/diff" ||
        fail "results differ between $1 and $2: $(head -20 "$WORK/diff")"
    pass
}

for example in cylinders tablets parcels; do
    dir="$WORK/$example"
    mkdir "$dir"
    # A column holding each row's line in the CSV file, so that the
    # database's rows (keyed by it) are named as the file's lines are.
    awk 'NR == 1 { print "line," $0; next } { print NR "," $0 }' \
        "examples/$example/$example.csv" >"$dir/$example.csv"
    load_csv "$dir/$example.csv" "$dir/lab.db" samples
    cp "examples/$example/$example.yaml" "$dir/csv.yaml"
    sed "s|^  path: $example.csv|  sqlite: lab.db\n  query: \"SELECT * FROM samples\"\n  key: line|" \
        "examples/$example/$example.yaml" >"$dir/sql.yaml"
    grep -q '^  sqlite: lab.db' "$dir/sql.yaml" || fail "$example: spec not rewritten"
    # The same exit status too (the tablets example fails a check on purpose).
    "$FITPROOF" build "$dir/csv.yaml" -o "$dir/csv-report" >/dev/null 2>&1
    status=$?
    [ "$status" -le 1 ] || fail "$example: the CSV build failed with $status"
    expect_exit "$status" "$FITPROOF" build "$dir/sql.yaml" -o "$dir/sql-report"
    same_numbers "$dir/csv-report/results.json" "$dir/sql-report/results.json"
    expect_exit 0 "$FITPROOF" verify "$dir/sql-report"
    grep -q '^reproduced' "$WORK/out" || fail "$example: verify did not reproduce"
    pass
done

# The manifest: source, the query run (the key orders it), SQLite's version.
manifest="$WORK/cylinders/sql-report/manifest.json"
grep -q '"source": "sqlite"' "$manifest" || fail "manifest has no source"
grep -q '"query": "SELECT \* FROM (SELECT \* FROM samples) AS fitproof_rows ORDER BY \\"line\\""' \
    "$manifest" || fail "manifest has not the query run: $(grep query "$manifest")"
grep -q "\"server\": \"SQLite 3\." "$manifest" || fail "manifest has no SQLite version"
pass

FITPROOF_ABS=$(cd "$(dirname "$FITPROOF")" && pwd)/$(basename "$FITPROOF")
# A table read whole, in rowid order, with row positions: the same numbers
# as the file without the line column.
dir="$WORK/table"
mkdir "$dir"
cp examples/cylinders/cylinders.csv examples/cylinders/cylinders.yaml "$dir/"
load_csv "$dir/cylinders.csv" "$dir/lab.db" cylinders
sed 's|^  path: cylinders.csv|  sqlite: lab.db\n  table: cylinders|' examples/cylinders/cylinders.yaml >"$dir/sql.yaml"
expect_exit 0 "$FITPROOF" build "$dir/cylinders.yaml" -o "$dir/csv-report"
expect_exit 0 "$FITPROOF" build "$dir/sql.yaml" -o "$dir/sql-report"
# Rows are numbered from 1 in the database, from line 2 in the file.
grep -q '"max_cooks_line": 100,' "$dir/sql-report/results.json" || fail "row positions"
grep -q '"max_cooks_line": 101,' "$dir/csv-report/results.json" || fail "line positions"
numbers='"(estimate|std_error|t|p|ci_low|ci_high|robust_se|f|sum_of_squares|vif)":'
diff <(grep -E "$numbers" "$dir/csv-report/results.json") \
     <(grep -E "$numbers" "$dir/sql-report/results.json") >"$WORK/diff" ||
    fail "table source: results differ: $(head "$WORK/diff")"
[ "$(grep -cE "$numbers" "$dir/sql-report/results.json")" -gt 100 ] || fail "too few numbers compared"
pass
grep -q 'read from `lab.db` (SQLite 3\.[0-9.]*), table cylinders, in the order of storage (SQLite.s rowid); rows are numbered by their position in that order\.' \
    "$dir/sql-report/report.md" || fail "report does not name the source: $(grep 'read from' "$dir/sql-report/report.md")"
grep -q 'read from `lab.db` (SQLite 3\.[0-9.]*) by the query written in the spec (see the appendix), in the order of line; rows are numbered by their line\.' \
    "$WORK/cylinders/sql-report/report.md" || fail "keyed query: $(grep 'read from' "$WORK/cylinders/sql-report/report.md")"
pass
# schema.table: SQLite's main schema, each part quoted on its own.
sed 's|^  table: cylinders|  table: main.cylinders|' "$dir/sql.yaml" >"$dir/schema.yaml"
expect_exit 0 "$FITPROOF" lint "$dir/schema.yaml"
# The database is opened read-only: its bytes are unchanged.
before=$(sha256sum "$dir/lab.db")
expect_exit 0 "$FITPROOF" build "$dir/sql.yaml" -o "$dir/again"
[ "$(sha256sum "$dir/lab.db")" = "$before" ] || fail "the database changed"
pass
# The folder stores the rows as received (report.archive_data's default
# for up to 50 MB): the canonical text whose SHA-256 is the data digest,
# listed in the manifest with the kind each column's type implied.
rows="$dir/sql-report/data/rows.csv"
[ -f "$rows" ] || fail "the rows are not stored in the folder"
head -n 1 "$rows" | grep -qx 'cylinder_id,age_days,wc_ratio,admixture,strength_mpa' ||
    fail "stored rows' header: $(head -n 1 "$rows")"
[ "$(grep -c '' "$rows")" -eq 151 ] || fail "stored rows: $(grep -c '' "$rows") lines"
digest=$(sha256sum "$rows" | cut -d' ' -f1)
grep -A1 '"path": "../lab.db"' "$dir/sql-report/manifest.json" | grep -q "\"sha256\": \"$digest\"" ||
    fail "the data digest is not that of the stored rows"
grep -q '"archived": "data/rows.csv"' "$dir/sql-report/manifest.json" || fail "manifest: archived"
tr -d ' \n' <"$dir/sql-report/manifest.json" | grep -q '"archived_kinds":\["numeric","numeric","numeric","category","numeric"\]' ||
    fail "manifest: kinds $(grep -A7 archived_kinds "$dir/sql-report/manifest.json")"
pass
# A changed row in the database: verify reads the stored rows and still
# reproduces the report; with --database it reads the database again and
# finds the change.
sqlite3 "$dir/lab.db" "UPDATE cylinders SET strength_mpa = strength_mpa + 1 WHERE rowid = 5"
expect_exit 0 "$FITPROOF" verify "$dir/sql-report"
grep -q '^  data used: .*/data/rows.csv (the rows the folder stores, as received from the SQLite file; SHA-256 '"$digest"')$' "$WORK/out" ||
    fail "verify did not use the stored rows: $(cat "$WORK/out")"
grep -q '^reproduced' "$WORK/out" || fail "stored rows: not reproduced: $(cat "$WORK/out")"
expect_exit 1 "$FITPROOF" verify "$dir/sql-report" --database
grep -q '^NOT reproduced' "$WORK/out" || fail "verify --database missed a changed row: $(cat "$WORK/out")"
grep -q '^  data ../lab.db: the data file changed since the build' "$WORK/out" ||
    fail "verify --database: $(cat "$WORK/out")"
pass
# Without the database at all, the folder still verifies.
mv "$dir/lab.db" "$dir/lab.db.away"
expect_exit 0 "$FITPROOF" verify "$dir/sql-report"
grep -q '^reproduced' "$WORK/out" || fail "without the database: $(cat "$WORK/out")"
mv "$dir/lab.db.away" "$dir/lab.db"
# Stored rows changed after the build: named as such, exit 1.
cp -r "$dir/sql-report" "$dir/forged"
sed -i '5s/,\([0-9]*\)\.\([0-9]\)$/,\1.9/' "$dir/forged/data/rows.csv"
cmp -s "$rows" "$dir/forged/data/rows.csv" && fail "the forgery changed nothing"
expect_exit 1 "$FITPROOF" verify "$dir/forged"
grep -q '^  data/rows.csv: the stored rows were changed after the build' "$WORK/out" ||
    fail "forged rows: $(cat "$WORK/out")"
# Stored rows removed: exit 2, and how to go on.
rm "$dir/forged/data/rows.csv"
expect_exit 2 "$FITPROOF" verify "$dir/forged"
expect_stderr "$dir/forged/data/rows.csv: error: the rows the folder stores are missing; put the file back, or verify with --database to read the rows from the database again"
pass
# report.archive_data: false keeps them out; verify reads the database.
sed 's|^report:|report:\n  archive_data: false|' "$dir/sql.yaml" >"$dir/unstored.yaml"
grep -q '^  archive_data: false' "$dir/unstored.yaml" || printf 'report:\n  archive_data: false\n' >>"$dir/unstored.yaml"
expect_exit 0 "$FITPROOF" build "$dir/unstored.yaml" -o "$dir/unstored"
[ -e "$dir/unstored/data" ] && fail "archive_data: false stored the rows"
grep -q archived "$dir/unstored/manifest.json" && fail "archive_data: false: manifest lists stored rows"
expect_exit 0 "$FITPROOF" verify "$dir/unstored"
grep -q '^  data used: .*lab.db (SHA-256 ' "$WORK/out" || fail "unstored: $(cat "$WORK/out")"
pass

# scaffold reads a table or an ordered query; the spec it prints lints.
(cd "$dir" && "$FITPROOF_ABS" scaffold lab.db --table cylinders >scaffold.yaml 2>"$WORK/err") ||
    fail "scaffold of a table failed: $(cat "$WORK/err")"
grep -q '^  sqlite: lab.db$' "$dir/scaffold.yaml" && grep -q '^  table: cylinders$' "$dir/scaffold.yaml" ||
    fail "scaffold did not name the source: $(head -12 "$dir/scaffold.yaml")"
grep -q '1 cell missing (row 9)' "$dir/scaffold.yaml" || fail "scaffold: rows are named by position"
(cd "$dir" && "$FITPROOF_ABS" lint scaffold.yaml >"$WORK/out" 2>&1) || fail "scaffold's spec: $(cat "$WORK/out")"
pass
(cd "$dir" && "$FITPROOF_ABS" scaffold lab.db --query "SELECT * FROM cylinders" >"$WORK/out" 2>"$WORK/err")
[ $? -eq 2 ] || fail "scaffold took a query without ORDER BY"
expect_stderr_is() { [ "$(cat "$WORK/err")" = "$1" ] || fail "stderr was: $(cat "$WORK/err") -- expected: $1"; pass; }
expect_stderr_is "fitproof: error: the query has no ORDER BY, so its rows could come in another order on the next run; add ORDER BY, or name a key column with --key"
(cd "$dir" && "$FITPROOF_ABS" scaffold lab.db --query "SELECT * FROM cylinders" --key cylinder_id >scaffold2.yaml 2>"$WORK/err") ||
    fail "scaffold with a key failed: $(cat "$WORK/err")"
(cd "$dir" && "$FITPROOF_ABS" lint scaffold2.yaml >"$WORK/out" 2>&1) || fail "scaffold's keyed spec: $(cat "$WORK/out")"
grep -q '1 cell missing (row 9)' "$dir/scaffold2.yaml" || fail "scaffold: rows named by key"
pass

# ---- dates: a text file's ISO dates and a SQLite DATE column ----------------
dir="$WORK/dates"
mkdir "$dir"
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
cat >"$dir/csv.yaml" <<'SPEC'
fitproof: 1
data:
  path: runs.csv
  columns:
    batch_started: {kind: date}
where: {column: batch_started, below: 2025-03-20}
models:
  - {id: m, response: yield, terms: [batch_started, temperature], order_by: batch_started}
SPEC
sqlite3 "$dir/lab.db" "CREATE TABLE runs (batch_started DATE, temperature REAL, yield REAL);" \
    ".import --csv --skip 1 $dir/runs.csv runs"
sed 's|^  path: runs.csv|  sqlite: lab.db\n  query: SELECT * FROM runs ORDER BY rowid|; /^  columns:/d; /batch_started: {kind: date}/d' \
    "$dir/csv.yaml" >"$dir/sql.yaml"
expect_exit 0 "$FITPROOF" build "$dir/csv.yaml" -o "$dir/csv-report"
expect_exit 0 "$FITPROOF" build "$dir/sql.yaml" -o "$dir/sql-report"
diff <(grep -E "$numbers" "$dir/csv-report/results.json") \
     <(grep -E "$numbers" "$dir/sql-report/results.json") >"$WORK/diff" ||
    fail "dates: results differ: $(head "$WORK/diff")"
pass
for report in csv-report sql-report; do
    grep -q 'are counted in days from 2025-03-01, the earliest date among the rows kept\.' \
        "$dir/$report/report.md" || fail "$report does not state the origin"
    grep -q '| batch\\_started | date | day |' "$dir/$report/report.md" || fail "$report: date kind"
    grep -q 'removed 1 of them' "$dir/$report/report.md" || fail "$report: where on a date"
    pass
done

# ---- bad sources: a located message, exit 2, nothing written ----------------
bad="$WORK/bad"
mkdir "$bad"
sqlite3 "$bad/lab.db" "CREATE TABLE t (id INTEGER, x REAL, y REAL, blob BLOB, unknown REAL);" \
    "INSERT INTO t VALUES (1, 1.0, 2.1, x'00ff', NULL), (2, 2.0, 3.9, x'01', NULL), \
     (3, 3.0, 6.2, x'02', NULL), (4, 4.0, 7.8, NULL, NULL);"
# bad_case NAME DATA-LINES EXPECTED: the spec's data section, the message.
bad_case() {
    printf 'fitproof: 1\ndata:\n%s\nmodels:\n  - {id: m, response: y, terms: [x]}\n' "$2" \
        >"$bad/spec.yaml"
    (cd "$bad" && "$FITPROOF_ABS" build spec.yaml -o out >"$WORK/out" 2>"$WORK/err")
    local status=$?
    [ "$status" -eq 2 ] || fail "$1: exit $status, expected 2 ($(cat "$WORK/err"))"
    [ "$(cat "$WORK/err")" = "$3" ] || fail "$1: stderr was: $(cat "$WORK/err") -- expected: $3"
    [ ! -e "$bad/out" ] || fail "$1: an output folder was written"
    (cd "$bad" && "$FITPROOF_ABS" lint spec.yaml >"$WORK/out" 2>"$WORK/err")
    [ "$(cat "$WORK/err")" = "$3" ] || fail "$1: lint said: $(cat "$WORK/err")"
    pass
}
bad_case "query error" '  sqlite: lab.db
  query: "SELECT id, x, z FROM t ORDER BY id"' \
    "spec.yaml:4:10: error: SQLite could not prepare the query in lab.db: no such column: z; check the query"
bad_case "no ORDER BY" '  sqlite: lab.db
  query: "SELECT id, x, y FROM t"' \
    "spec.yaml:4:10: error: the query has no ORDER BY, so the order of its rows (and so the report) could change from one run to the next; add ORDER BY, or name a key column with data.key"
bad_case "ORDER BY only inside a subquery" '  sqlite: lab.db
  query: "SELECT * FROM (SELECT id, x, y FROM t ORDER BY id)"' \
    "spec.yaml:4:10: error: the query has no ORDER BY, so the order of its rows (and so the report) could change from one run to the next; add ORDER BY, or name a key column with data.key"
bad_case "unsupported type" '  sqlite: lab.db
  query: "SELECT id, x, y, blob FROM t ORDER BY id"' \
    "spec.yaml:4:10: error: row 1 of the result holds a BLOB in column 'blob', which is not a number, a text or a date; leave the column out of the query, or cast it"
bad_case "NULL-only column" '  sqlite: lab.db
  query: "SELECT id, x, y, unknown FROM t ORDER BY id"' \
    "spec.yaml:4:10: error: column 'unknown' of the result is NULL in every row, so nothing can be learned from it; leave it out of the query, or fill it in the database"
bad_case "missing database" '  sqlite: missing.db
  table: t' \
    "spec.yaml:3:11: error: cannot open the SQLite database 'missing.db': unable to open database file; check data.sqlite, which is relative to the spec's folder"
bad_case "missing table" '  sqlite: lab.db
  table: samples' \
    "spec.yaml:4:10: error: SQLite could not prepare the query in lab.db: no such table: samples; check the table name"
bad_case "two statements" '  sqlite: lab.db
  query: "SELECT id, x, y FROM t ORDER BY id; DELETE FROM t"' \
    "spec.yaml:4:10: error: the query holds more than one statement; keep the one SELECT"
bad_case "not a SELECT" '  sqlite: lab.db
  query: "DELETE FROM t WHERE id IN (SELECT id FROM t ORDER BY id)"' \
    "spec.yaml:4:10: error: the query has no ORDER BY, so the order of its rows (and so the report) could change from one run to the next; add ORDER BY, or name a key column with data.key"
bad_case "a write with an ORDER BY" '  sqlite: lab.db
  query: "INSERT INTO t SELECT * FROM t ORDER BY id"' \
    "spec.yaml:4:10: error: the query does not read rows; fitproof runs one SELECT and changes nothing"
bad_case "key not unique" '  sqlite: lab.db
  query: "SELECT 1 AS k, x, y FROM t"
  key: k' \
    "spec.yaml:5:8: error: key column 'k' has the value 1 twice (rows 1 and 2), so it does not name the rows; choose a key with one value per row"
bad_case "key not in the result" '  sqlite: lab.db
  query: "SELECT id, x, y FROM t"
  key: idd' \
    "spec.yaml:5:8: error: data.key names column 'idd', which is not in the result; did you mean 'id'?"
bad_case "declared numeric, text found" '  sqlite: lab.db
  query: "SELECT id, x, CASE WHEN id = 3 THEN '"'"'n/a'"'"' ELSE y END AS y FROM t ORDER BY id"
  columns: {y: {kind: numeric}}' \
    "spec.yaml:4:10: error: in row 3 of the result, column 'y': 'n/a' in column 'y' is not a number, but the spec declares the column numeric; if it means no value, add missing: [\"n/a\"] under data, else correct the value"
bad_case "text-file keys" '  sqlite: lab.db
  delimiter: ";"
  table: t' \
    "spec.yaml:4:14: error: data.delimiter is for text files; a sqlite source reads typed values, so remove it"
bad_case "two sources" '  sqlite: lab.db
  path: data.csv
  table: t' \
    "spec.yaml:3:3: error: data names more than one source; keep one of path, sqlite and postgres"
# The database is still as it was: nothing was written to it.
[ "$(sqlite3 "$bad/lab.db" 'SELECT count(*), sum(x) FROM t')" = "4|10.0" ] || fail "database changed"
pass
finish
