/*
 * sqlrows.c — the rows of a database source in the canonical text form
 * (sql.h), read by the CSV reader. Messages the reader writes about a
 * place in that text are moved to the spec's query, naming the row and
 * the column, since the text itself is never a file the user sees.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "sql.h"

void sql_rows_init(sql_rows *r)
{
    memset(r, 0, sizeof *r);
    buf_init(&r->text);
    r->line = 1;
    r->key = SIZE_MAX;
}

void sql_rows_free(sql_rows *r)
{
    for (size_t j = 0; j < r->n_columns; j++)
        free(r->names[j]);
    free(r->names);
    free(r->hints);
    free(r->seen_value);
    free(r->row_lines);
    free(r->positions);
    buf_free(&r->text);
}

/* Writes one field, quoted when it holds the delimiter, a quote or a line
   break; counts the line breaks it holds. */
static void put_field(sql_rows *r, const char *text, size_t length)
{
    if (r->column > 0)
        buf_putc(&r->text, ',');
    bool quote = false;
    for (size_t i = 0; i < length && !quote; i++)
        quote = text[i] == ',' || text[i] == '"' || text[i] == '\r' || text[i] == '\n';
    if (!quote) {
        buf_put(&r->text, text, length);
        return;
    }
    buf_putc(&r->text, '"');
    for (size_t i = 0; i < length; i++) {
        if (text[i] == '"')
            buf_putc(&r->text, '"');
        r->line += text[i] == '\n' ||
                   (text[i] == '\r' && (i + 1 == length || text[i + 1] != '\n'));
        buf_putc(&r->text, text[i]);
    }
    buf_putc(&r->text, '"');
}

void sql_rows_column(sql_rows *r, const char *name, spec_kind hint)
{
    r->names = xrealloc(r->names, (r->n_columns + 1) * sizeof *r->names);
    r->hints = xrealloc(r->hints, (r->n_columns + 1) * sizeof *r->hints);
    r->seen_value = xrealloc(r->seen_value, (r->n_columns + 1) * sizeof *r->seen_value);
    r->names[r->n_columns] = xstrdup(name);
    r->hints[r->n_columns] = hint;
    r->seen_value[r->n_columns] = false;
    r->column = r->n_columns++;
    put_field(r, name, strlen(name));
    r->column = r->n_columns;
}

void sql_rows_set_key(sql_rows *r, const char *key)
{
    for (size_t j = 0; key && j < r->n_columns; j++)
        if (strcmp(r->names[j], key) == 0)
            r->key = j;
    r->column = 0;
}

/* The key's value as a row position: a whole number from 1 to 2^32 - 1. */
static bool key_position(const char *text, size_t length, uint32_t *out)
{
    uint64_t v = 0;
    if (length == 0 || length > 10)
        return false;
    for (size_t i = 0; i < length; i++) {
        if (text[i] < '0' || text[i] > '9')
            return false;
        v = v * 10 + (uint64_t)(text[i] - '0');
    }
    if (v == 0 || v > UINT32_MAX)
        return false;
    *out = (uint32_t)v;
    return true;
}

void sql_rows_field(sql_rows *r, const char *text, size_t length)
{
    if (r->column == 0) {     /* a new record */
        if (r->n_rows == 0) { /* end of the header */
            buf_putc(&r->text, '\n');
            r->line++;
        }
        xgrow((void **)&r->row_lines, &r->capacity, r->n_rows + 1, sizeof(uint32_t));
        r->row_lines[r->n_rows] = (uint32_t)r->line;
        if (r->key != SIZE_MAX || r->sheet)
            r->positions = xrealloc(r->positions, r->capacity * sizeof(uint32_t));
    }
    if (text)
        r->seen_value[r->column] = true;
    if (r->column == r->key) {
        uint32_t position = 0;
        if (!text || !key_position(text, length, &position)) {
            if (!r->key_bad)
                r->key_bad_row = r->n_rows + 1;
            r->key_bad = true;
        }
        r->positions[r->n_rows] = position;
    }
    put_field(r, text ? text : "", text ? length : 0);
    r->column++;
}

