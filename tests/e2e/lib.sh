# Helpers for the end-to-end tests. Each test script sources this, runs the
# binary named by $FITPROOF and calls `fail` on the first wrong result.
set -u
FITPROOF=${FITPROOF:-build/fitproof}
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT
checks=0

fail() {
    echo "FAIL: $*" >&2
    exit 1
}

pass() {
    checks=$((checks + 1))
}

# expect_exit STATUS COMMAND...: runs COMMAND, keeping stdout and stderr in
# $WORK/out and $WORK/err, and fails unless it exits with STATUS.
expect_exit() {
    local want=$1
    shift
    "$@" >"$WORK/out" 2>"$WORK/err"
    local got=$?
    [ "$got" -eq "$want" ] || fail "expected exit $want, got $got from: $* ($(cat "$WORK/err"))"
    pass
}

# expect_stderr TEXT: the last command's stderr is exactly TEXT.
expect_stderr() {
    [ "$(cat "$WORK/err")" = "$1" ] || fail "stderr was: $(cat "$WORK/err") -- expected: $1"
    pass
}

finish() {
    echo "$(basename "$0"): $checks checks passed"
}
