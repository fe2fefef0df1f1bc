# End to end: the rendered reports committed beside the examples are what
# this fitproof builds from their specs and data today (verify rebuilds
# each in memory and compares every file), so a reader who opens them
# without building sees the current output.
. "$(dirname "$0")/lib.sh"

for example in cylinders parcels tablets; do
    folder=examples/$example/$example-report
    [ -s "$folder/report.html" ] || fail "$folder is missing; run make examples"
    expect_exit 0 "$FITPROOF" verify "$folder"
    grep -Eq '^reproduced: all [0-9]+ files are identical' "$WORK/out" ||
        fail "$folder is out of date; run make examples and commit them"
    pass
done
finish