void sql_cell_name(buf *out, unsigned column, unsigned row)
{
    char letters[8];
    size_t n = 0;
    for (unsigned c = column; c > 0; c = (c - 1) / 26)
        letters[n++] = (char)('A' + (c - 1) % 26);
    while (n > 0)
        buf_putc(out, letters[--n]);
    buf_printf(out, "%u", row);
}

void sql_rows_end_sheet_row(sql_rows *r, uint32_t position)
{
    if (r->column == 0) /* a row of no fields cannot happen: the header has some */
        return;
    r->positions[r->n_rows] = position;
    sql_rows_end_row(r);
}

void sql_rows_end_row(sql_rows *r)
{
    buf_putc(&r->text, '\n');
    r->line++;
    r->n_rows++;
    r->column = 0;
}

/* ---- reading --------------------------------------------------------------- */

/* The column of the field that starts at byte column (1-based) of the
   line starting at p. */
static size_t field_of(const char *p, size_t column)
{
    size_t field = 0;
    bool quoted = false;
    for (size_t i = 0; i + 1 < column && p[i]; i++) {
        if (p[i] == '"')
            quoted = !quoted;
        else if (p[i] == ',' && !quoted)
            field++;
    }
    return field;
}

/* The start of line (1-based) of the canonical text. */
static const char *line_start(const sql_rows *r, size_t line)
{
    const char *p = r->text.data;
    for (size_t l = 1; l < line && p; l++) {
        p = strchr(p, '\n');
        p = p ? p + 1 : NULL;
    }
    return p ? p : r->text.data;
}

/* Moves the messages the reader located in the canonical text (path,
   then ":line:column: error: ") to the spec's query. */
static void relocate_messages(const sql_rows *r, const spec *s, const char *path,
                              error_list *errors, size_t first)
{
    size_t n = strlen(path);
    src_mark at = s->data.query ? s->data.query_at : s->data.table_at;
    for (size_t i = first; i < errors->count; i++) {
        char *message = errors->messages[i];
        unsigned long line, column;
        int used = 0;
        if (strncmp(message, path, n) != 0 || message[n] != ':' ||
            sscanf(message + n, ":%lu:%lu: error: %n", &line, &column, &used) != 2 || !used)
            continue;
        buf where;
        buf_init(&where);
        if (r->sheet) {
            size_t row = 0;
            while (line > 1 && row + 1 < r->n_rows && r->row_lines[row + 1] <= line)
                row++;
            size_t field = field_of(line_start(r, line), column);
            buf place;
            buf_init(&place);
            buf_printf(&place, "%s:%s!", path, r->sheet);
            sql_cell_name(&place, r->first_column + (unsigned)field,
                          line <= 1 ? r->header_row : r->positions[row]);
            error_list messages;
            error_list_init(&messages);
            error_at(&messages, place.data, (src_mark){0, 0}, "%s", message + n + used);
            free(errors->messages[i]);
            errors->messages[i] = messages.messages[0];
            messages.count = 0;
            error_list_free(&messages);
            buf_free(&place);
            buf_free(&where);
            continue;
        }
        if (line <= 1) {
            buf_puts(&where, "in the names of the result's columns: ");
        } else {
            size_t row = 0;
            while (row + 1 < r->n_rows && r->row_lines[row + 1] <= line)
                row++;
            size_t field = field_of(line_start(r, line), column);
            buf_printf(&where, "in row %zu of the result", row + 1);
            if (r->positions)
                buf_printf(&where, " (key %s = %u)", r->names[r->key], r->positions[row]);
            if (field < r->n_columns)
                buf_printf(&where, ", column '%s'", r->names[field]);
            buf_puts(&where, ": ");
        }
        buf_puts(&where, message + n + used);
        error_list messages;
        error_list_init(&messages);
        error_at(&messages, s->path, at, "%s", where.data);
        free(errors->messages[i]);
        errors->messages[i] = messages.messages[0];
        messages.messages[0] = NULL;
        messages.count = 0;
        error_list_free(&messages);
        buf_free(&where);
    }
}

/* The rows' problems that the text reader would not see as such: no rows,
   a column NULL in every row, a key that cannot name the rows. */
