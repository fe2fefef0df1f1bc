# Sourced by the tests that need PostgreSQL across shards (after lib.sh):
# three private servers from Debian's binaries — a coordinator and two
# shards — each listening on a unix socket in one temporary folder only
# (ports 5432, 5433, 5434 name the sockets; nothing listens on the
# network), fsync off. The coordinator reaches the shards through
# postgres_fdw: the table `coupons` on it is partitioned by plant, and each
# partition is a foreign table whose rows live on one shard. The rows
# (tests/e2e/gen_coupons.py, an invented scenario) are copied into each
# shard directly, from a file, not through the coordinator; the
# coordinator also holds every row in a plain table, `coupons_local`, the
# one-server source (left out with PG_CLUSTER_LOCAL=0, as bench/pushdown.sh
# does). docs/shards.md explains the setup for a real site.
#
#   pg_cluster_binaries || { skip ...; finish; exit 0; }
#   pg_cluster_start ROWS    # then $pg_coordinator, $pg_shard1, $pg_shard2
#                            # (connection strings), $pg_csv (every row)
#   pg_sql CONNECTION ARGS...   # psql, output in $WORK/psql.out
#
# The servers are stopped and their folder removed when the script exits.

# FITPROOF_PG_BIN names another folder of server binaries (test_skips.sh
# points it at an empty one to check the skipped branch).
pg_cluster_binaries() {
    pg_bin=${FITPROOF_PG_BIN-$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1)}
    [ -n "$pg_bin" ] && [ -x "$pg_bin/initdb" ] && [ -x "$pg_bin/postgres" ] &&
        command -v psql >/dev/null &&
        [ -f "$("$pg_bin/pg_config" --sharedir 2>/dev/null)/extension/postgres_fdw.control" ]
}

