# End to end: bounded input and unique, bounded file names (issue 11).
# Devices, FIFOs and folders are refused as spec, data or page template
# without reading (a FIFO with no writer must not hang); the spec's size,
# nesting, entries per list or mapping and model id length are limited,
# each a located error found at once; a NUL in any spec string is an
# error; model ids that would share file names, and a spec named like a
# report file, are errors at lint. The limits are fitproof's own
# (docs/errors.md), no outside source.
. "$(dirname "$0")/lib.sh"

cp examples/cylinders/cylinders.csv "$WORK/d.csv"
spec_with() { # spec_with FILE LINES...: a spec on d.csv followed by LINES
    local file=$1
    shift
    printf 'fitproof: 1\n' >"$file"
    printf '%s\n' "$@" >>"$file"
}
# A command that must finish at once (a hang fails the test).
quick() { timeout 20 "$@"; }
RS="it is not a regular file (a device, a pipe or a socket); copy its content into a file"

# ---- 7. what is not a regular file --------------------------------------------
mkfifo "$WORK/fifo.yaml" "$WORK/fifo.csv"
for command in lint build; do
    expect_exit 2 quick "$FITPROOF" $command /dev/zero
    expect_stderr "/dev/zero: error: cannot read the spec: $RS"
    expect_exit 2 quick "$FITPROOF" $command "$WORK/fifo.yaml"
    expect_stderr "$WORK/fifo.yaml: error: cannot read the spec: $RS"
    for data in /dev/zero /dev/urandom fifo.csv; do
        spec_with "$WORK/s.yaml" "data: {path: $data}" "models: [{id: m, response: strength_mpa}]"
        expect_exit 2 quick "$FITPROOF" $command "$WORK/s.yaml"
        where=$data && [ "$data" = fifo.csv ] && where=$WORK/fifo.csv
        expect_stderr "$WORK/s.yaml:2:14: error: cannot read the data file '$where': $RS"
    done
done
expect_exit 2 quick "$FITPROOF" scaffold "$WORK/fifo.csv"
grep -qF "$RS" "$WORK/err" || fail "scaffold of a FIFO: $(cat "$WORK/err")"
pass
spec_with "$WORK/s.yaml" "data: {path: d.csv}" "report: {template: /dev/zero}" "models: [{id: m, response: strength_mpa}]"
expect_exit 2 quick "$FITPROOF" build "$WORK/s.yaml"
expect_stderr "$WORK/s.yaml:3:20: error: cannot read the page template '/dev/zero': $RS; the path is relative to the spec's folder"
[ ! -e "$WORK/s-report" ] || fail "a refused build wrote its folder"
pass

# ---- 8. limits, each found at once --------------------------------------------
# 100 000 levels of flow nesting (200 KB).
{ printf 'fitproof: 1\nmeta: '; head -c 100000 /dev/zero | tr '\0' '['; head -c 100000 /dev/zero | tr '\0' ']'; echo; } >"$WORK/deep.yaml"
expect_exit 2 quick "$FITPROOF" lint "$WORK/deep.yaml"
expect_stderr "$WORK/deep.yaml:2:38: error: lists and mappings are nested more than 32 deep here; a spec needs only a few levels"
# 40 000 meta keys.
{ printf 'fitproof: 1\nmeta:\n'; seq 1 40000 | sed 's/.*/  k&: v/'; } >"$WORK/keys.yaml"
expect_exit 2 quick "$FITPROOF" lint "$WORK/keys.yaml"
expect_stderr "$WORK/keys.yaml:1003:3: error: this mapping has more than 1000 keys, the most a spec may hold in one place; split the work into several specs"
# 1001 models (the limit is per list).
{ printf 'fitproof: 1\ndata: {path: d.csv}\nmodels:\n'; seq 1 1001 | sed 's/.*/  - {id: m&, response: strength_mpa}/'; } >"$WORK/models.yaml"
expect_exit 2 quick "$FITPROOF" lint "$WORK/models.yaml"
expect_stderr "$WORK/models.yaml:1004:5: error: this list has more than 1000 items, the most a spec may hold in one place; split the work into several specs"
# 100 000 declared levels, on one line.
{ printf 'fitproof: 1\ndata: {path: d.csv, columns: {admixture: {levels: [l0'; seq 1 100000 | sed 's/^/,l/' | tr -d '\n'; printf ']}}}\nmodels: [{id: m, response: strength_mpa}]\n'; } >"$WORK/levels.yaml"
expect_exit 2 quick "$FITPROOF" lint "$WORK/levels.yaml"
grep -Eq "^$WORK/levels.yaml:2:[0-9]+: error: this list has more than 1000 items" "$WORK/err" || fail "levels: $(cat "$WORK/err")"
pass
# 1001 terms in one model.
{ printf 'fitproof: 1\ndata: {path: d.csv}\nmodels: [{id: m, response: strength_mpa, terms: [age_days'; seq 1 1000 | sed 's/.*/,age_days/' | tr -d '\n'; printf ']}]\n'; } >"$WORK/terms.yaml"
expect_exit 2 quick "$FITPROOF" lint "$WORK/terms.yaml"
grep -q "error: this list has more than 1000 items" "$WORK/err" || fail "terms: $(cat "$WORK/err")"
pass
# A spec of more than 1 MiB, without reading it.
{ printf 'fitproof: 1\n# '; head -c 1048576 /dev/zero | tr '\0' 'x'; echo; } >"$WORK/big.yaml"
expect_exit 2 quick "$FITPROOF" lint "$WORK/big.yaml"
expect_stderr "$WORK/big.yaml: error: cannot read the spec: it is larger than the limit of 1048576 bytes for this kind of file"
# Files bigger than their limit are refused before a byte is read (sparse
# files, so the test costs no disk): the data (16 GiB), a page template
# (1 MiB), a manifest (16 MiB) and a report file verify compares (1 GiB).
truncate -s 17G "$WORK/huge.csv"
spec_with "$WORK/s.yaml" "data: {path: huge.csv}" "models: [{id: m, response: strength_mpa}]"
expect_exit 2 quick "$FITPROOF" lint "$WORK/s.yaml"
expect_stderr "$WORK/s.yaml:2:14: error: cannot read the data file '$WORK/huge.csv': it is larger than the limit of 17179869184 bytes for this kind of file"
rm "$WORK/huge.csv"
truncate -s 2M "$WORK/page.html"
spec_with "$WORK/s.yaml" "data: {path: d.csv}" "report: {template: page.html}" "models: [{id: m, response: strength_mpa}]"
expect_exit 2 quick "$FITPROOF" build "$WORK/s.yaml"
expect_stderr "$WORK/s.yaml:3:20: error: cannot read the page template '$WORK/page.html': it is larger than the limit of 1048576 bytes for this kind of file; the path is relative to the spec's folder"
spec_with "$WORK/s.yaml" "data: {path: d.csv}" "models: [{id: m, response: strength_mpa}]"
expect_exit 0 "$FITPROOF" build "$WORK/s.yaml" -o "$WORK/r"
truncate -s 2G "$WORK/r/report.md"
expect_exit 1 quick "$FITPROOF" verify "$WORK/r"
grep -qxF "  report.md: cannot be read in the folder (it is larger than the limit of 1073741824 bytes for this kind of file)" "$WORK/out" || fail "big report file: $(cat "$WORK/out")"
pass
truncate -s 17M "$WORK/r/manifest.json"
expect_exit 2 quick "$FITPROOF" verify "$WORK/r"
expect_stderr "$WORK/r/manifest.json: error: cannot read the manifest (it is larger than the limit of 16777216 bytes for this kind of file); verify needs a folder written by fitproof build"

