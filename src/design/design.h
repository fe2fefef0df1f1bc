/*
 * design.h — the design matrix of one model: which rows enter the fit, and
 * one column per coefficient (intercept, numeric columns, indicator columns
 * for category levels against the reference level, products for
 * interactions, raw powers for polynomial terms).
 */
#ifndef FITPROOF_DESIGN_H
#define FITPROOF_DESIGN_H

#include <gsl/gsl_matrix.h>
#include <gsl/gsl_vector.h>

#include "../data/data.h"

/* One factor of a coefficient: a numeric column (level NULL) raised to
   power, or the indicator of one level of a category (power 1). */
typedef struct {
    const data_column *column; /* borrowed from the table */
    const char *level;         /* borrowed; NULL for a numeric column */
    int32_t code;              /* the level's code in the column; -1 numeric */
    int power;
} design_part;

typedef struct {
    char *label;          /* "(intercept)", "wc_ratio", "admixture = plasticizer",
                             "age_days × admixture = plasticizer", "x^2" */
    design_part *parts;   /* empty for the intercept */
    size_t n_parts;
    size_t term;          /* index of the spec term; SIZE_MAX for the intercept */
} design_coef;

typedef struct {
    const spec_model *model;     /* borrowed */
    const data_column *response; /* borrowed */
    gsl_matrix *x;               /* n_used × n_coefs */
    gsl_vector *y;
    gsl_vector *weights;         /* per used row; NULL when the model has no weights */
    size_t n_used;
    size_t n_dropped;            /* rows with a missing value in a used column */
    uint32_t *dropped_lines;     /* their line numbers in the data file */
    size_t *used_rows;           /* table row of each design row */
    design_coef *coefs;
    size_t n_coefs;
} design;

/* Builds the design of model m. Returns NULL after recording errors (a term
   naming an unknown column, a category response, …) located in the spec.
   Caller frees with design_free. */
design *design_new(const spec *s, const spec_model *m, const data_table *t, error_list *errors);
void design_free(design *d);

/* Entry (i, c) of the design recomputed in long double from the data, so
   that powers and products keep 64-bit significands; the double matrix x
   holds the same entries rounded. */
long double design_entry(const design *d, size_t i, size_t c);

#endif
