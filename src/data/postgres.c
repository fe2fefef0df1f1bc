/*
 * postgres.c — data: {postgres: CONNECTION, query: …}: the rows of one
 * SELECT from a PostgreSQL server through libpq, written down in the
 * canonical text form (sql.h) and read from there.
 *
 * The connection string names the server (service=lims, host=…, dbname=…);
 * passwords come from the environment, the service file or the password
 * file as libpq reads them, never from the spec. The query runs in a
 * read-only transaction through a cursor, fetched FETCH_ROWS rows at a
 * time, under a statement timeout. Values arrive as text: numeric exactly
 * as the server prints it (read by the correctly rounded parser), float8
 * with extra_float_digits = 3 (the shortest text that reads back to the
 * same double, PostgreSQL 12 and later), dates and timestamps in ISO style
 * in UTC. The column's type gives its kind; a type that is not a number, a
 * text, a boolean or a date is refused.
 */
#include <libpq-fe.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "sql.h"

#define FETCH_ROWS 10000
#define FETCH_TEXT "10000" /* FETCH_ROWS in the FETCH command */
#define DEFAULT_TIMEOUT_SECONDS 600

/* Type OIDs, from the server's pg_type.dat (stable across releases). */
typedef struct {
    Oid oid;
    const char *name;
    spec_kind kind;
} pg_type;

static const pg_type known_types[] = {{16, "boolean", SPEC_KIND_CATEGORY},
                                      {18, "char", SPEC_KIND_CATEGORY},
                                      {19, "name", SPEC_KIND_CATEGORY},
                                      {20, "bigint", SPEC_KIND_NUMERIC},
                                      {21, "smallint", SPEC_KIND_NUMERIC},
                                      {23, "integer", SPEC_KIND_NUMERIC},
                                      {25, "text", SPEC_KIND_CATEGORY},
                                      {26, "oid", SPEC_KIND_NUMERIC},
                                      {700, "real", SPEC_KIND_NUMERIC},
                                      {701, "double precision", SPEC_KIND_NUMERIC},
                                      {1042, "character", SPEC_KIND_CATEGORY},
                                      {1043, "character varying", SPEC_KIND_CATEGORY},
                                      {1082, "date", SPEC_KIND_DATE},
                                      {1114, "timestamp without time zone", SPEC_KIND_DATE},
                                      {1184, "timestamp with time zone", SPEC_KIND_DATE},
                                      {1700, "numeric", SPEC_KIND_NUMERIC},
                                      {2950, "uuid", SPEC_KIND_CATEGORY},
                                      {0, NULL, SPEC_KIND_INFER}};

/* Names of types that are refused, for the message. */
static const pg_type refused_types[] = {{17, "bytea", SPEC_KIND_INFER},
                                        {114, "json", SPEC_KIND_INFER},
                                        {3802, "jsonb", SPEC_KIND_INFER},
                                        {1083, "time", SPEC_KIND_INFER},
                                        {1266, "time with time zone", SPEC_KIND_INFER},
                                        {1186, "interval", SPEC_KIND_INFER},
                                        {142, "xml", SPEC_KIND_INFER},
                                        {0, NULL, SPEC_KIND_INFER}};

static const pg_type *find_type(const pg_type *list, Oid oid)
{
    for (; list->name; list++)
        if (list->oid == oid)
            return list;
    return NULL;
}

static src_mark query_mark(const spec *s)
{
    return s->data.query ? s->data.query_at : s->data.table_at;
}

/* The server's message: its first line, without a severity prefix
   (libpq's own messages add lines of advice a located error does not
   need). */
static void server_message(buf *out, PGconn *conn, const PGresult *res)
{
    const char *text = res ? PQresultErrorField(res, PG_DIAG_MESSAGE_PRIMARY) : NULL;
    if (!text)
        text = PQerrorMessage(conn);
    static const char *const prefixes[] = {"FATAL:  ", "ERROR:  ", NULL};
    for (size_t i = 0; prefixes[i]; i++)
        if (strncmp(text, prefixes[i], strlen(prefixes[i])) == 0)
            text += strlen(prefixes[i]);
    size_t length = strcspn(text, "\n");
    while (length && text[length - 1] == ' ')
        length--;
    buf_put(out, text, length);
}

