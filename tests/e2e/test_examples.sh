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

# The examples re-read as a signer would (issue 12): sentences that must be
# there, and claims that must not.
has() { grep -Fq -- "$2" "examples/$1/$1-report/report.md" || fail "$1: missing \"$2\""; pass; }
# Only the client text: the appendix for the analyst and the spec may name keys.
hasnt() {
    sed '/^### For the analyst/,$d' "examples/$1/$1-report/report.md" >"$WORK/client"
    ! grep -Fq -- "$2" "$WORK/client" || fail "$1: must not say \"$2\""
    pass
}
# Per-level slopes of curing age, 0.157 and 0.207 MPa/day (b_age + b_age×level).
has cylinders "0.1573 MPa higher on average"
has cylinders "0.2070 MPa higher on average"
has cylinders "where curing age is 7 day; 3.530 MPa higher on average"
has cylinders "2.950 to 3.468 MPa lower"
hasnt cylinders ": holds."
hasnt cylinders "d = 2.017"
hasnt cylinders "The effect of"
has cylinders "Counts of the fitted cylinders by admixture: none 43, plasticizer 47, superplasticizer 57."
has tablets "**Caveat.** The independence check finds a violation"
has tablets "Standard error (Newey–West)"
has tablets "flagged rows come in runs of three or more"
hasnt tablets "add the missing shape"
has parcels "the natural logarithm of delivery cost"
has parcels "Duan's (1983) smearing factor"
has parcels "Document number:"
hasnt parcels "document_id:"
for example in cylinders parcels tablets; do
    for key in order_by standard_errors residuals_table "transform:"; do
        hasnt $example "$key"
    done
done
finish
