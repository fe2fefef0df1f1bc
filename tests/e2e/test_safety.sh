# End to end: what the user owns is never lost, and verify cannot be fooled
# (issue 11). A folder is replaced only when its manifest is fitproof's and
# lists everything it holds, never when it holds the spec or its data;
# verify rebuilds on the data the archived spec names, compares the
# manifest and lists files the build does not make; a write past the file
# size limit is a clean error that leaves the old report in place; builds
# of one folder at once take turns.
. "$(dirname "$0")/lib.sh"

F=$(cd "$(dirname "$FITPROOF")" && pwd)/$(basename "$FITPROOF")
mkdir "$WORK/proj"
cp examples/cylinders/cylinders.csv examples/cylinders/cylinders.yaml "$WORK/proj/"
# The data kept outside the folder (test_portable.sh covers a stored copy).
printf 'report:\n  archive_data: false\n' >>"$WORK/proj/cylinders.yaml"
echo "my notes" >"$WORK/proj/notes.txt"

# ---- 1. whose folder ------------------------------------------------------
# A web app's manifest.json does not make a project folder fitproof's, and
# -o may not name the folder holding the spec and the data (nor one above).
echo '{"name": "web app"}' >"$WORK/proj/manifest.json"
for out in "$WORK/proj" "$WORK/proj/" "$WORK/proj/." "$WORK"; do
    expect_exit 2 "$F" build "$WORK/proj/cylinders.yaml" -o "$out"
    grep -q "error: this folder holds '$WORK/proj/cylinders.yaml', which the build reads; choose a folder for the report that holds neither the spec nor its data, with -o" "$WORK/err" ||
        fail "-o $out: $(cat "$WORK/err")"
    pass
done
(cd "$WORK/proj" && "$F" build cylinders.yaml -o ../proj >/dev/null 2>&1)
[ $? -eq 2 ] || fail "-o ../proj from inside the project was not refused"
pass
for file in cylinders.csv cylinders.yaml notes.txt manifest.json; do
    [ -s "$WORK/proj/$file" ] || fail "the project lost $file"
    pass
done

# The data alone is enough: a spec elsewhere, -o naming the data's folder.
mkdir "$WORK/specs"
sed 's|path: cylinders.csv|path: ../proj/cylinders.csv|' "$WORK/proj/cylinders.yaml" >"$WORK/specs/c.yaml"
expect_exit 2 "$F" build "$WORK/specs/c.yaml" -o "$WORK/proj"
expect_stderr "$WORK/proj: error: this folder holds '$WORK/specs/../proj/cylinders.csv', which the build reads; choose a folder for the report that holds neither the spec nor its data, with -o"

# A folder with a forged '{}' manifest, or a fitproof manifest that does
# not list a file the folder holds, is not fitproof's.
mkdir "$WORK/other"
echo '{}' >"$WORK/other/manifest.json"
echo "thesis" >"$WORK/other/thesis.tex"
expect_exit 2 "$F" build "$WORK/proj/cylinders.yaml" -o "$WORK/other"
expect_stderr "$WORK/other: error: this folder exists and was not written by fitproof; choose an empty or new folder with -o"
expect_exit 0 "$F" build "$WORK/proj/cylinders.yaml" -o "$WORK/report"
cp -R "$WORK/report" "$WORK/report-copy"
echo "draft" >"$WORK/report/figures/sketch.txt"
expect_exit 2 "$F" build "$WORK/proj/cylinders.yaml" -o "$WORK/report"
expect_stderr "$WORK/report: error: this folder holds 'figures/sketch.txt', which its manifest.json does not list, so fitproof did not write it; choose an empty or new folder with -o"
[ -s "$WORK/report/figures/sketch.txt" ] || fail "the unlisted file was removed"
pass
rm "$WORK/report/figures/sketch.txt"
# A symbolic link to a report folder, or a file, is not replaced.
ln -s "$WORK/report" "$WORK/link"
expect_exit 2 "$F" build "$WORK/proj/cylinders.yaml" -o "$WORK/link"
expect_stderr "$WORK/link: error: this is a symbolic link; give the folder's own path with -o"
expect_exit 2 "$F" build "$WORK/proj/cylinders.yaml" -o "$WORK/proj/notes.txt"
expect_stderr "$WORK/proj/notes.txt: error: this is a file, not a folder; -o names the folder the report is written into: choose an empty or new folder"
# A report missing one of its files is still fitproof's.
rm "$WORK/report/report.md"
# A report folder fitproof wrote is replaced, and nothing is left beside it.
expect_exit 0 "$F" build "$WORK/proj/cylinders.yaml" -o "$WORK/report"
[ -z "$(ls -d "$WORK"/report.* 2>/dev/null)" ] || fail "staging folders left: $(ls -d "$WORK"/report.*)"
pass

