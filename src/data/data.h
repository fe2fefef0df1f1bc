/*
 * data.h — the data table: the CSV file read column-wise, each column
 * numeric (doubles, NaN for a missing cell) or a category (level codes,
 * -1 for a missing cell). Kinds come from the spec or are inferred.
 */
#ifndef FITPROOF_DATA_H
#define FITPROOF_DATA_H

#include <stdint.h>

#include "../spec/spec.h"

typedef enum { DATA_NUMERIC, DATA_CATEGORY } data_kind;

typedef struct {
    char *name;
    data_kind kind;
    double *numbers;   /* DATA_NUMERIC: one per row, NaN when missing */
    int32_t *codes;    /* DATA_CATEGORY: one per row, -1 when missing */
    char **levels;     /* DATA_CATEGORY: level names in sorted order */
    size_t *level_counts;
    size_t n_levels;
    size_t reference;  /* DATA_CATEGORY: index of the reference level */
    size_t n_missing;
} data_column;

typedef struct {
    char *path;        /* as opened */
    data_column *columns;
    size_t n_columns;
    size_t n_rows;
    uint32_t *lines;   /* 1-based line in the file where each row starts */
} data_table;

/* Reads the file the spec names, applying its column declarations.
   Returns NULL after recording errors. Caller frees with data_table_free. */
data_table *data_load(const spec *s, error_list *errors);
/* Reads CSV text already in memory; path is used in messages. */
data_table *data_parse(const char *path, const char *text, size_t length,
                       const spec *s, error_list *errors);
void data_table_free(data_table *t);

/* The column named name, or NULL. */
const data_column *data_find(const data_table *t, const char *name);

/* Parses a whole field as a decimal number (optional sign, digits with an
   optional point, optional exponent; surrounding blanks allowed). Returns
   false for anything else, including "nan", "inf" and hexadecimal. */
bool data_parse_number(const char *text, size_t length, double *out);

#endif
