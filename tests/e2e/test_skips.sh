# End to end: the database tests skip by name, with the reason, and pass
# (exit 0) when what they need is absent — checked on every machine by
# hiding the sqlite3 program from PATH and pointing the PostgreSQL tests at
# an empty folder of server binaries.
. "$(dirname "$0")/lib.sh"

mkdir "$WORK/no-server"
out=$(PATH="$(path_without sqlite3)" FITPROOF="$FITPROOF" bash tests/e2e/test_sqlite.sh 2>&1)
[ $? -eq 0 ] || fail "test_sqlite without sqlite3 failed: $out"
[ "$(echo "$out" | head -n 1)" = "skipped: test_sqlite: SQLite sources (the sqlite3 program is not installed; scripts/install-deps.sh installs it)" ] ||
    fail "test_sqlite's skip line: $out"
pass
out=$(FITPROOF_PG_BIN="$WORK/no-server" FITPROOF="$FITPROOF" bash tests/e2e/test_postgres.sh 2>&1)
[ $? -eq 0 ] || fail "test_postgres without a server failed: $out"
[ "$(echo "$out" | head -n 1)" = "skipped: test_postgres: PostgreSQL sources (the PostgreSQL server binaries are not installed; scripts/install-deps.sh installs the postgresql package)" ] ||
    fail "test_postgres's skip line: $out"
pass
out=$(FITPROOF_PG_BIN="$WORK/no-server" FITPROOF="$FITPROOF" bash tests/e2e/test_shards.sh 2>&1)
[ $? -eq 0 ] || fail "test_shards without a server failed: $out"
[ "$(echo "$out" | head -n 1)" = "skipped: test_shards: PostgreSQL shards (the PostgreSQL server binaries or postgres_fdw are not installed; scripts/install-deps.sh installs the postgresql package)" ] ||
    fail "test_shards's skip line: $out"
pass
out=$(FITPROOF_PG_BIN="$WORK/no-server" FITPROOF="$FITPROOF" bash tests/e2e/test_pushdown.sh 2>&1)
[ $? -eq 0 ] || fail "test_pushdown without a server failed: $out"
[ "$(echo "$out" | head -n 1)" = "skipped: test_pushdown: PostgreSQL pushdown (the PostgreSQL server binaries are not installed; scripts/install-deps.sh installs the postgresql package)" ] ||
    fail "test_pushdown's skip line: $out"
pass
finish
