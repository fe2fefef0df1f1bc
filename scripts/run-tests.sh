#!/usr/bin/env bash
# Runs every test of one build folder (build or build/asan): the cmocka unit
# tests, then the end-to-end tests of the binary. Shows the figures tests
# report as "measured:" lines, prints one summary line,
# "N passed, N failed", and exits non-zero if anything failed.
set -u
build=${1:?usage: run-tests.sh BUILD_DIR}
cd "$(dirname "$0")/.."
passed=0
failed=0
failures=()
for test in "$build"/tests/test_*; do
    [ -x "$test" ] || continue
    name=$(basename "$test")
    if "$test" >"$build/$name.log" 2>&1; then
        passed=$((passed + 1))
        # Figures a test measured (accuracy digits) are worth seeing.
        grep -h '^  measured: ' "$build/$name.log" || true
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
    else
        failed=$((failed + 1))
        failures+=("$name")
        cat "$build/$name.log"
    fi
done
echo "[$build] ${failures[*]:+failed: ${failures[*]}}"
echo "tests: $passed passed, $failed failed"
[ "$failed" -eq 0 ]
