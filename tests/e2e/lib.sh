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

# position_of FILE TEXT: "line:column" of the first occurrence of TEXT in
# FILE (columns count bytes from 1), so that an expected message need not
# pin a position in a file that another change may edit.
position_of() {
    awk -v text="$2" 'index($0, text) { print NR ":" index($0, text); found = 1; exit }
        END { if (!found) exit 1 }' "$1" || fail "'$2' not found in $1"
}

# path_without PROGRAM...: prints a PATH under which none of PROGRAM is
# found, whatever this machine has installed: a folder of links to every
# other program on the current PATH.
path_without() {
    local dir entry name hidden
    hidden=$(mktemp -d "$WORK/path.XXXXXX")
    local IFS=:
    for dir in $PATH; do
        [ -d "$dir" ] || continue
        for entry in "$dir"/*; do
            name=${entry##*/}
            [ -x "$entry" ] && [ ! -d "$entry" ] && [ ! -e "$hidden/$name" ] || continue
            case " $* " in *" $name "*) continue ;; esac
            ln -s "$entry" "$hidden/$name"
        done
    done
    echo "$hidden"
}

# skip WHAT REASON: a branch that needs a program this machine lacks;
# scripts/run-tests.sh lists these lines in its summary.
skip() {
    echo "skipped: $(basename "$0" .sh): $1 ($2)"
}

# print_pdf HTML PDF: headless Chromium's print to PDF of the page at the
# absolute path HTML, without Chromium's own header and footer (the page's
# @page rules write them). Needs chromium (check with command -v first).
print_pdf() {
    local profile
    profile=$(mktemp -d "$WORK/profile.XXXXXX")
    timeout 180 chromium --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
        --disable-background-networking --disable-component-update --disable-sync \
        --user-data-dir="$profile" --print-to-pdf="$2" --no-pdf-header-footer \
        "file://$1" >"$WORK/chromium.log" 2>&1 || fail "chromium could not print $1"
    [ -s "$2" ] || fail "chromium wrote no PDF for $1"
}

finish() {
    echo "$(basename "$0"): $checks checks passed"
}
