# End to end: fitproof sign writes a detached Ed25519 signature of a report
# folder's manifest, and verify --public-key checks it. Keys are made with
# the openssl command line as docs/audit.md describes. A changed byte in any
# file breaks its digest or the signature, and verify says which.
. "$(dirname "$0")/lib.sh"

openssl genpkey -algorithm ed25519 -out "$WORK/lab-key.pem" 2>/dev/null || fail "openssl genpkey"
openssl pkey -in "$WORK/lab-key.pem" -pubout -out "$WORK/lab-public.pem" || fail "openssl pkey"
openssl genpkey -algorithm ed25519 -out "$WORK/other-key.pem" 2>/dev/null
openssl pkey -in "$WORK/other-key.pem" -pubout -out "$WORK/other-public.pem"
openssl req -new -x509 -key "$WORK/lab-key.pem" -subj "/CN=R. Okafor/O=Elmstead QA" -days 1 \
    -out "$WORK/lab-certificate.pem" 2>/dev/null || fail "openssl req"
openssl genpkey -algorithm rsa -pkeyopt rsa_keygen_bits:1024 -out "$WORK/rsa-key.pem" 2>/dev/null
pass

mkdir "$WORK/lab"
cp examples/cylinders/cylinders.csv examples/cylinders/cylinders.yaml "$WORK/lab/"
expect_exit 0 "$FITPROOF" build "$WORK/lab/cylinders.yaml" -o "$WORK/report"
cp -R "$WORK/report" "$WORK/pristine"

# Signing: the signature file appears; the same key signs the same bytes.
expect_exit 0 "$FITPROOF" sign "$WORK/report" --key "$WORK/lab-key.pem" --signer "R. Okafor, QA statistics"
[ -s "$WORK/report/manifest.sig" ] || fail "no manifest.sig"
pass
grep -q '"signer": "R. Okafor, QA statistics"' "$WORK/report/manifest.sig" || fail "signer not recorded"
pass
cp "$WORK/report/manifest.sig" "$WORK/first.sig"
expect_exit 0 "$FITPROOF" sign "$WORK/report" --key "$WORK/lab-key.pem" --signer "R. Okafor, QA statistics"
cmp -s "$WORK/first.sig" "$WORK/report/manifest.sig" || fail "signing twice gave different bytes"
pass
grep -q "$(basename "$WORK")" "$WORK/report/manifest.sig" && fail "the signature file names a local path"
pass

# Verify with the right key: good; with a certificate: the subject is named.
expect_exit 0 "$FITPROOF" verify "$WORK/report" --public-key "$WORK/lab-public.pem"
grep -q '^  signature: good; manifest.json was signed with the key whose SHA-256 is [0-9a-f]\{64\}$' "$WORK/out" ||
    fail "good signature not reported"
pass
grep -q '^  signer named at signing: R. Okafor, QA statistics$' "$WORK/out" || fail "signer not shown"
pass
grep -q '^reproduced: all [0-9]* files are identical to a fresh build, and the signature is good$' "$WORK/out" ||
    fail "verify summary"
pass
expect_exit 0 "$FITPROOF" verify "$WORK/report" --public-key "$WORK/lab-certificate.pem"
grep -q '^  signed by: /CN=R. Okafor/O=Elmstead QA (the certificate.s subject)$' "$WORK/out" ||
    fail "certificate subject not shown"
pass

# Another key's public half: bad signature, exit 1.
expect_exit 1 "$FITPROOF" verify "$WORK/report" --public-key "$WORK/other-public.pem"
grep -q '^  signature: BAD; manifest.json is not what this key signed' "$WORK/out" || fail "bad signature not reported"
pass

# One changed byte in an output: verify names the file.
cp -R "$WORK/report" "$WORK/tampered"
sed -i '0,/[0-9]/s/[0-9]/#/' "$WORK/tampered/report.md"
expect_exit 1 "$FITPROOF" verify "$WORK/tampered" --public-key "$WORK/lab-public.pem"
grep -q '^  report.md: differs from a fresh build' "$WORK/out" || fail "tampered file not named"
pass
# A forged manifest that matches the tampered file still fails on the signature.
old_digest=$(grep -A1 '"file": "report.md"' "$WORK/report/manifest.json" | sed -n 's/.*"sha256": "\([0-9a-f]*\)".*/\1/p')
new_digest=$(sha256sum "$WORK/tampered/report.md" | cut -d' ' -f1)
sed -i "s/$old_digest/$new_digest/" "$WORK/tampered/manifest.json"
grep -q "$new_digest" "$WORK/tampered/manifest.json" || fail "the forged manifest was not made"
expect_exit 1 "$FITPROOF" verify "$WORK/tampered" --public-key "$WORK/lab-public.pem"
grep -q '^  signature: BAD' "$WORK/out" || fail "forged manifest passed the signature"
pass
# Signing refuses a folder whose files no longer match their digests.
cp -R "$WORK/pristine" "$WORK/changed"
printf ' ' >>"$WORK/changed/results.json"
expect_exit 2 "$FITPROOF" sign "$WORK/changed" --key "$WORK/lab-key.pem"
grep -q "^$WORK/changed/results.json: error: the file changed after the report was written" "$WORK/err" ||
    fail "sign accepted a changed folder"
[ ! -e "$WORK/changed/manifest.sig" ] || fail "a refused sign wrote a signature"
pass

# An unsigned folder checked with a key: not signed, exit 1.
expect_exit 1 "$FITPROOF" verify "$WORK/pristine" --public-key "$WORK/lab-public.pem"
grep -q '^  signature: manifest.sig is missing' "$WORK/out" || fail "missing signature not reported"
pass

# Refusals: a key inside the folder, a key of another kind, no key.
cp "$WORK/lab-key.pem" "$WORK/pristine/key.pem"
expect_exit 2 "$FITPROOF" sign "$WORK/pristine" --key "$WORK/pristine/key.pem"
expect_stderr "$WORK/pristine/key.pem: error: the private key is inside the report folder, where it would be filed and passed on with the report; keep it elsewhere"
rm "$WORK/pristine/key.pem"
expect_exit 2 "$FITPROOF" sign "$WORK/pristine" --key "$WORK/rsa-key.pem"
expect_stderr "$WORK/rsa-key.pem: error: the key is not an Ed25519 key; make one with 'openssl genpkey -algorithm ed25519'"
expect_exit 2 "$FITPROOF" sign "$WORK/pristine"
expect_stderr "fitproof: error: sign needs a report folder and a key, as in 'fitproof sign cylinders-report --key lab-key.pem'; see 'fitproof --help'"
[ ! -e "$WORK/pristine/manifest.sig" ] || fail "a refused sign wrote a signature"
pass
finish
