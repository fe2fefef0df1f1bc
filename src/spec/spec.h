/*
 * spec.h — the analysis spec: what to read, how to read it, which models to
 * fit. spec_load() parses a YAML file and validates everything that can be
 * checked without the data; spec_check_against_data() lives in the design
 * stage, which knows the columns.
 */
#ifndef FITPROOF_SPEC_H
#define FITPROOF_SPEC_H

#include "../util/util.h"

typedef enum {
    SPEC_KIND_INFER = 0, /* decided from the data */
    SPEC_KIND_NUMERIC,
    SPEC_KIND_CATEGORY
} spec_kind;

/* Per-column declarations from data.columns. */
typedef struct {
    char *name;
    spec_kind kind;
    char *unit;      /* NULL when not given */
    char *label;     /* words used in sentences; NULL when not given */
    char *reference; /* reference level of a category; NULL = first sorted */
    src_mark at;
    src_mark reference_at;
} spec_column;

typedef enum {
    SPEC_TERM_MAIN,        /* one column */
    SPEC_TERM_INTERACTION, /* product of two or more columns */
    SPEC_TERM_POLYNOMIAL   /* raw powers 1..degree of one numeric column */
} spec_term_kind;

typedef struct {
    spec_term_kind kind;
    char **columns; /* one for MAIN and POLYNOMIAL */
    size_t n_columns;
    int degree;     /* POLYNOMIAL only */
    src_mark at;
    src_mark *column_at; /* where each column name was written */
} spec_term;

typedef struct {
    char *id;
    char *response;
    spec_term *terms;
    size_t n_terms;
    bool intercept;
    src_mark at;
    src_mark response_at;
} spec_model;

typedef struct {
    char *path;          /* the spec file as given on the command line */
    char *source;        /* its full text, for the report's appendix */
    size_t source_length;
    char *title;
    char *data_path;     /* as written in the spec */
    char *data_resolved; /* relative to the spec's folder */
    src_mark data_path_at;
    spec_column *columns;
    size_t n_columns;
    spec_model *models;
    size_t n_models;
} spec;

/* Parses and validates the spec at path. Returns NULL when errors were
   recorded in errors. Caller frees with spec_free. */
spec *spec_load(const char *path, error_list *errors);
/* Parses spec text already in memory (path is used in messages only). */
spec *spec_parse(const char *path, const char *text, size_t length, error_list *errors);
void spec_free(spec *s);

/* The declaration for a column, or NULL when it was not declared. */
const spec_column *spec_find_column(const spec *s, const char *name);

#endif
