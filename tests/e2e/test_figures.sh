# End to end: the SVG figures. Every figure of the example is well-formed
# XML (xmllint) and renders (rsvg-convert, Debian librsvg2-bin); one mark per
# row; the same bytes on a second build and under a German locale; above
# the point threshold the scatter plots become hexagonal bins, every file
# under 1 MB; report.figures chooses the figures; user text is escaped.
. "$(dirname "$0")/lib.sh"

figures="response_by_predictor residuals_by_fitted quantile_plot spread_by_fitted
influence residual_histogram coefficient_intervals observed_by_predicted"

# well_formed_and_renders FILE: xmllint accepts it and rsvg-convert makes a PNG.
well_formed_and_renders() {
    xmllint --noout "$1" 2>"$WORK/xmllint.err" || fail "not well-formed XML: $1 ($(cat "$WORK/xmllint.err"))"
    rsvg-convert "$1" -o "$WORK/render.png" 2>"$WORK/rsvg.err" || fail "does not render: $1 ($(cat "$WORK/rsvg.err"))"
    [ "$(head -c 8 "$WORK/render.png" | od -An -tx1 | tr -d ' \n')" = 89504e470d0a1a0a ] ||
        fail "rsvg-convert wrote no PNG for $1"
    pass
}

# marks FILE: the number of point marks (vertices of the data polylines).
marks() {
    { grep -o '<polyline points="[^"]*"' "$1" || true; } | tr ' ' '\n' | grep -c ',' || true
}

# binned_rows FILE: the rows held by the hexagons (the sum of their data-n).
binned_rows() {
    { grep -o 'data-n="[0-9]*"' "$1" || true; } | tr -dc '0-9\n' | awk '{ s += $1 } END { print s + 0 }'
}

spec=examples/cylinders/cylinders.yaml
expect_exit 0 "$FITPROOF" build "$spec" -o "$WORK/a"
for name in $figures; do
    file="$WORK/a/figures/main-$name.svg"
    [ -s "$file" ] || fail "missing figures/main-$name.svg"
    well_formed_and_renders "$file"
done