# At most 50 errors are shown; the rest are counted.
{ printf 'fitproof: 1\ndata: {path: d.csv}\nmodels: [{id: m, response: strength_mpa}]\n'; seq 1 60 | sed 's/.*/zzz&: 1/'; } >"$WORK/many.yaml"
expect_exit 2 "$FITPROOF" lint "$WORK/many.yaml"
[ "$(grep -c ': error: unknown key' "$WORK/err")" -eq 50 ] || fail "not 50 errors shown"
pass
[ "$(tail -1 "$WORK/err")" = "fitproof: 10 further errors not shown" ] || fail "the rest not counted: $(tail -1 "$WORK/err")"
pass

# Within every limit, a spec with 1000 meta keys is fine.
{ printf 'fitproof: 1\ndata: {path: d.csv}\nmodels: [{id: m, response: strength_mpa}]\nmeta:\n'; seq 1 1000 | sed 's/.*/  k&: v/'; } >"$WORK/fine.yaml"
expect_exit 0 quick "$FITPROOF" lint "$WORK/fine.yaml"

# ---- 9. NUL in a spec string -----------------------------------------------
spec_with "$WORK/nul.yaml" 'title: "a\0b"' 'data: {path: "d.csv\0junk"}' '"models\0x": [{id: m, response: strength_mpa}]'
N="error: this value holds a NUL character (\\0), which no name, path or text in a spec may contain; remove it"
for command in lint build; do
    expect_exit 2 "$FITPROOF" $command "$WORK/nul.yaml"
    expect_stderr "$WORK/nul.yaml:2:8: $N
$WORK/nul.yaml:3:14: $N
$WORK/nul.yaml:4:1: $N"
done

# ---- 5. file names -------------------------------------------------------------
long=$(printf 'x%.0s' $(seq 240))
spec_with "$WORK/names.yaml" "data: {path: d.csv}" "models:" \
    "  - {id: a/b, response: strength_mpa, terms: [age_days]}" \
    "  - {id: A_b, response: strength_mpa, terms: [age_days]}" \
    "  - {id: $long, response: strength_mpa}"
expect_exit 2 "$FITPROOF" lint "$WORK/names.yaml"
expect_stderr "$WORK/names.yaml:5:10: error: model ids 'a/b' (line 4) and 'A_b' would name the same files, since file names keep only letters, digits, '-', '_' and '.' and ignore case; choose ids that differ in those
$WORK/names.yaml:6:10: error: model id 'xxxxxxxxxxxxxxxxxxxx…' is 240 bytes long; the id names the model's files, so it may have at most 64"
# A 64-byte id builds, and every file name in the manifest is listed once.
spec_with "$WORK/ok.yaml" "data: {path: d.csv}" "models:" \
    "  - {id: a/b, response: strength_mpa, terms: [age_days]}" \
    "  - {id: $(printf 'y%.0s' $(seq 64)), response: strength_mpa}"
expect_exit 0 "$FITPROOF" build "$WORK/ok.yaml" -o "$WORK/ok-report"
[ -z "$(grep '"file":' "$WORK/ok-report/manifest.json" | sort | uniq -d)" ] || fail "a file listed twice"
pass
expect_exit 0 "$FITPROOF" verify "$WORK/ok-report"
for name in report.md results.json manifest.json report.html; do
    cp "$WORK/ok.yaml" "$WORK/$name"
    expect_exit 2 "$FITPROOF" lint "$WORK/$name"
    expect_stderr "$WORK/$name: error: the report archives the spec under its own name, and '$name' is the name of a file of the report; rename the spec, for instance to analysis.yaml"
done
finish
