/*
 * sqlite.c — data: {sqlite: FILE, query: …} or {sqlite: FILE, table: …}:
 * the rows of one SELECT, read from a database file opened read-only,
 * written down in the canonical text form (sql.h) and read from there.
 * SQLite's storage classes give the kinds the spec leaves open: a column
 * of integers and reals is numeric, one of text a category, one whose
 * declared type names a date or time a date; NULL is a missing value and
 * a BLOB is refused. A table without a key is read in rowid order.
 */
#include <sqlite3.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "sql.h"

/* Storage classes seen in a column. */
enum { SEEN_NUMBER = 1, SEEN_TEXT = 2 };

static src_mark query_mark(const spec *s)
{
    return s->data.query ? s->data.query_at : s->data.table_at;
}

static bool names_date(const char *declared)
{
    if (!declared)
        return false;
    for (const char *p = declared; *p; p++)
        if ((p[0] == 'D' || p[0] == 'd') && (p[1] == 'A' || p[1] == 'a') &&
            (p[2] == 'T' || p[2] == 't') && (p[3] == 'E' || p[3] == 'e'))
            return true;
    return (strstr(declared, "TIME") || strstr(declared, "time")) != 0;
}

static void sqlite_error(const spec *s, sqlite3 *db, const char *what, error_list *errors)
{
    error_at(errors, s->path, query_mark(s), "SQLite could not %s in %s: %s; check the %s",
             what, s->data.resolved, sqlite3_errmsg(db),
             s->data.query ? "query" : "table name");
}

/* An integer in decimal, without printf's cost (a million rows a second). */
static void format_integer(sqlite3_int64 value, char out[32])
{
    char digits[24];
    int n = 0;
    uint64_t magnitude = value < 0 ? 0 - (uint64_t)value : (uint64_t)value;
    do
        digits[n++] = (char)('0' + magnitude % 10);
    while ((magnitude /= 10) > 0);
    size_t at = 0;
    if (value < 0)
        out[at++] = '-';
    while (n > 0)
        out[at++] = digits[--n];
    out[at] = '\0';
}

/* Steps through the rows into r; false after recording an error. */
static bool read_rows(const spec *s, sqlite3 *db, sqlite3_stmt *stmt, sql_rows *r,
                      unsigned *seen, error_list *errors)
{
    size_t n = r->n_columns;
    int rc;
    char number[32];
    while ((rc = sqlite3_step(stmt)) == SQLITE_ROW) {
        for (size_t j = 0; j < n; j++) {
            int i = (int)j;
            switch (sqlite3_column_type(stmt, i)) {
            case SQLITE_NULL: sql_rows_field(r, NULL, 0); break;
            case SQLITE_INTEGER:
                format_integer(sqlite3_column_int64(stmt, i), number);
                sql_rows_field(r, number, strlen(number));
                seen[j] |= SEEN_NUMBER;
                break;
            case SQLITE_FLOAT:
                sql_format_double(sqlite3_column_double(stmt, i), number, sizeof number);
                sql_rows_field(r, number, strlen(number));
                seen[j] |= SEEN_NUMBER;
                break;
            case SQLITE_TEXT: {
                const char *text = (const char *)sqlite3_column_text(stmt, i);
                size_t length = (size_t)sqlite3_column_bytes(stmt, i);
                if (memchr(text, '\0', length)) {
                    error_at(errors, s->path, query_mark(s),
                             "row %zu of the result has a NUL byte in the text of column "
                             "'%s'; correct the value in the database",
                             r->n_rows + 1, r->names[j]);
                    return false;
                }
                sql_rows_field(r, text, length);
                seen[j] |= SEEN_TEXT;
                break;
            }
            default:
                error_at(
                    errors, s->path, query_mark(s),
                    "row %zu of the result holds a BLOB in column '%s', which is not a "
                    "number, a text or a date; leave the column out of the query, or "
                    "cast it",
                    r->n_rows + 1, r->names[j]);
                return false;
            }
        }
        sql_rows_end_row(r);
    }
    if (rc != SQLITE_DONE) {
        sqlite_error(s, db, "read the rows", errors);
        return false;
    }
    return true;
}

