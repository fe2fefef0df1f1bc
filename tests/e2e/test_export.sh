# End to end: PDF and DOCX go through pandoc (and PDF through pdflatex).
# Both branches run on every machine: without the programs (a PATH from
# which they are removed, whatever is installed), lint and build refuse
# with the same located message before writing anything; with them (when
# installed; skipped by name otherwise), the exports are made and are
# byte-reproducible.
. "$(dirname "$0")/lib.sh"

binary=$(cd "$(dirname "$FITPROOF")" && pwd)/$(basename "$FITPROOF")
mkdir "$WORK/lab"
cp examples/cylinders/cylinders.csv examples/cylinders/cylinders.yaml "$WORK/lab/"
spec=$WORK/lab/cylinders.yaml
printf 'report:\n  formats: [markdown, docx]\n' >>"$spec"
at=$(position_of "$spec" '[markdown, docx]')
missing_pandoc="$spec:$at: error: report.formats asks for docx, which fitproof makes with pandoc, and pandoc is not installed; install it (Debian package pandoc) or remove docx"

# Absent: pandoc hidden from the PATH.
no_pandoc=$(path_without pandoc)
expect_exit 2 env PATH="$no_pandoc" "$binary" build "$spec" -o "$WORK/a"
expect_stderr "$missing_pandoc"
[ ! -e "$WORK/a" ] || fail "a folder was written without pandoc"
pass
# lint refuses what build would refuse, with the same message.
expect_exit 2 env PATH="$no_pandoc" "$binary" lint "$spec"
expect_stderr "$missing_pandoc"
[ ! -s "$WORK/out" ] || fail "lint said ready although build refuses"
pass
# With an empty PATH too (nothing at all on it).
expect_exit 2 env PATH=/nonexistent "$binary" lint "$spec"
expect_stderr "$missing_pandoc"

# Absent pdflatex, present pandoc: a stand-in pandoc on a PATH without
# pdflatex (the check happens before pandoc would run).
mkdir "$WORK/stand-in"
printf '#!/bin/sh\nexit 1\n' >"$WORK/stand-in/pandoc"
chmod +x "$WORK/stand-in/pandoc"
no_latex=$WORK/stand-in:$(path_without pandoc pdflatex)
sed -i 's/formats: \[markdown, docx\]/formats: [markdown, pdf]/' "$spec"
at=$(position_of "$spec" '[markdown, pdf]')
missing_latex="$spec:$at: error: report.formats asks for pdf, which pandoc makes with pdflatex, and pdflatex is not installed; install it (Debian package texlive-latex-recommended) or remove pdf"
expect_exit 2 env PATH="$no_latex" "$binary" build "$spec" -o "$WORK/a"
expect_stderr "$missing_latex"
expect_exit 2 env PATH="$no_latex" "$binary" lint "$spec"
expect_stderr "$missing_latex"
[ ! -e "$WORK/a" ] || fail "a folder was written without pdflatex"
pass
sed -i 's/formats: \[markdown, pdf\]/formats: [markdown, docx]/' "$spec"

# Present: the real pandoc.
if command -v pandoc >/dev/null; then
    expect_exit 0 "$binary" lint "$spec"
    grep -q 'is ready to build' "$WORK/out" || fail "lint refused although pandoc is installed"
    pass
    expect_exit 0 "$binary" build "$spec" -o "$WORK/a"
    [ -s "$WORK/a/report.docx" ] || fail "no report.docx"
    pass
    grep -q '"file": "report.docx"' "$WORK/a/manifest.json" || fail "docx not in the manifest"
    pass
    expect_exit 0 "$binary" build "$spec" -o "$WORK/b"
    cmp -s "$WORK/a/report.docx" "$WORK/b/report.docx" || fail "two docx builds differ"
    pass
else
    skip "docx through the real pandoc" "pandoc is not installed"
fi
finish