static bool check_rows(const sql_rows *r, const spec *s, const char *path,
                       error_list *errors)
{
    src_mark at = s->data.query ? s->data.query_at : s->data.table_at;
    if (r->sheet && r->n_rows == 0) {
        buf place;
        buf_init(&place);
        buf_printf(&place, "%s:%s!", path, r->sheet);
        sql_cell_name(&place, r->first_column, r->header_row + 1);
        error_at(
            errors, place.data, (src_mark){0, 0},
            "the sheet has a header in row %u and no data rows below it; add the rows, "
            "or point data.header_row at the header",
            r->header_row);
        buf_free(&place);
        return false;
    }
    if (r->sheet)
        return true;
    if (r->n_rows == 0) {
        error_at(errors, s->path, at,
                 "the %s of %s has no rows; check its conditions against the database",
                 s->data.query ? "query" : "table", path);
        return false;
    }
    bool ok = true;
    for (size_t j = 0; j < r->n_columns; j++)
        if (!r->seen_value[j]) {
            error_at(
                errors, s->path, at,
                "column '%s' of the result is NULL in every row, so nothing can be "
                "learned from it; leave it out of the query, or fill it in the database",
                r->names[j]);
            ok = false;
        }
    if (s->data.key && r->key == SIZE_MAX) {
        buf hint;
        buf_init(&hint);
        hint_closest(&hint, s->data.key, (const char *const *)r->names, r->n_columns,
                     "the columns are");
        error_at(errors, s->path, s->data.key_at,
                 "data.key names column '%s', which is not in "
                 "the result%s",
                 s->data.key, hint.data);
        buf_free(&hint);
        return false;
    }
    if (r->key_bad) {
        error_at(
            errors, s->path, s->data.key_at,
            "key column '%s' must hold whole numbers from 1 to 4294967295, which name the "
            "rows in the report, but row %zu has another value; choose another key",
            r->names[r->key], r->key_bad_row);
        return false;
    }
    for (size_t i = 1; r->positions && i < r->n_rows; i++)
        if (r->positions[i] == r->positions[i - 1]) {
            error_at(
                errors, s->path, s->data.key_at,
                "key column '%s' has the value %u twice (rows %zu and %zu), so it does "
                "not name the rows; choose a key with one value per row",
                r->names[r->key], r->positions[i], i, i + 1);
            return false;
        }
    return ok;
}

/* Does the report folder store a database's rows? As for a data file:
   when the spec says so, or by default up to SPEC_ARCHIVE_DEFAULT_MAX. A
   run that writes no report (lint, scaffold) never keeps them. */
static bool stores_rows(const spec *s, unsigned flags, size_t length)
{
    bool database = s->data.source == SPEC_SOURCE_SQLITE || s->data.source == SPEC_SOURCE_POSTGRES;
    if (!database || (flags & (DATA_LOAD_NO_DIGEST | DATA_LOAD_SCAFFOLD)))
        return false;
    return s->report.archive_data_given ? s->report.archive_data
                                        : length <= SPEC_ARCHIVE_DEFAULT_MAX;
}

/* Moves the canonical text and the kinds the database implied into the
   table, for the copy the report folder stores. */
static void keep_rows(sql_rows *r, data_table *t)
{
    t->stored_length = r->text.length;
    t->stored_text = buf_detach(&r->text);
    t->n_stored_kinds = r->n_columns;
    t->stored_kinds = xcalloc(r->n_columns ? r->n_columns : 1, sizeof(spec_kind));
    for (size_t j = 0; j < r->n_columns; j++)
        t->stored_kinds[j] = r->hints[j];
}

