/*
 * data.h — the data table: the CSV file read column-wise, each column
 * numeric (doubles, NaN for a missing cell) or a category (level codes,
 * -1 for a missing cell). Kinds come from the spec or are inferred. The
 * table holds the rows the spec's where filter keeps, then the derived
 * columns, and the accounting a report needs (rows read, rows removed and
 * their lines, the file's SHA-256).
 */
#ifndef FITPROOF_DATA_H
#define FITPROOF_DATA_H

#include <stdint.h>

#include "../spec/spec.h"

/* A declared category may have at most this many levels. */
#define DATA_MAX_LEVELS 1000
/* The data file may hold at most this many bytes (it is read into memory
   whole); a larger one is a located error before anything is read. */
#define DATA_FILE_MAX ((size_t)16 << 30)

typedef enum { DATA_NUMERIC, DATA_CATEGORY } data_kind;

typedef struct {
    char *name;
    data_kind kind;
    double *numbers;   /* DATA_NUMERIC: one per row, NaN when missing */
    int32_t *codes;    /* DATA_CATEGORY: one per row, -1 when missing */
    char **levels;     /* DATA_CATEGORY: the levels with at least one row, in the
                          declared order, else in byte order */
    size_t *level_counts;
    size_t n_levels;
    size_t reference;  /* DATA_CATEGORY: index of the reference level */
    char **absent_levels; /* levels no kept row has, not coded: declared but never
                             seen, or seen only in rows the where filter removed */
    size_t n_absent_levels;
    size_t n_missing;  /* missing cells among the kept rows */
    /* DATA_NUMERIC: how many kept rows have a number, and the smallest,
       largest and mean of those numbers (summed in long double), set when
       the table is finished (unless DATA_LOAD_NO_SUMMARY): what the
       report's data section states. */
    size_t n_values;
    double value_min, value_max, value_mean;
    /* A derived column (numeric): how it was computed. derive is borrowed
       from the spec; NULL for a column of the file. */
    const spec_derive *derive;
    double derive_mean; /* CENTER, STANDARDIZE: the mean subtracted */
    double derive_sd;   /* STANDARDIZE: the standard deviation divided by */
    /* DATA_LOAD_SCAFFOLD only: integers beyond 2^53 made this inferred
       column a category. */
    bool big_integers;
    /* A date column (numeric): its values count date_unit ("day", "hour",
       "week"; static text) from date_origin, in days since 1970-01-01 UTC:
       the spec's origin, else the earliest date of the rows kept. */
    bool is_date;
    bool origin_is_earliest;
    double date_origin;
    const char *date_unit;
    /* An inferred column that is a category: where its first cell that is
       not a number was written (1-based line and byte column; 0 when the
       column was never read as numbers). */
    size_t first_text_line, first_text_column;
    char *first_text; /* that cell's text (at most 80 bytes), or NULL */
} data_column;

typedef struct {
    char *path;        /* as opened */
    data_column *columns; /* the file's columns, then the derived ones */
    size_t n_columns;
    size_t n_file_columns;
    size_t n_rows;     /* rows kept by the where filter */
    uint32_t *lines;   /* 1-based line in the file where each kept row starts */
    size_t rows_read;  /* data rows in the file (header and blank lines excluded) */
    size_t n_removed;  /* rows the where filter removed */
    uint32_t *removed_lines; /* their lines, in file order */
    uint64_t file_bytes;
    char sha256[65];   /* hex SHA-256 of the file's bytes; "" when not computed */
    /* DATA_LOAD_SCAFFOLD only: missing-value words (NA, nan, …) that kept
       an otherwise numeric column from being read as numbers. */
    char **suggested_missing;
    size_t n_suggested_missing;
    /* A SQL source: the query run (the spec's, or the one made for its
       table) and the database's version; NULL for a text file. For such a
       source lines[] hold each row's position in the result (1-based), or
       its key's value, and sha256 is the digest of the rows in the
       canonical text form (sql.h). */
    char *source_query;
    char *source_version;
    char *source_sheet; /* a spreadsheet: the sheet read; NULL otherwise */
    /* A SQL source whose rows the report folder is to store
       (report.archive_data, given or by default): the rows in the canonical
       text form (sql.h), whose SHA-256 is sha256, and per column of that
       text the kind its database type implied (SPEC_KIND_INFER: none).
       NULL otherwise. */
    char *stored_text;
    size_t stored_length;
    spec_kind *stored_kinds;
    size_t n_stored_kinds;
    /* What lines[] hold, as a report names one: "line" (a text file), "row"
       (a position in a SQL result, a SQL key column's value, or a
       spreadsheet's row number). Static text. */
    const char *position_word;
} data_table;

