# End to end: `build --timings` prints each stage's wall time to stderr and
# nothing else changes; without a terminal there is no progress line (no
# carriage return in the log); a narrative number with many decimals of a
# huge value is written whole.
. "$(dirname "$0")/lib.sh"

# (x in half steps: a column of consecutive whole numbers draws the
# row-identifier warning, which would change stderr)
awk 'BEGIN { print "x,y"; for (i = 1; i <= 40; i++) printf "%.1f,%.6e\n", i / 2, 2.8e160 * i + 1e159 * ((i * 7) % 5 - 2) }' \
    >"$WORK/huge.csv"
cat >"$WORK/huge.yaml" <<'YAML'
fitproof: 1
title: A huge response
data: {path: huge.csv}
models:
  - {id: m, response: y, terms: [x]}
report:
  formats: [markdown, json]
  sections:
    - models
    - text: "The slope is @{m.estimate[x]:dp12} a unit, @{m.estimate[x]:int} rounded."
YAML

expect_exit 0 "$FITPROOF" build "$WORK/huge.yaml" -o "$WORK/plain"
expect_stderr "fitproof: wrote $WORK/plain/"
expect_exit 0 "$FITPROOF" build "$WORK/huge.yaml" -o "$WORK/timed" --timings
grep -q '^fitproof: timings (wall seconds; peak resident MB so far)$' "$WORK/err" || fail "no timings header: $(cat "$WORK/err")"
pass
for stage in 'load data' 'fit m' 'diagnostics m' 'figures' 'narrate'; do
    grep -Eq "^ +[0-9]+\.[0-9]{3} +[0-9.]+%  +[1-9][0-9]* MB  .*$stage\$" "$WORK/err" ||
        fail "no time and memory for '$stage': $(cat "$WORK/err")"
    pass
done
grep -Eq "^ +[0-9]+\.[0-9]{3}  total\$" "$WORK/err" || fail "no total"
pass
# each figure on a line of its own, named by model and figure
for figure in quantile_plot influence residual_histogram; do
    grep -Eq "^ +[0-9]+\.[0-9]{3} +[0-9.]+%  +[1-9][0-9]* MB  figure m: $figure\$" "$WORK/err" ||
        fail "no time for figure $figure: $(cat "$WORK/err")"
    pass
done
[ -s "$WORK/out" ] && fail "stdout not empty: $(cat "$WORK/out")"
pass
grep -q $'\r' "$WORK/err" && fail "a progress line reached a log that is not a terminal"
pass
for file in report.md results.json; do
    cmp -s "$WORK/plain/$file" "$WORK/timed/$file" || fail "--timings changed $file"
    pass
done

# 2.8e160 with 12 decimals: 161 integer digits, the point, 12 decimals.
grep -Eq 'The slope is [0-9]{161}\.[0-9]{12} a unit, [0-9]{161} rounded\.' \
    "$WORK/plain/report.md" || fail "huge value cut: $(grep -o 'The slope is.*' "$WORK/plain/report.md")"
pass
finish
