# End to end: a report folder filed away and checked later. verify lists
# every way this machine differs from the one that built the folder
# (fitproof's and each library's version, from the manifest), still decides
# identity by the bytes, and fails under --strict; a folder moved away from
# its data says so and verifies with --data, checked by the data's digest.
. "$(dirname "$0")/lib.sh"

mkdir "$WORK/lab"
cp examples/cylinders/cylinders.csv examples/cylinders/cylinders.yaml "$WORK/lab/"
expect_exit 0 "$FITPROOF" build "$WORK/lab/cylinders.yaml" -o "$WORK/report"
expect_exit 0 "$FITPROOF" verify "$WORK/report"
grep -q '^  environment: fitproof and every library have the versions of the build$' "$WORK/out" ||
    fail "same environment not said"
pass
expect_exit 0 "$FITPROOF" verify "$WORK/report" --strict

# The folder as if built elsewhere: another OpenSSL, an older fitproof.
here=$(sed -n 's/^    "openssl": "\(.*\)"$/\1/p' "$WORK/report/manifest.json")
[ -n "$here" ] || fail "no openssl version in the manifest"
sed -i -e 's/^    "openssl": ".*"$/    "openssl": "OpenSSL 9.9.9 (elsewhere)"/' \
    -e 's/^  "fitproof_version": ".*",$/  "fitproof_version": "0.0.9",/' "$WORK/report/manifest.json"
expect_exit 0 "$FITPROOF" verify "$WORK/report"
grep -q "^  environment: openssl was OpenSSL 9.9.9 (elsewhere) at the build, is $here here\$" "$WORK/out" ||
    fail "library difference not listed: $(cat "$WORK/out")"
pass
grep -q '^  environment: the folder was built by fitproof 0.0.9, this is ' "$WORK/out" ||
    fail "fitproof version difference not listed"
pass
grep -q '^reproduced: ' "$WORK/out" || fail "identity should still follow the bytes"
pass
expect_exit 1 "$FITPROOF" verify "$WORK/report" --strict
grep -q '^  --strict: 2 differences of the environment count as a failure$' "$WORK/out" || fail "--strict line"
pass

# Moved with its data stored inside (report.archive_data's default for a
# file this small): verifies anywhere, from the stored copy.
mkdir -p "$WORK/archive/2025" "$WORK/archive/2026"
expect_exit 0 "$FITPROOF" build "$WORK/lab/cylinders.yaml" -o "$WORK/moving"
cmp -s "$WORK/moving/data/cylinders.csv" "$WORK/lab/cylinders.csv" || fail "data not stored"
pass
grep -q '"archived": "data/cylinders.csv"' "$WORK/moving/manifest.json" || fail "archived copy not in the manifest"
pass
mv "$WORK/moving" "$WORK/archive/2025/cylinders-report"
expect_exit 0 "$FITPROOF" verify "$WORK/archive/2025/cylinders-report"
grep -q "^  data used: $WORK/archive/2025/cylinders-report/data/cylinders.csv (the copy stored in the folder; SHA-256 " "$WORK/out" ||
    fail "stored copy not used: $(cat "$WORK/out")"
pass
# The stored copy changed: refused by its digest.
printf '1,2,3,4,none\n' >>"$WORK/archive/2025/cylinders-report/data/cylinders.csv"
expect_exit 2 "$FITPROOF" verify "$WORK/archive/2025/cylinders-report"
grep -q "data/cylinders.csv: error: its SHA-256 is" "$WORK/err" || fail "changed stored copy: $(cat "$WORK/err")"
pass

# Moved without its data (archive_data: false): the data stay behind.
sed 's/^report:$/report:\n  archive_data: false/' "$WORK/lab/cylinders.yaml" >"$WORK/lab/unstored.yaml"
grep -q '^  archive_data: false$' "$WORK/lab/unstored.yaml" ||
    printf 'report:\n  archive_data: false\n' >>"$WORK/lab/unstored.yaml"
expect_exit 0 "$FITPROOF" build "$WORK/lab/unstored.yaml" -o "$WORK/moving"
[ ! -e "$WORK/moving/data" ] || fail "data stored although archive_data is false"
pass
mv "$WORK/moving" "$WORK/archive/2026/cylinders-report"
moved=$WORK/archive/2026/cylinders-report
expect_exit 2 "$FITPROOF" verify "$moved"
grep -q "error: the data file the archived spec names is not there (the report folder or the data were moved); give its place with --data FILE, and verify checks it by its SHA-256\$" "$WORK/err" ||
    fail "moved folder: $(cat "$WORK/err")"
pass
expect_exit 0 "$FITPROOF" verify "$moved" --data "$WORK/lab/cylinders.csv"
grep -q "^  data used: $WORK/lab/cylinders.csv (SHA-256 [0-9a-f]\{64\})\$" "$WORK/out" || fail "data used not named"
pass
grep -q '^reproduced: ' "$WORK/out" || fail "moved folder with --data did not reproduce"
pass
# Another file under --data: refused by its digest.
expect_exit 2 "$FITPROOF" verify "$moved" --data examples/tablets/tablets.csv
grep -q "^examples/tablets/tablets.csv: error: its SHA-256 is [0-9a-f]\{64\}, but the report was built from data whose SHA-256 is [0-9a-f]\{64\}; give the data file the report was built from\$" "$WORK/err" ||
    fail "wrong data accepted: $(cat "$WORK/err")"
pass
expect_exit 2 "$FITPROOF" verify "$moved" --data "$WORK/none.csv"
grep -q "$WORK/none.csv: error: there is no such file" "$WORK/err" || fail "missing --data file"
pass
finish
