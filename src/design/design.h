/*
 * design.h — the design matrix of one model: which rows enter the fit, their
 * weights, and one column per coefficient (intercept, numeric columns,
 * category levels in treatment or sum coding, products for interactions,
 * raw powers for polynomial terms); also turns prediction rows of the spec
 * into design rows.
 */
#ifndef FITPROOF_DESIGN_H
#define FITPROOF_DESIGN_H

#include <gsl/gsl_matrix.h>
#include <gsl/gsl_vector.h>

#include "../data/data.h"

/* A category term whose column has more levels than this is refused. */
#define DESIGN_MAX_LEVELS 1000

/* design.x is filled only when n_used × n_coefs is at most this (32 MB of
   doubles); larger designs are read row by row with design_row/design_get. */
#define DESIGN_DENSE_MAX ((size_t)1 << 22)

/* How one factor of a coefficient is computed from a row. */
typedef enum {
    DESIGN_NUMERIC,    /* x^power */
    DESIGN_TREATMENT,  /* 1[x = level]: the level against the reference level */
    DESIGN_ALL_LEVELS, /* 1[x = level], no reference: a model without intercept gives
                          every level of its first category its own coefficient */
    DESIGN_SUM         /* 1[x = level] − 1[x = omitted]: sum (deviation) coding, the
                          level against the average of all levels */
} design_part_kind;

/* One factor of a coefficient. */
typedef struct {
    const data_column *column; /* borrowed from the table */
    const char *level;         /* borrowed; NULL for a numeric column */
    int32_t code;              /* the level's code in the column; -1 numeric */
    int power;                 /* 1 for a level */
    design_part_kind kind;
    const char *omitted;       /* DESIGN_SUM: the level without a coefficient of its
                                  own (the reference level, or the first level with
                                  rows when the reference has none); else NULL.
                                  Borrowed. */
    int32_t omitted_code;      /* DESIGN_SUM: its code; else -1 */
} design_part;

typedef struct {
    char *label;          /* "baseline value", "wc_ratio", "admixture = plasticizer",
                             "age_days × admixture = plasticizer", "x^2",
                             sum coding: "admixture: plasticizer vs average of levels" */
    design_part *parts;   /* empty for the intercept */
    size_t n_parts;
    size_t term;          /* index of the spec term; SIZE_MAX for the intercept */
} design_coef;

/* One spec term: its coefficients are contiguous in the design. */
typedef struct {
    char *label;                  /* "admixture", "age_days × admixture",
                                     "wc_ratio up to wc_ratio^3" */
    const data_column *columns[3]; /* borrowed; the columns the term involves */
    size_t n_columns;
    size_t first_coef;
    size_t n_coefs;
} design_term;

/* Rows left out because this column is missing there. A row missing several
   columns counts under each; design.n_dropped counts it once. */
typedef struct {
    const data_column *column; /* borrowed */
    size_t rows;
} design_missing;

/* A level of a category that no row used has (declared but never seen, or
   seen only in rows left out): a zero column in treatment coding, left out
   of sum coding. */
typedef struct {
    const data_column *column; /* borrowed */
    const char *level;         /* borrowed */
} design_level;

/* How many of the rows used have each level of a category predictor. */
typedef struct {
    const data_column *column; /* borrowed */
    size_t *rows;              /* column->n_levels entries */
} design_counts;

/* The range of a numeric predictor over the rows used, and the values at
   which readings that depend on it (interactions, polynomials) are given:
   the spec's `at` list for the column, else the median of the rows used. */
#define DESIGN_MAX_AT 8
typedef struct {
    const data_column *column; /* borrowed */
    double min, max;
    double median;
    double at[DESIGN_MAX_AT];
    size_t n_at;
    bool at_from_spec;
} design_range;

