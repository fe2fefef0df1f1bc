# End to end: PDF and DOCX go through pandoc when it is installed; without
# it the build stops before writing anything, naming the missing program.
. "$(dirname "$0")/lib.sh"

mkdir "$WORK/lab"
cp examples/cylinders/cylinders.csv examples/cylinders/cylinders.yaml "$WORK/lab/"
printf 'report:\n  formats: [markdown, docx]\n' >>"$WORK/lab/cylinders.yaml"
if command -v pandoc >/dev/null; then
    expect_exit 0 "$FITPROOF" build "$WORK/lab/cylinders.yaml" -o "$WORK/a"
    [ -s "$WORK/a/report.docx" ] || fail "no report.docx"
    pass
    grep -q '"file": "report.docx"' "$WORK/a/manifest.json" || fail "docx not in the manifest"
    pass
    expect_exit 0 "$FITPROOF" build "$WORK/lab/cylinders.yaml" -o "$WORK/b"
    cmp -s "$WORK/a/report.docx" "$WORK/b/report.docx" || fail "two docx builds differ"
    pass
else
    expect_exit 2 "$FITPROOF" build "$WORK/lab/cylinders.yaml" -o "$WORK/a"
    expect_stderr "$WORK/lab/cylinders.yaml:18:12: error: report.formats asks for docx, which fitproof makes with pandoc, and pandoc is not installed; install it (Debian package pandoc) or remove docx"
    [ ! -e "$WORK/a" ] || fail "a folder was written"
    pass
fi
# Without pandoc on the path, whatever this machine has.
expect_exit 2 env PATH=/nonexistent "$(cd "$(dirname "$FITPROOF")" && pwd)/$(basename "$FITPROOF")" \
    build "$WORK/lab/cylinders.yaml" -o "$WORK/c"
grep -q "pandoc is not installed" "$WORK/err" || fail "missing pandoc not named"
pass
finish
