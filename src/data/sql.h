/*
 * sql.h — private to the data stage: the rows of a database source
 * (sqlite.c, postgres.c) written down in one canonical text form and read
 * by the same reader as a CSV file, so that kinds, levels, missing values,
 * where, derive and the digest behave exactly as for a text file.
 *
 * The canonical form: UTF-8, fields separated by ',', records ended by
 * '\n', a header of the result's column names, then one record per row in
 * the result's order. NULL is an empty field; a number is written as the
 * database gives it in text (integers in decimal, a double as the shortest
 * text that reads back to the same double); a field holding ',', '"', CR
 * or LF is quoted with its quotes doubled. Its SHA-256 is the data digest
 * of a SQL source.
 */
#ifndef FITPROOF_DATA_SQL_H
#define FITPROOF_DATA_SQL_H

#include "internal.h"

typedef struct {
    buf text;
    size_t n_columns;
    char **names;
    spec_kind *hints;    /* per column: the kind the database's type implies,
                            used unless the spec declares one */
    bool *seen_value;    /* per column: some row is not NULL */
    size_t column;       /* the next field of the current record */
    size_t line;         /* the line the next record starts on */
    uint32_t *row_lines; /* per row: the line where its record starts */
    uint32_t *positions; /* per row: its key's value; NULL without a key */
    size_t n_rows;
    size_t capacity;
    size_t key;   /* the key column, or SIZE_MAX */
    bool key_bad; /* a key value that is not a whole number 1..2^32-1 */
    size_t key_bad_row;
    /* A spreadsheet's rows (xlsx.c): positions hold sheet rows, and
       messages are located at cells, "FILE:SHEET!C17". */
    const char *sheet;
    unsigned first_column; /* the sheet column of the first field, from 1 */
    unsigned header_row;
} sql_rows;

void sql_rows_init(sql_rows *r);
void sql_rows_free(sql_rows *r);
/* Adds a column to the header, with the kind its type implies. */
void sql_rows_column(sql_rows *r, const char *name, spec_kind hint);
/* The next field of the current row: text of length bytes, or NULL. */
void sql_rows_field(sql_rows *r, const char *text, size_t length);
void sql_rows_end_row(sql_rows *r);
/* A spreadsheet row: ends it, at sheet row position. */
void sql_rows_end_sheet_row(sql_rows *r, uint32_t position);
/* Appends a cell reference (C17) for a sheet column and row, both from 1. */
void sql_cell_name(buf *out, unsigned column, unsigned row);
/* After the header: the column named key (the spec's data.key, or NULL)
   gives each row its position. */
void sql_rows_set_key(sql_rows *r, const char *key);

/* Reads the rows into a table, as data_load would read the same text from
   a file; path names the source in messages. Errors the reader finds in a
   row are located at the spec's query (or table) with the row and column
   named. Returns NULL after recording errors. */
data_table *sql_rows_load(sql_rows *r, const spec *s, unsigned flags, const char *path,
                          error_list *errors);

/* A double as the canonical form writes it: the fewest decimals (up to 15)
   whose text reads back to the same double, else the shortest %.*g that
   does (fmt_roundtrip). out needs 32 bytes. */
void sql_format_double(double x, char *out, size_t size);

/* "name" with its quotes doubled, for a query made from data.table. */
void sql_quote_identifier(buf *out, const char *name);
/* The query to run: the spec's, the table's rows, either ordered by the
   key when one is named. fallback_order orders a table without a key
   (NULL: none). Caller frees. */
char *sql_make_query(const spec *s, const char *fallback_order);

/* ---- the sources ---- */
data_table *data_load_sqlite(const spec *s, unsigned flags, error_list *errors);
data_table *data_load_postgres(const spec *s, unsigned flags, error_list *errors);
data_table *data_load_xlsx(const spec *s, unsigned flags, error_list *errors);
/* The rows a report folder stores for a SQL source (s->data.stored_rows,
   set by verify), read as the database's were. */
data_table *data_load_stored(const spec *s, unsigned flags, error_list *errors);

#endif