typedef struct {
    const spec_model *model;     /* borrowed */
    const data_column *response; /* borrowed */
    const data_column *weight;   /* borrowed; NULL when the model has no weights */
    gsl_matrix *x;               /* n_used × n_coefs, or NULL when that exceeds
                                    DESIGN_DENSE_MAX: then use design_row/design_get */
    gsl_vector *y;               /* the response per used row: a view of the response
                                    column (y_column) when every row is used */
    gsl_vector_view y_column;
    gsl_vector *weights;         /* per used row, finite and > 0; NULL when the
                                    model has no weights */
    size_t n_used;
    size_t n_dropped;            /* rows with a missing value in a used column */
    uint32_t *dropped_lines;     /* their line numbers in the data file */
    size_t *used_rows;           /* table row of each design row; NULL when every
                                    row is used (design_table_row reads i) */
    design_coef *coefs;
    size_t n_coefs;
    design_term *terms;          /* one per spec term, in spec order */
    size_t n_terms;
    design_missing *missing;     /* one per used column (response, term columns in
                                    spec order, weights), each once */
    size_t n_missing;
    design_range *ranges;        /* one per numeric predictor, in term order */
    size_t n_ranges;
    design_level *empty_levels;  /* levels of the model's categories without rows */
    size_t n_empty_levels;
    design_counts *counts;       /* one per category the model uses (terms only) */
    size_t n_counts;
    size_t *order;               /* design rows in the order of the model's order_by
                                    column (a stable sort; level order for a
                                    category), for autocorrelation-consistent
                                    errors; NULL without order_by or when the column
                                    is not usable (diagnostics then reports it) */
} design;

/* The table row of design row i. */
static inline size_t design_table_row(const design *d, size_t i)
{
    return d->used_rows ? d->used_rows[i] : i;
}

/* Builds the design of model m. Returns NULL after recording errors (a term
   naming an unknown column, a category response, a category with more than
   DESIGN_MAX_LEVELS levels, a weight that is not positive, …) located in the
   spec. Caller frees with design_free. */
design *design_new(const spec *s, const spec_model *m, const data_table *t, error_list *errors);
void design_free(design *d);

/* Records a warning (warning_at, located in the spec) for each likely
   mistake in model m's terms on the whole table t: a numeric column that
   looks like a row identifier used as a predictor, an interaction without
   its columns' main effects, an order_by column with many ties, a category
   with a level for nearly every row. Nothing is refused (warnings.c). */
void design_warnings(const spec *s, const spec_model *m, const data_table *t,
                     error_list *warnings);

/* Entry (i, c) of the design recomputed in long double from the data, so
   that powers and products keep 64-bit significands; design.x holds the
   same entries rounded. Unweighted. */
long double design_entry(const design *d, size_t i, size_t c);
/* Row i, all n_coefs entries, in long double (as design_entry). */
void design_row(const design *d, size_t i, long double *out);
/* Entry (i, c) as a double; works whether or not design.x is filled. */
double design_get(const design *d, size_t i, size_t c);
/* Rows first … first + count − 1, column-major: entry (first + i, c) goes to
   out[c * stride + i] (stride ≥ count); long double as design_entry. The
   fast way to stream a large design. */
void design_block(const design *d, size_t first, size_t count, long double *out,
                  size_t stride);
/* The same in double (products and powers rounded to double). */
void design_block_double(const design *d, size_t first, size_t count, double *out,
                         size_t stride);

/* A prediction row of the spec as a design row. */
typedef struct {
    const design_range *range; /* borrowed from the design */
    double value;              /* the requested value, outside [min, max] */
} design_outside;

typedef struct {
    const spec_predict_row *row; /* borrowed from the spec */
    long double *x;              /* n_coefs entries */
    design_outside *outside;     /* numeric values outside the rows' range */
    size_t n_outside;
} design_point;

/* Turns row (a spec prediction row for d's model) into a design row. Every
   predictor of the model must be given, numbers for numeric columns and
   known levels for categories. Returns NULL after recording errors located
   at the row's marks. Caller frees with design_point_free. */
design_point *design_point_new(const design *d, const spec *s, const spec_predict_row *row,
                               error_list *errors);
void design_point_free(design_point *p);

/* Is column coded by sum (deviation) coding in some coefficient of d? */
bool design_column_sum_coded(const design *d, const data_column *column);

#endif
