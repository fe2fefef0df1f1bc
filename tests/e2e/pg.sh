# A private PostgreSQL server for a test, from Debian's server binaries:
# pg_start NAME makes a cluster in a temporary folder listening on a unix
# socket there only (as nobody when run as root), sets $pg_connection and
# defines pg_sql; the server stops and its folder goes at exit (pg_stop).
# pg_available says whether the binaries are installed (FITPROOF_PG_BIN
# names another folder of binaries, as test_skips.sh does).
pg_bin=${FITPROOF_PG_BIN-$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1)}
pg_available() {
    [ -n "$pg_bin" ] && [ -x "$pg_bin/initdb" ] && [ -x "$pg_bin/postgres" ] &&
        command -v psql >/dev/null
}
pg_as_server() { "$@"; }
pg_server_pid=""
pg_stop() {
    if [ -n "$pg_server_pid" ]; then
        pg_as_server "$pg_bin/pg_ctl" -D "$pg_cluster/data" -m immediate -w stop >/dev/null 2>&1
        wait "$pg_server_pid" 2>/dev/null
    fi
    rm -rf "$pg_cluster" "$WORK"
}
pg_start() {
    pg_cluster=$(mktemp -d "/tmp/fitproof-$1.XXXXXX")
    if [ "$(id -u)" -eq 0 ]; then
        chown nobody "$pg_cluster"
        pg_as_server() { runuser -u nobody -- "$@"; }
    fi
    trap pg_stop EXIT
    pg_as_server "$pg_bin/initdb" -D "$pg_cluster/data" -U fitproof --auth=trust -E UTF8 \
        --no-locale >"$pg_cluster/initdb.log" 2>&1 ||
        fail "initdb failed: $(tail -5 "$pg_cluster/initdb.log")"
    pg_as_server "$pg_bin/postgres" -D "$pg_cluster/data" -k "$pg_cluster" \
        -c listen_addresses='' -c fsync=off >"$pg_cluster/server.log" 2>&1 &
    pg_server_pid=$!
    for _ in $(seq 1 100); do
        [ -S "$pg_cluster/.s.PGSQL.5432" ] && break
        sleep 0.1
    done
    [ -S "$pg_cluster/.s.PGSQL.5432" ] || fail "the server did not start: $(tail -5 "$pg_cluster/server.log")"
    pg_connection="host=$pg_cluster dbname=postgres user=fitproof"
    export PGPASSFILE="$WORK/no-password-file"
}
pg_sql() {
    psql -X -q -v ON_ERROR_STOP=1 "$pg_connection" "$@" >"$WORK/psql.out" 2>&1 ||
        fail "psql: $(cat "$WORK/psql.out")"
}
