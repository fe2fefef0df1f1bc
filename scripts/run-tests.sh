#!/usr/bin/env bash
# Runs every test of one build folder (build or build/asan): the cmocka unit
# tests, then the end-to-end tests of the binary. Shows the figures tests
# report as "measured:" lines and the branches they skipped ("skipped:"
# lines: a branch that needs an optional program this machine lacks),
# prints the summary, "N passed, N failed, N skipped" after the list of
# what was skipped and why, and exits non-zero if anything failed.
set -u
build=${1:?usage: run-tests.sh BUILD_DIR}
cd "$(dirname "$0")/.."
passed=0
failed=0
failures=()
skipped=()
# Keeps a log's "skipped: …" lines for the summary.
collect_skips() {
    local line
    while IFS= read -r line; do
        skipped+=("${line#skipped: }")
    done < <(grep -h '^skipped: ' "$1" || true)
}
for test in "$build"/tests/test_*; do
    [ -x "$test" ] || continue
    name=$(basename "$test")
    if "$test" >"$build/$name.log" 2>&1; then
        passed=$((passed + 1))
        # Figures a test measured (accuracy digits) are worth seeing.
        grep -h '^  measured: ' "$build/$name.log" || true
        collect_skips "$build/$name.log"
    else
        failed=$((failed + 1))
        failures+=("$name")
        cat "$build/$name.log"
    fi
done
for test in tests/e2e/test_*.sh; do
    name=$(basename "$test" .sh)
    if FITPROOF="$build/fitproof" bash "$test" >"$build/$name.log" 2>&1; then
        passed=$((passed + 1))
        collect_skips "$build/$name.log"
    else
        failed=$((failed + 1))
        failures+=("$name")
        cat "$build/$name.log"
    fi
done
for item in "${skipped[@]}"; do
    echo "[$build] skipped: $item"
done
[ "$failed" -eq 0 ] || echo "[$build] failed: ${failures[*]}"
echo "tests: $passed passed, $failed failed, ${#skipped[@]} skipped"
[ "$failed" -eq 0 ]