/* A failed command: a lost connection, the statement timeout, or the
   server's own message. */
static void command_error(const spec *s, PGconn *conn, const PGresult *res, size_t rows,
                          error_list *errors)
{
    buf message;
    buf_init(&message);
    server_message(&message, conn, res);
    const char *state = res ? PQresultErrorField(res, PG_DIAG_SQLSTATE) : NULL;
    double timeout =
        s->data.statement_timeout > 0 ? s->data.statement_timeout : DEFAULT_TIMEOUT_SECONDS;
    if (PQstatus(conn) == CONNECTION_BAD)
        error_at(errors, s->path, s->data.connection_at,
                 "the connection to the PostgreSQL server was lost after %zu rows (%s); "
                 "nothing was written: check the server, then build again",
                 rows, message.data);
    else if (state && strcmp(state, "57014") == 0)
        error_at(
            errors, s->path, query_mark(s),
            "the query ran longer than the statement timeout of %g s and was cancelled; "
            "make it faster, or raise data.statement_timeout",
            timeout);
    else
        error_at(errors, s->path, query_mark(s),
                 "PostgreSQL could not run the query: %s; "
                 "check the %s",
                 message.data, s->data.query ? "query" : "table name");
    buf_free(&message);
}

/* Runs a command that returns no rows; false after recording an error. */
static bool run_command(const spec *s, PGconn *conn, const char *command,
                        error_list *errors)
{
    PGresult *res = PQexec(conn, command);
    bool ok = PQresultStatus(res) == PGRES_COMMAND_OK;
    if (!ok)
        command_error(s, conn, res, 0, errors);
    PQclear(res);
    return ok;
}

/* The columns of the first chunk: names and kinds, or an error for a type
   that is refused. */
static bool read_columns(const spec *s, const PGresult *res, sql_rows *r,
                         error_list *errors)
{
    int n = PQnfields(res);
    bool ok = true;
    for (int j = 0; j < n; j++) {
        Oid oid = PQftype(res, j);
        const pg_type *type = find_type(known_types, oid);
        if (!type) {
            const pg_type *refused = find_type(refused_types, oid);
            char name[32];
            snprintf(name, sizeof name, "with OID %u", (unsigned)oid);
            error_at(
                errors, s->path, query_mark(s),
                "column '%s' of the result has PostgreSQL type %s, which is not a number, "
                "a text or a date; leave it out of the query, or cast it (%s::text, "
                "%s::double precision)",
                PQfname(res, j), refused ? refused->name : name, PQfname(res, j),
                PQfname(res, j));
            ok = false;
            continue;
        }
        sql_rows_column(r, PQfname(res, j), type->kind);
    }
    if (ok)
        sql_rows_set_key(r, s->data.key);
    return ok;
}

static void read_chunk(const PGresult *res, sql_rows *r)
{
    int rows = PQntuples(res), n = PQnfields(res);
    for (int i = 0; i < rows; i++) {
        for (int j = 0; j < n; j++) {
            if (PQgetisnull(res, i, j)) {
                sql_rows_field(r, NULL, 0);
                continue;
            }
            const char *text = PQgetvalue(res, i, j);
            size_t length = (size_t)PQgetlength(res, i, j);
            if (PQftype(res, j) == 16) /* boolean: the words, not t and f */
                text = text[0] == 't' ? "true" : "false", length = strlen(text);
            sql_rows_field(r, text, length);
        }
        sql_rows_end_row(r);
    }
}

/* Declares the cursor and fetches every row into r. */
static bool fetch_rows(const spec *s, PGconn *conn, const char *query, sql_rows *r,
                       error_list *errors)
{
    buf declare;
    buf_init(&declare);
    buf_printf(&declare, "DECLARE fitproof_rows NO SCROLL CURSOR FOR %s", query);
    /* The extended protocol takes one statement only: a query cannot end
       the read-only transaction and run another after it. */
    PGresult *declared = PQexecParams(conn, declare.data, 0, NULL, NULL, NULL, NULL, 0);
    bool ok = PQresultStatus(declared) == PGRES_COMMAND_OK;
    if (!ok)
        command_error(s, conn, declared, 0, errors);
    PQclear(declared);
    buf_free(&declare);
    bool first = true;
    while (ok) {
        PGresult *res = PQexec(conn, "FETCH FORWARD " FETCH_TEXT " FROM fitproof_rows");
        if (PQresultStatus(res) != PGRES_TUPLES_OK) {
            command_error(s, conn, res, r->n_rows, errors);
            PQclear(res);
            return false;
        }
        if (first)
            ok = read_columns(s, res, r, errors);
        first = false;
        bool done = PQntuples(res) < FETCH_ROWS;
        if (ok)
            read_chunk(res, r);
        PQclear(res);
        if (done)
            break;
    }
    return ok;
}

