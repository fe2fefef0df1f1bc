# End to end: the audit trail. A report folder holds a manifest with the
# digests of its inputs and outputs; verify passes on an untouched folder
# and fails, naming the file, when one byte of the data, the spec or an
# output changes.
. "$(dirname "$0")/lib.sh"

mkdir "$WORK/lab"
cp examples/cylinders/cylinders.csv examples/cylinders/cylinders.yaml "$WORK/lab/"
# The data kept outside the folder (test_portable.sh covers a stored copy).
printf 'report:\n  archive_data: false\n' >>"$WORK/lab/cylinders.yaml"
expect_exit 0 "$FITPROOF" build "$WORK/lab/cylinders.yaml" -o "$WORK/report"
[ -s "$WORK/report/manifest.json" ] || fail "no manifest.json"
pass
digest=$(sha256sum "$WORK/lab/cylinders.csv" | cut -d' ' -f1)
grep -q "\"sha256\": \"$digest\"" "$WORK/report/manifest.json" || fail "data digest not in the manifest"
pass
grep -q '"path": "../lab/cylinders.csv"' "$WORK/report/manifest.json" || fail "data path not relative"
pass
for file in report.md report.html results.json cylinders.yaml; do
    digest=$(sha256sum "$WORK/report/$file" | cut -d' ' -f1)
    grep -q "\"sha256\": \"$digest\"" "$WORK/report/manifest.json" || fail "$file digest missing"
    pass
done

expect_exit 0 "$FITPROOF" verify "$WORK/report"
grep -Eq '^reproduced: all [0-9]+ files are identical' "$WORK/out" || fail "verify did not say reproduced"
pass

# One byte of an output.
cp -R "$WORK/report" "$WORK/copy"
printf 'X' | dd of="$WORK/copy/results.json" bs=1 seek=20 conv=notrunc 2>/dev/null
expect_exit 1 "$FITPROOF" verify "$WORK/copy"
grep -q '^  results.json: differs from a fresh build from line 2 on' "$WORK/out" ||
    fail "verify did not name results.json: $(cat "$WORK/out")"
pass

# One byte of the archived spec.
rm -rf "$WORK/copy" && cp -R "$WORK/report" "$WORK/copy"
sed -i 's/Compressive strength/Compressive Strength/' "$WORK/copy/cylinders.yaml"
expect_exit 1 "$FITPROOF" verify "$WORK/copy"
grep -q '^  cylinders.yaml: the archived spec was changed after the build' "$WORK/out" ||
    fail "verify did not name the spec"
pass

# One byte of the data.
sed -i '2s/^1,/1 ,/' "$WORK/lab/cylinders.csv"
expect_exit 1 "$FITPROOF" verify "$WORK/report"
grep -q '^  data ../lab/cylinders.csv: the data file changed since the build' "$WORK/out" ||
    fail "verify did not name the data file: $(cat "$WORK/out")"
pass

# Not a report folder.
expect_exit 2 "$FITPROOF" verify "$WORK/lab"
grep -q "manifest.json: error: cannot read the manifest" "$WORK/err" || fail "verify message"
pass
finish