# ---- 2. verify uses the archived spec's data --------------------------------
expect_exit 0 "$F" verify "$WORK/report"
digest=$(sha256sum "$WORK/proj/cylinders.csv" | cut -d' ' -f1)
grep -qxF "  data used: $WORK/report/../proj/cylinders.csv (SHA-256 $digest)" "$WORK/out" ||
    fail "verify did not print the data and digest it used: $(cat "$WORK/out")"
pass
# A report built on 'cleaned' data hidden in the folder, the manifest's
# data path pointed at it: refused (exit 2), whatever the manifest says.
mkdir "$WORK/clean"
cp "$WORK/proj/cylinders.yaml" "$WORK/clean/"
head -n -5 "$WORK/proj/cylinders.csv" >"$WORK/clean/cylinders.csv"
expect_exit 0 "$F" build "$WORK/clean/cylinders.yaml" -o "$WORK/forged"
mv "$WORK/clean/cylinders.csv" "$WORK/forged/.source.csv"
sed -i 's|"path": "../clean/cylinders.csv"|"path": ".source.csv"|' "$WORK/forged/manifest.json"
grep -q '"path": ".source.csv"' "$WORK/forged/manifest.json" || fail "test set-up: data path not forged"
pass
expect_exit 2 "$F" verify "$WORK/forged"
grep -qF "$WORK/forged/.source.csv: error: the data file lies inside the report folder, where no build puts it; verify reads the data the archived spec names, outside the folder" "$WORK/err" ||
    fail "hidden data not refused: $(cat "$WORK/err") $(cat "$WORK/out")"
pass
# The same with the spec folder pointed into the report folder too.
sed -i 's|"folder": "../clean"|"folder": "."|' "$WORK/forged/manifest.json"
mv "$WORK/forged/.source.csv" "$WORK/forged/cylinders.csv"
expect_exit 2 "$F" verify "$WORK/forged"
grep -q "error: the data file lies inside the report folder" "$WORK/err" || fail "data beside the archived spec accepted"
pass
# The manifest pointed at other data outside the folder: the archived
# spec's own path is used, and the disagreement is a difference.
rm -rf "$WORK/forged" && cp -R "$WORK/report-copy" "$WORK/forged"
cp "$WORK/proj/cylinders.csv" "$WORK/elsewhere.csv"
sed -i 's|"path": "../proj/cylinders.csv"|"path": "../elsewhere.csv"|' "$WORK/forged/manifest.json"
expect_exit 1 "$F" verify "$WORK/forged"
grep -qF "  manifest.json: names the data ../elsewhere.csv, but the archived spec's data path leads to $WORK/forged/../proj/cylinders.csv" "$WORK/out" ||
    fail "data path disagreement not reported: $(cat "$WORK/out")"
pass
grep -qF "data used: $WORK/forged/../proj/cylinders.csv" "$WORK/out" || fail "verify used the manifest's data"
pass

# A page template hidden in the report folder is refused the same way.
mkdir "$WORK/tp"
cp templates/report.html "$WORK/tp/page.html"
printf 'fitproof: 1\ndata: {path: %s}\nreport: {template: page.html}\nmodels: [{id: m, response: strength_mpa}]\n' \
    "$WORK/proj/cylinders.csv" >"$WORK/tp/s.yaml"
expect_exit 0 "$F" build "$WORK/tp/s.yaml" -o "$WORK/tpr"
expect_exit 0 "$F" verify "$WORK/tpr"
page_digest=$(sha256sum "$WORK/tp/page.html" | cut -d' ' -f1)
grep -qxF "  page template used: $WORK/tpr/../tp/page.html (SHA-256 $page_digest)" "$WORK/out" ||
    fail "verify did not print the template it used: $(cat "$WORK/out")"
pass
mv "$WORK/tp/page.html" "$WORK/tpr/page.html"
sed -i 's|"folder": "../tp"|"folder": "."|; s|"path": "../tp/page.html"|"path": "page.html"|' "$WORK/tpr/manifest.json"
expect_exit 2 "$F" verify "$WORK/tpr"
expect_stderr "$WORK/tpr/./page.html: error: the page template lies inside the report folder, where no build puts it; verify reads the template the archived spec names, outside the folder"

