# End to end: the HTML page is one self-contained file that an HTML parser
# reads without errors, makes no request to any address, and shows every
# hostile string from the data and the spec as text.
. "$(dirname "$0")/lib.sh"

expect_exit 0 "$FITPROOF" build examples/cylinders/cylinders.yaml -o "$WORK/a"
page="$WORK/a/report.html"
xmllint --html --noout "$page" 2>"$WORK/lint" || fail "xmllint failed"
[ ! -s "$WORK/lint" ] || fail "HTML parser errors: $(head -5 "$WORK/lint")"
pass
# No address that a browser would fetch: no src or href to a scheme or a
# file, no @import, no url() in the CSS.
if grep -Eo '(src|href)="[^"#][^"]*"' "$page" | grep -v '^src="data:image/svg+xml;base64,' |
    grep -q .; then
    fail "external reference: $(grep -Eo '(src|href)="[^"#][^"]*"' "$page" | head -3)"
fi
pass
grep -qiE '@import|url\(|<script|<link' "$page" && fail "the page loads something"
pass
grep -q '<div class="toc" role="navigation"' "$page" || fail "no table of contents"
pass
grep -q '@media print' "$page" || fail "no print stylesheet"
pass
grep -q 'name="viewport"' "$page" || fail "not set up for phones"
pass

# Hostile names: a column, a level and a title with markup characters.
mkdir "$WORK/h"
cat >"$WORK/h/d.csv" <<'CSV'
y,"<script>alert(1)</script>",grp
1.5,1,"a&b"
2.5,2,"<i>x</i>"
3.1,3,"a&b"
4.8,4,"<i>x</i>"
5.9,5,"a&b"
6.2,6,"<i>x</i>"
CSV
cat >"$WORK/h/s.yaml" <<'YAML'
fitproof: 1
title: "Q&A <b>bold</b> \"quoted\" *stars* _under_ |pipe|"
data: {path: d.csv}
models:
  - id: m
    response: y
    terms: ["<script>alert(1)</script>", grp]
report:
  sections:
    - {text: "Narrative with <script>x()</script> and ![img](http://example.com/a.png) and [link](http://example.com)."}
    - models
YAML
expect_exit 0 "$FITPROOF" build "$WORK/h/s.yaml" -o "$WORK/hout"
html="$WORK/hout/report.html"
xmllint --html --noout "$html" 2>"$WORK/lint" && [ ! -s "$WORK/lint" ] ||
    fail "hostile page does not parse: $(head -3 "$WORK/lint")"
pass
grep -q '<script' "$html" && fail "a script tag came through"
pass
grep -q '&lt;script&gt;alert(1)&lt;/script&gt;' "$html" || fail "column name not escaped"
pass
grep -q 'Q&amp;A &lt;b&gt;bold&lt;/b&gt; &quot;quoted&quot;' "$html" || fail "title not escaped"
pass
grep -q 'http://example.com/a.png' "$html" && fail "a narrative image would be fetched"
pass
md="$WORK/hout/report.md"
grep -qF '\<script>alert(1)\</script>' "$md" || fail "Markdown did not escape the column name"
pass
grep -qF 'grp = a\&b' "$md" && grep -qF "level '\<i>x\</i>'" "$md" || fail "Markdown did not escape the levels"
pass
grep -qF '"label": "\u003cscript\u003e' "$WORK/hout/results.json" ||
    grep -qF '"label": "<script>alert(1)</script>"' "$WORK/hout/results.json" ||
    fail "JSON label missing"
pass

# A custom page template: used, recorded in the manifest, checked by verify.
mkdir "$WORK/t"
cp examples/cylinders/cylinders.csv "$WORK/t/"
cp examples/cylinders/cylinders.yaml "$WORK/t/lab.yaml"
printf 'report:\n  template: page.html\n' >>"$WORK/t/lab.yaml"
printf '<!DOCTYPE html>\n<html><head><title>{{title}}</title></head>\n<body><p class="house">Northfield house style</p>\n{{body}}</body></html>\n' \
    >"$WORK/t/page.html"
expect_exit 0 "$FITPROOF" build "$WORK/t/lab.yaml" -o "$WORK/t/out"
grep -q '<p class="house">Northfield house style</p>' "$WORK/t/out/report.html" ||
    fail "custom template not used"
pass
grep -q '"path": "../page.html"' "$WORK/t/out/manifest.json" || fail "template not in the manifest"
pass
expect_exit 0 "$FITPROOF" verify "$WORK/t/out"
sed -i 's/house style/house styles/' "$WORK/t/page.html"
expect_exit 1 "$FITPROOF" verify "$WORK/t/out"
grep -q '^  template ../page.html: the page template changed since the build' "$WORK/out" ||
    fail "verify did not name the template"
pass
rm "$WORK/t/page.html"
at=$(position_of "$WORK/t/lab.yaml" 'page.html')
no_template="$WORK/t/lab.yaml:$at: error: cannot read the page template '$WORK/t/page.html': No such file or directory; the path is relative to the spec's folder"
expect_exit 2 "$FITPROOF" build "$WORK/t/lab.yaml" -o "$WORK/t/out2"
expect_stderr "$no_template"
# lint refuses it too, with the same message.
expect_exit 2 "$FITPROOF" lint "$WORK/t/lab.yaml"
expect_stderr "$no_template"
printf '<html><body>no placeholder</body></html>\n' >"$WORK/t/page.html"
expect_exit 2 "$FITPROOF" build "$WORK/t/lab.yaml" -o "$WORK/t/out2"
grep -q 'has no {{body}} placeholder' "$WORK/err" || fail "template without body accepted"
pass
expect_exit 2 "$FITPROOF" lint "$WORK/t/lab.yaml"
grep -q 'has no {{body}} placeholder' "$WORK/err" || fail "lint accepted a template without body"
pass
finish