data_table *sql_rows_load(sql_rows *r, const spec *s, unsigned flags, const char *path,
                          error_list *errors)
{
    if (!check_rows(r, s, path, errors))
        return NULL;
    /* The spec as the text reader sees it: the database's types become
       declarations of the columns the spec leaves undeclared. */
    spec copy = *s;
    copy.data.columns = xcalloc(s->data.n_columns + r->n_columns, sizeof(spec_column));
    if (s->data.n_columns)
        memcpy(copy.data.columns, s->data.columns, s->data.n_columns * sizeof(spec_column));
    for (size_t j = 0; j < r->n_columns; j++) {
        if (r->hints[j] == SPEC_KIND_INFER)
            continue;
        spec_column *declared = (spec_column *)spec_find_column(&copy, r->names[j]);
        if (declared) { /* declared without a kind: a unit, a label */
            if (declared->kind == SPEC_KIND_INFER)
                declared->kind = r->hints[j];
            continue;
        }
        spec_column *hint = &copy.data.columns[copy.data.n_columns++];
        hint->name = r->names[j];
        hint->kind = r->hints[j];
        hint->origin = NAN;
        hint->at = s->data.query ? s->data.query_at : s->data.table_at;
    }
    copy.data.delimiter = ',';
    copy.data.decimal_comma = false;
    data_positions positions = {r->row_lines, r->positions, r->n_rows, "row"};
    size_t first = errors->count;
    data_table *t = data_load_rows_text(path, r->text.data, r->text.length, &copy, flags,
                                        &positions, errors);
    relocate_messages(r, s, path, errors, first);
    free(copy.data.columns);
    if (t && stores_rows(s, flags, r->text.length))
        keep_rows(r, t);
    return t;
}

/* ---- numbers ---------------------------------------------------------------- */

/* m / 10^k is correctly rounded when m < 2^53 and k ≤ 22, both being exact
   doubles (Clinger's fast path, "How to read floating point numbers
   accurately", PLDI 1990); so when it equals x, the decimal m·10^-k reads
   back to x, and the first such k gives the fewest decimals. printf and
   strtod cost twenty times more, for a million values a second. */
void sql_format_double(double x, char *out, size_t size)
{
    static const double powers[] = {1e0, 1e1, 1e2,  1e3,  1e4,  1e5,  1e6,  1e7,
                                    1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15};
    double magnitude = fabs(x);
    for (int k = 0; k < 16 && magnitude < 9e15 / powers[k] && (x != 0 || k == 0); k++) {
        double scaled = nearbyint(magnitude * powers[k]);
        if (scaled / powers[k] != magnitude)
            continue;
        uint64_t m = (uint64_t)scaled;
        char digits[24];
        int n = 0;
        do
            digits[n++] = (char)('0' + m % 10);
        while ((m /= 10) > 0);
        while (n <= k)
            digits[n++] = '0'; /* a leading zero before the point */
        size_t at = 0;
        if (signbit(x) && at + 1 < size)
            out[at++] = '-';
        for (int i = n - 1; i >= 0 && at + 2 < size; i--) {
            out[at++] = digits[i];
            if (i == k && k > 0)
                out[at++] = '.';
        }
        out[at] = '\0';
        return;
    }
    fmt_roundtrip(out, size, x);
}

/* ---- queries ---------------------------------------------------------------- */

void sql_quote_identifier(buf *out, const char *name)
{
    buf_putc(out, '"');
    for (const char *p = name; *p; p++) {
        if (*p == '"')
            buf_putc(out, '"');
        buf_putc(out, *p);
    }
    buf_putc(out, '"');
}

char *sql_make_query(const spec *s, const char *fallback_order)
{
    buf q;
    buf_init(&q);
    if (s->data.query && !s->data.key)
        return xstrdup(s->data.query);
    if (s->data.query) {
        /* Without its final semicolons, to fit inside parentheses. */
        size_t length = strlen(s->data.query);
        while (length && strchr(" \t\r\n;", s->data.query[length - 1]))
            length--;
        buf_printf(&q, "SELECT * FROM (%.*s) AS fitproof_rows", (int)length, s->data.query);
    } else {
        /* schema.table: each part quoted on its own */
        buf_puts(&q, "SELECT * FROM ");
        char *name = xstrdup(s->data.table);
        char *part = name;
        for (char *dot; (dot = strchr(part, '.')); part = dot + 1) {
            *dot = '\0';
            sql_quote_identifier(&q, part);
            buf_putc(&q, '.');
        }
        sql_quote_identifier(&q, part);
        free(name);
    }
    if (s->data.key) {
        buf_puts(&q, " ORDER BY ");
        sql_quote_identifier(&q, s->data.key);
    } else if (fallback_order) {
        buf_printf(&q, " ORDER BY %s", fallback_order);
    }
    return buf_detach(&q);
}