/* The kinds the storage classes imply, for the columns the spec leaves
   open. */
static void settle_hints(sql_rows *r, sqlite3_stmt *stmt, const unsigned *seen)
{
    for (size_t j = 0; j < r->n_columns; j++) {
        if (names_date(sqlite3_column_decltype(stmt, (int)j)) && seen[j] == SEEN_TEXT)
            r->hints[j] = SPEC_KIND_DATE;
        else if (seen[j] == SEEN_NUMBER)
            r->hints[j] = SPEC_KIND_NUMERIC;
        else if (seen[j] == SEEN_TEXT)
            r->hints[j] = SPEC_KIND_CATEGORY;
    }
}

static bool only_blanks(const char *p)
{
    for (; *p; p++)
        if (!strchr(" \t\r\n;", *p))
            return false;
    return true;
}

static data_table *run_query(const spec *s, sqlite3 *db, unsigned flags, error_list *errors)
{
    char *query = sql_make_query(s, "rowid");
    sqlite3_stmt *stmt = NULL;
    const char *tail = NULL;
    data_table *t = NULL;
    if (sqlite3_prepare_v2(db, query, -1, &stmt, &tail) != SQLITE_OK || !stmt) {
        if (!stmt && sqlite3_errcode(db) == SQLITE_OK)
            error_at(errors, s->path, query_mark(s), "the query is empty; write a SELECT");
        else
            sqlite_error(s, db, "prepare the query", errors);
    } else if (!only_blanks(tail)) {
        error_at(errors, s->path, query_mark(s),
                 "the query holds more than one statement; keep the one SELECT");
    } else if (!sqlite3_stmt_readonly(stmt) || sqlite3_column_count(stmt) == 0) {
        error_at(
            errors, s->path, query_mark(s),
            "the query does not read rows; fitproof runs one SELECT and changes nothing");
    } else {
        sql_rows r;
        sql_rows_init(&r);
        size_t n = (size_t)sqlite3_column_count(stmt);
        for (size_t j = 0; j < n; j++)
            sql_rows_column(&r, sqlite3_column_name(stmt, (int)j), SPEC_KIND_INFER);
        sql_rows_set_key(&r, s->data.key);
        unsigned *seen = xcalloc(n, sizeof *seen);
        if (read_rows(s, db, stmt, &r, seen, errors)) {
            settle_hints(&r, stmt, seen);
            t = sql_rows_load(&r, s, flags, s->data.resolved, errors);
        }
        if (t) {
            t->source_query = query;
            query = NULL;
            buf version;
            buf_init(&version);
            buf_printf(&version, "SQLite %s", sqlite3_libversion());
            t->source_version = buf_detach(&version);
        }
        free(seen);
        sql_rows_free(&r);
    }
    sqlite3_finalize(stmt);
    free(query);
    return t;
}

data_table *data_load_sqlite(const spec *s, unsigned flags, error_list *errors)
{
    sqlite3 *db = NULL;
    /* Read-only, never created; no URI parsing, so the path is a path; one
       thread uses the connection, so it needs no mutex. */
    int rc = sqlite3_open_v2(s->data.resolved, &db,
                             SQLITE_OPEN_READONLY | SQLITE_OPEN_NOMUTEX, NULL);
    data_table *t = NULL;
    if (rc != SQLITE_OK) {
        error_at(errors, s->path, s->data.path_at,
                 "cannot open the SQLite database '%s': %s; check data.sqlite, which is "
                 "relative to the spec's folder",
                 s->data.resolved, db ? sqlite3_errmsg(db) : sqlite3_errstr(rc));
    } else {
        sqlite3_busy_timeout(db, 5000);
        t = run_query(s, db, flags, errors);
    }
    sqlite3_close(db);
    return t;
}