/* Flags of data_load_with. */
enum {
    DATA_LOAD_NO_DIGEST = 1, /* skip the SHA-256 unless the spec pins one */
    DATA_LOAD_SCAFFOLD = 2,  /* for scaffold: inferred columns with NaN words or
                                huge integers are described, not refused */
    DATA_LOAD_NO_SUMMARY = 4 /* leave n_values and the value summaries unset: a
                                check that writes no report (lint, scaffold) */
};

/* Reads the file the spec names, applying its column declarations, where
   filter and derived columns. Returns NULL after recording errors. Caller
   frees with data_table_free. data_load is data_load_with(s, 0, errors). */
data_table *data_load(const spec *s, error_list *errors);
data_table *data_load_with(const spec *s, unsigned flags, error_list *errors);
/* Reads CSV text already in memory; path is used in messages. */
data_table *data_parse(const char *path, const char *text, size_t length,
                       const spec *s, error_list *errors);
void data_table_free(data_table *t);

/* Appends a hint for a column name that is not in t: "; did you mean
   'x'?", or the list of the columns. */
void data_suggest_column(buf *out, const data_table *t, const char *name);

/* For a column the data made a category although a later stage needs
   numbers (a response, weights): appends "'a' on line 3 of data.csv is
   not a number" and how to fix it ("; correct the values, or …" — the
   decimal-comma setting when the text reads as one); what_else ends the
   message ("choose a numeric column"). */
void data_explain_category(buf *out, const data_table *t, const data_column *c, const spec *s,
                           const char *what_else);

/* The column named name, or NULL. Borrowed from the table. */
const data_column *data_find(const data_table *t, const char *name);

/* A date written in the spec (a predict value: YYYY-MM-DD, or a date-time
   with its offset, or without one in the spec's time zone) as the value
   date column c holds: units counted from its origin. False when text is
   not such a date. */
bool data_date_value(const data_column *c, const spec *s, const char *text, double *out);

/* What the first lines of a file suggest about how it is written. Only
   ever offered in messages and by scaffold: never applied silently. */
typedef struct {
    char delimiter;       /* ',', ';', '\t' or '|': the most frequent on the header line */
    size_t header_fields; /* the header's fields with that delimiter */
    bool decimal_comma;   /* later lines hold numbers with a decimal comma */
    const char *encoding; /* "UTF-16" or "UTF-32" when the bytes are, else NULL */
} data_sniffed;

/* Looks at the first 64 KiB of bytes. */
void data_sniff(const char *bytes, size_t length, data_sniffed *out);
/* Appends "the file looks semicolon-separated with decimal commas; add
   delimiter: \";\" and decimal: comma under data" when what was sniffed
   differs from how data says to read the file; false (nothing appended)
   when it does not. */
bool data_sniff_hint(buf *out, const data_sniffed *sniffed, const spec_data *data);

/* Parses a whole field as a decimal number (optional sign, digits with an
   optional point, optional exponent; surrounding blanks allowed), rounded
   correctly (the same double as strtod in the C locale, in any locale).
   Returns false for anything else, including "nan", "inf", hexadecimal and
   values too large for a double. */
bool data_parse_number(const char *text, size_t length, double *out);

#endif
