# End to end: every malformed input under tests/bad/ is refused with its
# exact message and exit status 2, and no output folder is created.
# Each case is a folder holding spec.yaml, its data and expected.txt (the
# exact standard error, as seen when the build runs inside the folder);
# lint must print the same message.
. "$(dirname "$0")/lib.sh"

binary=$(cd "$(dirname "$FITPROOF")" && pwd)/$(basename "$FITPROOF")
cases=0
for dir in tests/bad/*/; do
    name=$(basename "$dir")
    [ -f "$dir/expected.txt" ] || fail "$name: no expected.txt"
    rm -rf "$WORK/case" && cp -R "$dir" "$WORK/case"
    (cd "$WORK/case" && "$binary" build spec.yaml -o out >"$WORK/out" 2>"$WORK/err")
    status=$?
    [ "$status" -eq 2 ] || fail "$name: exit $status, expected 2 ($(cat "$WORK/err"))"
    if ! cmp -s "$WORK/err" "$dir/expected.txt"; then
        diff "$dir/expected.txt" "$WORK/err" >&2
        fail "$name: message differs"
    fi
    [ ! -e "$WORK/case/out" ] || fail "$name: an output folder was created"
    # lint must refuse the same input with the same message.
    (cd "$WORK/case" && "$binary" lint spec.yaml >"$WORK/out" 2>"$WORK/err")
    status=$?
    [ "$status" -eq 2 ] || fail "$name: lint exit $status, expected 2"
    cmp -s "$WORK/err" "$dir/expected.txt" || fail "$name: lint message differs"
    cases=$((cases + 1))
    pass
done
[ "$cases" -ge 40 ] || fail "only $cases malformed inputs under tests/bad (at least 40 expected)"
finish