pg_cluster=""
pg_pids=()
pg_cluster_stop() {
    local port
    for port in 5432 5433 5434; do
        [ -d "$pg_cluster/data$port" ] &&
            pg_as_server "$pg_bin/pg_ctl" -D "$pg_cluster/data$port" -m immediate -w stop >/dev/null 2>&1
    done
    [ ${#pg_pids[@]} -eq 0 ] || wait "${pg_pids[@]}" 2>/dev/null
    rm -rf "$pg_cluster" "$WORK"
}

# initdb and postgres refuse to run as root: as root, run them as nobody
# in a folder nobody owns.
pg_as_server() { "$@"; }

pg_sql() {
    local connection=$1
    shift
    psql -X -q -v ON_ERROR_STOP=1 "$connection" "$@" >"$WORK/psql.out" 2>&1 ||
        fail "psql: $(cat "$WORK/psql.out")"
}

# pg_server PORT SETTINGS...: starts the server of folder data$PORT.
pg_server() {
    local port=$1
    shift
    pg_as_server "$pg_bin/postgres" -D "$pg_cluster/data$port" -k "$pg_cluster" -p "$port" \
        -c listen_addresses='' -c fsync=off -c synchronous_commit=off -c full_page_writes=off \
        "$@" >"$pg_cluster/server$port.log" 2>&1 &
    pg_pids+=($!)
}

pg_wait() {
    local port
    for port in "$@"; do
        for _ in $(seq 1 150); do
            [ -S "$pg_cluster/.s.PGSQL.$port" ] && break
            sleep 0.1
        done
        [ -S "$pg_cluster/.s.PGSQL.$port" ] ||
            fail "server $port did not start: $(tail -5 "$pg_cluster/server$port.log")"
    done
}

pg_columns='line bigint, plant text, oven text, temp_c numeric, hours numeric, strength_mpa numeric'

pg_cluster_start() {
    local rows=$1 port shard loads=()
    pg_cluster=$(mktemp -d /tmp/fitproof-shards.XXXXXX)
    if [ "$(id -u)" -eq 0 ]; then
        chown nobody "$pg_cluster"
        pg_as_server() { runuser -u nobody -- "$@"; }
    fi
    trap pg_cluster_stop EXIT
    # One initdb, copied: the three servers start from the same empty cluster.
    pg_as_server "$pg_bin/initdb" -D "$pg_cluster/data5432" -U fitproof --auth=trust -E UTF8 \
        --no-locale >"$pg_cluster/initdb.log" 2>&1 ||
        fail "initdb failed: $(tail -5 "$pg_cluster/initdb.log")"
    pg_as_server cp -a "$pg_cluster/data5432" "$pg_cluster/data5433"
    pg_as_server cp -a "$pg_cluster/data5432" "$pg_cluster/data5434"
    pg_server 5432
    pg_server 5433
    pg_server 5434
    pg_coordinator="host=$pg_cluster port=5432 dbname=postgres user=fitproof"
    pg_shard1="host=$pg_cluster port=5433 dbname=postgres user=fitproof"
    pg_shard2="host=$pg_cluster port=5434 dbname=postgres user=fitproof"
    # The servers stay private: no password is needed and none is read.
    export PGPASSFILE="$WORK/no-password-file"
    pg_csv="$pg_cluster/coupons.csv"
    /usr/bin/python3 "$(dirname "${BASH_SOURCE[0]}")/gen_coupons.py" "$rows" "$pg_csv" \
        "$pg_cluster/shard1.tsv" "$pg_cluster/shard2.tsv" || fail "gen_coupons.py failed"
    chmod a+r "$pg_csv" "$pg_cluster"/shard*.tsv
    pg_wait 5432 5433 5434
    # Each shard reads its own file (server-side COPY), both at once.
    for shard in 1 2; do
        port=$((5432 + shard))
        psql -X -q -v ON_ERROR_STOP=1 "host=$pg_cluster port=$port dbname=postgres user=fitproof" \
            -c "CREATE TABLE coupons ($pg_columns)" \
            -c "COPY coupons FROM '$pg_cluster/shard$shard.tsv'" \
            -c "ANALYZE coupons" >"$pg_cluster/load$shard.log" 2>&1 &
        loads+=($!)
    done
    if [ "${PG_CLUSTER_LOCAL-1}" = 1 ]; then
        psql -X -q -v ON_ERROR_STOP=1 "$pg_coordinator" \
            -c "CREATE TABLE coupons_local ($pg_columns)" \
            -c "COPY coupons_local FROM '$pg_csv' WITH (FORMAT csv, HEADER true)" \
            -c "ANALYZE coupons_local" >"$pg_cluster/load0.log" 2>&1 ||
            fail "loading the coordinator: $(cat "$pg_cluster/load0.log")"
    fi
    for shard in 1 2; do
        wait "${loads[$((shard - 1))]}" || fail "loading shard $shard: $(cat "$pg_cluster/load$shard.log")"
    done
    pg_sql "$pg_coordinator" -f - <<SQL
CREATE EXTENSION postgres_fdw;
CREATE SERVER shard1 FOREIGN DATA WRAPPER postgres_fdw
    OPTIONS (host '$pg_cluster', port '5433', dbname 'postgres',
             use_remote_estimate 'true', fetch_size '10000', async_capable 'true');
CREATE SERVER shard2 FOREIGN DATA WRAPPER postgres_fdw
    OPTIONS (host '$pg_cluster', port '5434', dbname 'postgres',
             use_remote_estimate 'true', fetch_size '10000', async_capable 'true');
CREATE USER MAPPING FOR fitproof SERVER shard1 OPTIONS (user 'fitproof');
CREATE USER MAPPING FOR fitproof SERVER shard2 OPTIONS (user 'fitproof');
CREATE TABLE coupons ($pg_columns) PARTITION BY LIST (plant);
CREATE FOREIGN TABLE coupons_north PARTITION OF coupons FOR VALUES IN ('north')
    SERVER shard1 OPTIONS (schema_name 'public', table_name 'coupons');
CREATE FOREIGN TABLE coupons_south PARTITION OF coupons FOR VALUES IN ('south')
    SERVER shard2 OPTIONS (schema_name 'public', table_name 'coupons');
ALTER DATABASE postgres SET enable_partitionwise_aggregate = on;
SQL
}