/* Settings that make the text the same whatever the server's defaults. */
static bool prepare_session(const spec *s, PGconn *conn, error_list *errors)
{
    double timeout =
        s->data.statement_timeout > 0 ? s->data.statement_timeout : DEFAULT_TIMEOUT_SECONDS;
    buf settings;
    buf_init(&settings);
    buf_printf(
        &settings,
        "SET statement_timeout = %.0f; SET TimeZone = 'UTC'; SET DateStyle = 'ISO, YMD'; "
        "SET extra_float_digits = 3; SET client_encoding = 'UTF8'; "
        "BEGIN TRANSACTION ISOLATION LEVEL REPEATABLE READ READ ONLY",
        timeout * 1000);
    bool ok = run_command(s, conn, settings.data, errors);
    buf_free(&settings);
    return ok;
}

/* libpq's reading of the connection string, so that a password written
   in any of its forms is refused. */
static bool check_connection(const spec *s, error_list *errors)
{
    char *why = NULL;
    PQconninfoOption *options = PQconninfoParse(s->data.connection, &why);
    if (!options) {
        size_t length = why ? strlen(why) : 0;
        while (length && why[length - 1] == '\n')
            length--;
        error_at(errors, s->path, s->data.connection_at,
                 "libpq cannot read the connection string: %.*s; write it as "
                 "\"service=NAME\" or \"host=… dbname=…\"",
                 (int)length, why ? why : "");
        PQfreemem(why);
        return false;
    }
    bool ok = true;
    for (PQconninfoOption *o = options; o->keyword; o++)
        if (strcmp(o->keyword, "password") == 0 && o->val && o->val[0]) {
            error_at(
                errors, s->path, s->data.connection_at,
                "the connection string holds a password, which would be archived with "
                "the report; keep it in ~/.pgpass (or PGPASSFILE) and remove it from the "
                "spec");
            ok = false;
        }
    PQconninfoFree(options);
    return ok;
}

data_table *data_load_postgres(const spec *s, unsigned flags, error_list *errors)
{
    if (!check_connection(s, errors))
        return NULL;
    PGconn *conn = PQconnectdb(s->data.connection);
    data_table *t = NULL;
    if (PQstatus(conn) != CONNECTION_OK) {
        buf message;
        buf_init(&message);
        server_message(&message, conn, NULL);
        error_at(
            errors, s->path, s->data.connection_at,
            "cannot connect to PostgreSQL with '%s': %s; check the connection string, the "
            "service file (PGSERVICEFILE) and the password file (PGPASSFILE)",
            s->data.connection, message.data);
        buf_free(&message);
        PQfinish(conn);
        return NULL;
    }
    char *query = sql_make_query(s, NULL);
    sql_rows r;
    sql_rows_init(&r);
    if (prepare_session(s, conn, errors) && fetch_rows(s, conn, query, &r, errors)) {
        buf path;
        buf_init(&path);
        buf_printf(&path, "PostgreSQL '%s'", s->data.connection);
        t = sql_rows_load(&r, s, flags, path.data, errors);
        buf_free(&path);
    }
    if (t) {
        t->source_query = query;
        query = NULL;
        buf version;
        buf_init(&version);
        const char *server = PQparameterStatus(conn, "server_version");
        buf_printf(&version, "PostgreSQL %s", server ? server : "(version unknown)");
        t->source_version = buf_detach(&version);
    }
    if (PQstatus(conn) == CONNECTION_OK)
        PQclear(PQexec(conn, "ROLLBACK"));
    sql_rows_free(&r);
    free(query);
    PQfinish(conn);
    return t;
}
