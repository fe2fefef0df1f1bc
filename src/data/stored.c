/*
 * stored.c — a SQL source's rows read back from the copy a report folder
 * stores (report.archive_data), so that verify rebuilds a report without
 * the database. The copy is the canonical text form of sql.h; each field
 * is fed through sql_rows again, so that the text, its digest, the row
 * positions and the kinds the database's types implied are exactly those
 * of the build.
 */
#include <stdlib.h>
#include <string.h>

#include "sql.h"

/* One field of the canonical form starting at text[*at]: unquoted up to
   ',' or '\n', or quoted with its quotes doubled. Returns the field's
   text (caller frees) and moves *at past it; *end_of_record is true when
   a '\n' (or the end) follows. NULL when the text is not in that form. */
static char *next_field(const char *text, size_t length, size_t *at, bool *end_of_record,
                        size_t *field_length)
{
    buf field;
    buf_init(&field);
    size_t i = *at;
    if (i < length && text[i] == '"') {
        for (i++;; i++) {
            if (i >= length) {
                buf_free(&field);
                return NULL;
            }
            if (text[i] == '"') {
                if (i + 1 < length && text[i + 1] == '"') {
                    buf_putc(&field, '"');
                    i++;
                    continue;
                }
                i++;
                break;
            }
            buf_putc(&field, text[i]);
        }
    } else {
        while (i < length && text[i] != ',' && text[i] != '\n') {
            if (text[i] == '"' || text[i] == '\r') {
                buf_free(&field);
                return NULL;
            }
            buf_putc(&field, text[i++]);
        }
    }
    if (i < length && text[i] != ',' && text[i] != '\n') {
        buf_free(&field);
        return NULL;
    }
    *end_of_record = i >= length || text[i] == '\n';
    *at = i < length ? i + 1 : i;
    *field_length = field.length;
    return buf_detach(&field);
}

/* Feeds the header and every record of text into r. False when the text
   is not in the canonical form or its header does not have one kind per
   column. */
static bool feed_rows(const spec *s, const char *text, size_t length, sql_rows *r)
{
    size_t at = 0, field_length, column = 0;
    bool end = false, header = true;
    while (at < length) {
        char *field = next_field(text, length, &at, &end, &field_length);
        if (!field)
            return false;
        if (header) {
            if (column >= s->data.n_stored_kinds) {
                free(field);
                return false;
            }
            sql_rows_column(r, field, s->data.stored_kinds[column]);
        } else if (column < r->n_columns) {
            /* An empty field is NULL or an empty text alike in the form;
               the build refused a column of NULLs only, so either reads
               back the same. */
            sql_rows_field(r, field, field_length);
        } else {
            free(field);
            return false;
        }
        free(field);
        column++;
        if (!end)
            continue;
        if (header) {
            if (column != s->data.n_stored_kinds)
                return false;
            sql_rows_set_key(r, s->data.key);
            header = false;
        } else if (column != r->n_columns) {
            return false;
        } else {
            sql_rows_end_row(r);
        }
        column = 0;
    }
    return !header && column == 0;
}

data_table *data_load_stored(const spec *s, unsigned flags, error_list *errors)
{
    src_mark whole = {0, 0};
    size_t length;
    const char *why;
    char *text = file_read_limited(s->data.stored_rows, DATA_FILE_MAX, &length, &why);
    if (!text) {
        error_at(errors, s->data.stored_rows, whole, "cannot read the stored rows: %s", why);
        return NULL;
    }
    sql_rows r;
    sql_rows_init(&r);
    data_table *t = NULL;
    if (!feed_rows(s, text, length, &r))
        error_at(errors, s->data.stored_rows, whole,
                 "these are not the rows a build stored (the text or the manifest's column "
                 "kinds were changed); rebuild the report from the database");
    else
        t = sql_rows_load(&r, s, flags, s->data.stored_rows, errors);
    if (t) {
        t->source_query = xstrdup(s->data.stored_query ? s->data.stored_query : "");
        t->source_version = xstrdup(s->data.stored_server ? s->data.stored_server : "");
    }
    sql_rows_free(&r);
    free(text);
    return t;
}
