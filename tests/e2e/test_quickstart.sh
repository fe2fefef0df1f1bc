# End to end: CI runs the README's quick start and nothing else. The
# commands of the README's "Quick start" block are, in order, the commands
# .ci/run runs (besides its shell settings), and each names a make target
# that exists, so that a green CI means a newcomer's two commands work.
. "$(dirname "$0")/lib.sh"

# The commands of the first sh block after "## Quick start", comments cut.
awk '/^## Quick start/ { section = 1; next }
     section && /^```sh/ { block = 1; next }
     block && /^```/ { exit }
     block { sub(/[ \t]*#.*/, ""); if ($0 != "") print }' README.md >"$WORK/readme"
# What .ci/run runs: every command line but comments and shell settings.
grep -Ev '^[[:space:]]*(#|$|set |cd |export )' .ci/run >"$WORK/ci"
[ -s "$WORK/readme" ] || fail "README.md has no Quick start commands"
pass
if ! cmp -s "$WORK/readme" "$WORK/ci"; then
    diff "$WORK/readme" "$WORK/ci" >&2
    fail ".ci/run does not run the README's quick start commands"
fi
pass
while read -r command target rest; do
    [ "$command" = make ] && [ -n "$target" ] && [ -z "$rest" ] ||
        fail "quick start command is not 'make TARGET': $command $target $rest"
    grep -Eq "^$target:" Makefile || fail "Makefile has no target '$target'"
    pass
done <"$WORK/readme"
# make demo installs what the build and the tests need: every package CI
# would need is in the install script (CI installs nothing else).
grep -q 'scripts/install-deps.sh' Makefile || fail "make deps does not run scripts/install-deps.sh"
pass
finish