# ---- 3. the manifest and extra files -----------------------------------------
forge() { # forge SED-EXPRESSION: a copy of the good report with its manifest edited
    rm -rf "$WORK/forged" && cp -R "$WORK/report-copy" "$WORK/forged"
    sed -i "$1" "$WORK/forged/manifest.json"
    cmp -s "$WORK/forged/manifest.json" "$WORK/report-copy/manifest.json" && fail "test set-up: $1 changed nothing"
}
md_digest=$(sha256sum "$WORK/report-copy/report.md" | cut -d' ' -f1)
forge "s/$md_digest/$(printf '0%.0s' $(seq 64))/"
expect_exit 1 "$F" verify "$WORK/forged"
grep -qxF "  manifest.json: its digest or size of report.md is not the fresh build's" "$WORK/out" || fail "zeroed digest: $(cat "$WORK/out")"
pass
# An empty list of outputs.
rm -rf "$WORK/forged" && cp -R "$WORK/report-copy" "$WORK/forged"
awk 'BEGIN{skip=0} /"outputs": \[/{print "  \"outputs\": []"; skip=1; next} skip && /^  \]/{skip=0; next} !skip' \
    "$WORK/report-copy/manifest.json" >"$WORK/forged/manifest.json"
grep -q '"outputs": \[\]' "$WORK/forged/manifest.json" || fail "test set-up: outputs not emptied"
pass
expect_exit 1 "$F" verify "$WORK/forged"
grep -qxF "  manifest.json: does not list report.md, which a fresh build makes" "$WORK/out" || fail "empty list: $(cat "$WORK/out")"
pass
# An added entry for payload.exe, and the file itself.
forge '/"outputs": \[/a\    {"file": "payload.exe", "sha256": "'"$md_digest"'", "bytes": 3},'
cp "$WORK/report-copy/report.md" "$WORK/forged/payload.exe"
expect_exit 1 "$F" verify "$WORK/forged"
grep -qxF "  manifest.json: lists payload.exe, which a fresh build does not make" "$WORK/out" || fail "payload entry: $(cat "$WORK/out")"
pass
grep -qxF "  payload.exe: in the folder, but a fresh build does not make it" "$WORK/out" || fail "payload file: $(cat "$WORK/out")"
pass
# An unlisted report-final.html with forged numbers.
rm -rf "$WORK/forged" && cp -R "$WORK/report-copy" "$WORK/forged"
sed 's/[0-9]\.[0-9]/9.9/g' "$WORK/forged/report.html" >"$WORK/forged/report-final.html"
expect_exit 1 "$F" verify "$WORK/forged"
grep -qxF "  report-final.html: in the folder, but a fresh build does not make it" "$WORK/out" || fail "stray file: $(cat "$WORK/out")"
pass
grep -qx "NOT reproduced: the differences are listed above" "$WORK/out" || fail "verify said reproduced"
pass
# A hidden file is a stray file too.
rm "$WORK/forged/report-final.html"
echo x >"$WORK/forged/.notes"
expect_exit 1 "$F" verify "$WORK/forged"
grep -qxF "  .notes: in the folder, but a fresh build does not make it" "$WORK/out" || fail "hidden stray: $(cat "$WORK/out")"
pass
# A manifest entry that reaches outside the folder is damage (exit 2).
forge 's|"file": "report.md"|"file": "../report.md"|'
expect_exit 2 "$F" verify "$WORK/forged"
grep -q "manifest.json: error: the manifest is damaged" "$WORK/err" || fail "../ entry: $(cat "$WORK/err")"
pass

# ---- 6. a file size limit mid-write, and builds at once ------------------------
# RLIMIT_FSIZE of 16 KiB (bash counts 1024-byte blocks): report.html cannot be written. The signal is
# ignored, the write fails, the old report stays and nothing is left.
cp -R "$WORK/report-copy" "$WORK/limited"
(ulimit -f 16 && exec "$F" build "$WORK/proj/cylinders.yaml" -o "$WORK/limited") >"$WORK/out" 2>"$WORK/err"
status=$?
[ "$status" -eq 3 ] || fail "file size limit: exit $status ($(cat "$WORK/err"))"
pass
grep -Eq "^$WORK/limited: error: cannot write [a-z/_.-]+: File too large; nothing was changed$" "$WORK/err" || fail "file size message: $(cat "$WORK/err")"
pass
diff -r "$WORK/report-copy" "$WORK/limited" >/dev/null || fail "the old report changed"
pass
[ -z "$(ls -d "$WORK"/limited.* 2>/dev/null)" ] || fail "partial folder left: $(ls -d "$WORK"/limited.*)"
pass

# Eight builds of one folder at once: every one succeeds, and the folder
# verifies with nothing beside it.
pids=()
for i in 1 2 3 4 5 6 7 8; do
    "$F" build "$WORK/proj/cylinders.yaml" -o "$WORK/shared" >"$WORK/c$i.out" 2>&1 &
    pids+=($!)
done
for i in "${!pids[@]}"; do
    wait "${pids[$i]}" || fail "concurrent build $((i + 1)) failed: $(cat "$WORK/c$((i + 1)).out")"
    pass
done
expect_exit 0 "$F" verify "$WORK/shared"
[ -z "$(ls -d "$WORK"/shared.* 2>/dev/null)" ] || fail "staging left by concurrent builds"
pass
finish
