# End to end: a date column is the count of days from its origin. The
# same rows with the dates written as ISO 8601 text and as day counts
# worked out by hand (from 2025-03-01, the earliest date) give the same
# results.json numbers — coefficients, where, order_by and predictions
# (whose dates are written as dates); a named origin and weeks rescale the
# slope exactly (days / 7), and a bad predict date is a located error.
. "$(dirname "$0")/lib.sh"

dir="$WORK/dates"
mkdir "$dir"
{
    echo "started,temperature,yield"
    echo "2025-03-03,20.5,71.2"
    echo "2025-03-01,21.0,70.1"
    echo "2025-03-07,19.5,74.9"
    echo "2025-03-10T02:00:00+02:00,22.5,77.0"
    echo "2025-03-12,20.0,79.3"
    echo "2025-03-15,21.5,81.8"
    echo "2025-03-20,23.0,85.1"
} >"$dir/dates.csv"
# 2025-03-10T02:00+02:00 is midnight UTC: 9 days after the origin, exactly.
{
    echo "started,temperature,yield"
    echo "2,20.5,71.2"
    echo "0,21.0,70.1"
    echo "6,19.5,74.9"
    echo "9,22.5,77.0"
    echo "11,20.0,79.3"
    echo "14,21.5,81.8"
    echo "19,23.0,85.1"
} >"$dir/days.csv"
spec() { # FILE KIND WHERE PREDICT
    printf 'fitproof: 1\ndata:\n  path: %s\n  columns: {started: {%s}}\nwhere: {column: started, below: %s}\nmodels:\n  - {id: m, response: yield, terms: [started, temperature], order_by: started}\npredict:\n  - model: m\n    rows: [{started: %s, temperature: 21}]\n' \
        "$1" "$2" "$3" "$4"
}
spec dates.csv "kind: date" 2025-03-20 2025-03-11 >"$dir/dates.yaml"
spec days.csv "kind: numeric, unit: day" 19 10 >"$dir/days.yaml"
expect_exit 0 "$FITPROOF" build "$dir/dates.yaml" -o "$dir/a"
expect_exit 0 "$FITPROOF" build "$dir/days.yaml" -o "$dir/b"
# (The prediction row's value is echoed as written: a date, or 10.)
drop='"path"\|"sha256"\|"started": "\|"kind": "\|"origin": "\|"unit": "'
diff <(grep -v "$drop" "$dir/a/results.json") <(grep -v "$drop" "$dir/b/results.json") \
    >"$WORK/diff" || fail "dates and day counts differ: $(head -20 "$WORK/diff")"
grep -q '"predictions"' "$dir/a/results.json" || fail "no predictions"
pass
grep -q 'removed 1 of them (line 8)' "$dir/a/report.md" || fail "where on a date"
pass
# Weeks from a named origin: the slope per week is 7 times the slope per day.
spec dates.csv "kind: date, unit: week, origin: 2025-02-01" 2025-03-20 2025-03-11 >"$dir/weeks.yaml"
expect_exit 0 "$FITPROOF" build "$dir/weeks.yaml" -o "$dir/c"
grep -q 'Dates in column started are counted in weeks from 2025-02-01\.' "$dir/c/report.md" ||
    fail "weeks: origin not stated"
day=$(grep -A12 '"label": "started"' "$dir/a/results.json" | grep -m1 '"estimate"' | sed 's/.*: //; s/,$//')
week=$(grep -A12 '"label": "started"' "$dir/c/results.json" | grep -m1 '"estimate"' | sed 's/.*: //; s/,$//')
[ -n "$day" ] && [ -n "$week" ] || fail "no slope found"
awk -v d="$day" -v w="$week" 'BEGIN { r = w / (7 * d); exit !(r > 1 - 1e-12 && r < 1 + 1e-12) }' ||
    fail "slope per week $week is not 7 × $day"
pass
spec dates.csv "kind: date" 2025-03-20 11 >"$dir/bad.yaml"
expect_exit 2 "$FITPROOF" build "$dir/bad.yaml" -o "$dir/d"
expect_stderr "$dir/bad.yaml:$(position_of "$dir/bad.yaml" "11, temperature"): error: 'started' holds dates, but '11' is not a date written YYYY-MM-DD (or a date-time with its offset)"
[ ! -e "$dir/d" ] || fail "an output folder was written"
pass
grep -q '"kind": "date",' "$dir/c/results.json" && grep -q '"origin": "2025-02-01",' "$dir/c/results.json" &&
    grep -q '"unit": "week"' "$dir/c/results.json" || fail "results.json does not describe the date column"
pass
finish
