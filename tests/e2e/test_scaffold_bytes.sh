# End to end: scaffold's output is valid YAML that lints cleanly against
# its file, whatever bytes the header and the levels hold: U+2028 and
# U+2029 (line breaks to YAML 1.1), U+FFFE and U+FFFF (not printable), a
# byte-order mark or C1 control inside a name, quotes, YAML indicators,
# leading blanks, a line break inside a quoted name, names of 10 000
# characters (longer than an implicit YAML key may be), long levels.
. "$(dirname "$0")/lib.sh"

FITPROOF_ABS=$(cd "$(dirname "$FITPROOF")" && pwd)/$(basename "$FITPROOF")
cd "$WORK" || exit 1
long=$(printf '%10000s' '' | tr ' ' 'n')
level=$(printf '%2000s' '' | tr ' ' 'L')
# Header names, one per line, as printf escapes.
names='a\xe2\x80\xa8b
c\xe2\x80\xa9d
e\xef\xbf\xbef
g\xef\xbf\xbfh
bom\xef\xbb\xbfx
nel\xc2\x85x
ctl\x01x
q""uote
col: on
#hash
-dash
? q
&amp
*star
!bang
%pct
@at
`tick
tab\there
 lead
trail 
[br
{cb
|pipe
>gt
,comma
cr\r\nlf
yes
null
~
'"$long"'
grp'
header=$(printf '%s\n' "$names" | while IFS= read -r n; do printf '"%s",' "$n"; done)
{
    printf '%by\n' "$header"
    for i in 1 2 3 4 5 6 7 8; do
        for j in $(seq 1 32); do printf '%d,' $(( (i * (j + 3)) % 7 + j )); done
        case $i in 1 | 4 | 8) printf '"p\xe2\x80\xa8q",' ;; 2 | 5) printf '"r\xef\xbf\xbes",' ;; 3 | 6) printf '"%s",' "$level" ;; *) printf '"t\xe2\x80\xa9u",' ;; esac
        printf '%d.5\n' "$i"
    done
} >weird.csv
# The last name column ("grp") is replaced by the levels column above: drop
# its numbers so that every row has as many fields as the header.
awk -F, 'NR == 1 { print; next } { n = split($0, f, ","); out = ""; for (k = 1; k <= n; k++) if (k != 32) out = out (out == "" ? "" : ",") f[k]; print out }' weird.csv >w.csv && mv w.csv weird.csv

expect_exit 0 "$FITPROOF_ABS" scaffold weird.csv
cp "$WORK/out" weird.yaml
expect_exit 0 "$FITPROOF_ABS" lint weird.yaml
grep -q '^fitproof: weird.yaml is ready to build: 8 rows of weird.csv, 33 columns (32 numeric, 1 category), 1 model$' "$WORK/out" ||
    fail "scaffold of odd names does not lint as expected: $(cat "$WORK/out" "$WORK/err")"
pass
grep -q '^    ? n\{10000\}$' weird.yaml || fail "the 10 000-character name is not an explicit key"
grep -q '"a\\u2028b"' weird.yaml || fail "U+2028 is not escaped"
grep -q '"e\\uFFFEf"' weird.yaml || fail "U+FFFE is not escaped"
pass
finish