# Every figure of the three committed example reports: well-formed, titled,
# renders.
for file in examples/*/*-report/figures/*.svg; do
    well_formed_and_renders "$file"
    grep -q '<title id="[^"]*">[^<]' "$file" || fail "no title in $file"
    pass
done
[ "$(ls examples/tablets/tablets-report/figures | grep -c residuals_in_order)" -eq 1 ] ||
    fail "tablets (order_by) has no figure along the run"

# One mark per row used (results.json), in each panel of the first figure.
used=$(sed -n 's/^ *"n_used": \([0-9]*\),$/\1/p' "$WORK/a/results.json")
[ "$used" -gt 100 ] || fail "could not read n_used"
[ "$(marks "$WORK/a/figures/main-response_by_predictor.svg")" -eq $((2 * used)) ] ||
    fail "response_by_predictor: expected $((2 * used)) marks"
pass
for name in residuals_by_fitted quantile_plot observed_by_predicted; do
    [ "$(marks "$WORK/a/figures/main-$name.svg")" -eq "$used" ] || fail "$name: expected $used marks"
    pass
done
# The influence figure: one circle per row (area by Cook's distance).
[ "$(grep -c '^<circle .*fill-opacity' "$WORK/a/figures/main-influence.svg")" -ge "$used" ] ||
    fail "influence: expected a circle per row"
pass
[ "$(binned_rows "$WORK/a/figures/main-residual_histogram.svg")" -eq "$used" ] ||
    fail "the histogram's bars do not hold $used rows"
pass

# Same bytes again, and under a German locale (decimal comma) and another
# time zone: fitproof never reads the locale.
locale -a | grep -qi '^de_DE\.utf-\?8$' || fail "locale de_DE.UTF-8 missing (Debian locales-all)"
expect_exit 0 "$FITPROOF" build "$spec" -o "$WORK/b"
expect_exit 0 env LC_ALL=de_DE.UTF-8 LANG=de_DE.UTF-8 TZ=Pacific/Auckland \
    "$FITPROOF" build "$spec" -o "$WORK/c"
for name in $figures; do
    cmp -s "$WORK/a/figures/main-$name.svg" "$WORK/b/figures/main-$name.svg" ||
        fail "$name differs between two builds"
    cmp -s "$WORK/a/figures/main-$name.svg" "$WORK/c/figures/main-$name.svg" ||
        fail "$name differs under LC_ALL=de_DE.UTF-8"
    pass
done

# Large data: 25 000 rows (invented, Park–Miller generator so every awk
# gives the same file) put the scatter plots above the 20 000-point
# threshold.
mkdir -p "$WORK/large"
awk 'BEGIN {
    s = 12345
    print "load,grade,deflection"
    for (i = 0; i < 25000; i++) {
        s = (s * 16807) % 2147483647; x = 100 * s / 2147483647
        s = (s * 16807) % 2147483647; g = s / 2147483647 < 0.4 ? "premium" : "standard"
        s = (s * 16807) % 2147483647; e = (s / 2147483647 - 0.5) * (2 + 0.1 * x)
        printf "%.4f,%s,%.4f\n", x, g, 20 + 0.3 * x + (g == "premium" ? 4 : 0) + e
    }
}' >"$WORK/large/beams.csv"
cat >"$WORK/large/beams.yaml" <<'EOF'
fitproof: 1
title: Beam deflection
data:
  path: beams.csv
  columns:
    deflection: {kind: numeric, unit: mm}
models:
  - id: main
    response: deflection
    terms: [load, grade, [load, grade]]
EOF
expect_exit 0 "$FITPROOF" build "$WORK/large/beams.yaml" -o "$WORK/large/out"
for name in $figures; do
    file="$WORK/large/out/figures/main-$name.svg"
    well_formed_and_renders "$file"
    [ "$(wc -c <"$file")" -lt 1000000 ] || fail "$name is 1 MB or more at 25 000 rows"
    pass
done
for name in residuals_by_fitted quantile_plot influence observed_by_predicted; do
    file="$WORK/large/out/figures/main-$name.svg"
    [ "$(marks "$file")" -eq 0 ] || fail "$name still draws one mark per row above the threshold"
    [ "$(binned_rows "$file")" -eq 25000 ] || fail "$name: the hexagons do not hold 25000 rows"
    pass
done

# Captions say how the figures were drawn at this size: hexagons, not points.
grep -q 'each hexagon is shaded by how many rows' "$WORK/large/out/report.md" ||
    fail "no caption at 25 000 rows says the rows are binned"
! grep -q 'Each point is one row' "$WORK/large/out/report.md" ||
    fail "a hexagon-bin caption at 25 000 rows still says each point is one row"
pass

# report.figures chooses which figures are written.
mkdir -p "$WORK/pick"
cp examples/cylinders/cylinders.csv "$WORK/pick/"
{ cat "$spec"; printf 'report:\n  figures: [influence, quantile_plot]\n'; } >"$WORK/pick/pick.yaml"
expect_exit 0 "$FITPROOF" build "$WORK/pick/pick.yaml" -o "$WORK/pick/out"
[ "$(ls "$WORK/pick/out/figures" | tr '\n' ' ')" = "main-influence.svg main-quantile_plot.svg " ] ||
    fail "report.figures not honoured: $(ls "$WORK/pick/out/figures")"
pass

# Column names, levels and the model id come from users: escaped, still XML.
mkdir -p "$WORK/names"
{
    printf '"a<b",grp,y\n'
    for i in 1 2 3 4 5 6 7 8 9 10 11 12; do
        level='"<i>&""q""'"'"'"'
        [ $((i % 2)) -eq 0 ] && level=plain
        printf '%s,%s,%s\n' "$i" "$level" "$((i * 3 + i % 5))"
    done
} >"$WORK/names/odd.csv"
cat >"$WORK/names/odd.yaml" <<'EOF'
fitproof: 1
data:
  path: odd.csv
  columns:
    y: {label: 'yield <&> "so-called"', unit: '<u>'}
models:
  - id: 'odd id/../x'
    response: y
    terms: ['a<b', grp, ['a<b', grp]]
EOF
expect_exit 0 "$FITPROOF" build "$WORK/names/odd.yaml" -o "$WORK/names/out"
[ "$(ls "$WORK/names/out/figures" | wc -l)" -eq 8 ] || fail "expected 8 figures for odd names"
for file in "$WORK/names/out/figures/"*.svg; do
    well_formed_and_renders "$file"
done
finish
