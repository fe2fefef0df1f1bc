# End to end: warnings are a class of their own. For every case under
# tests/warnings/: lint and build exit 0 and print exactly the expected
# warnings on stderr (build before saying where it wrote), the report's
# appendix lists them, and --strict makes them errors for both commands
# (exit 2, the expected strict messages, nothing written).
. "$(dirname "$0")/lib.sh"

binary=$(cd "$(dirname "$FITPROOF")" && pwd)/$(basename "$FITPROOF")
cases=0
for dir in tests/warnings/*/; do
    name=$(basename "$dir")
    rm -rf "$WORK/case" && cp -R "$dir" "$WORK/case"
    cd "$WORK/case" || fail "$name: no folder"
    expect_exit 0 "$binary" lint spec.yaml
    cmp -s "$WORK/err" expected.txt || fail "$name: lint: $(diff expected.txt "$WORK/err")"
    [ -s expected.txt ] || fail "$name: no warning expected"
    n=$(wc -l <expected.txt)
    grep -q "; $n warnings\{0,1\} on standard error\$" "$WORK/out" || fail "$name: lint's summary: $(cat "$WORK/out")"
    expect_exit 0 "$binary" build spec.yaml -o out
    { cat expected.txt; echo "fitproof: wrote out/"; } >"$WORK/want"
    cmp -s "$WORK/err" "$WORK/want" || fail "$name: build: $(diff "$WORK/want" "$WORK/err")"
    while IFS= read -r line; do
        grep -qxF "$line" out/report.md || fail "$name: the report's appendix lacks: $line"
    done <expected.txt
    grep -q '^### Warnings$' out/report.md || fail "$name: no Warnings heading in the appendix"
    expect_exit 0 "$binary" verify out
    rm -rf out
    expect_exit 2 "$binary" lint --strict spec.yaml
    cmp -s "$WORK/err" expected-strict.txt || fail "$name: lint --strict: $(diff expected-strict.txt "$WORK/err")"
    expect_exit 2 "$binary" build --strict spec.yaml -o out
    cmp -s "$WORK/err" expected-strict.txt || fail "$name: build --strict: $(diff expected-strict.txt "$WORK/err")"
    [ ! -e out ] || fail "$name: build --strict wrote a folder"
    cd - >/dev/null || exit 1
    cases=$((cases + 1))
done
[ "$cases" -ge 5 ] || fail "only $cases warning cases under tests/warnings"

# A spec without likely mistakes prints no warning, and --strict changes nothing.
cd examples/cylinders || fail "no example"
expect_exit 0 "$binary" lint --strict cylinders.yaml
[ ! -s "$WORK/err" ] || fail "the example warns: $(cat "$WORK/err")"
finish
