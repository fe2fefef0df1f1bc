/*
 * internal.h — private to the diagnostics stage: the shared view of a
 * fitted model (residuals, the fit's factor, design rows read in blocks),
 * small least-squares helpers, and the per-assumption computations that
 * diagnostics.c calls. Not part of fitproof's interface.
 */
#ifndef FITPROOF_DIAGNOSTICS_INTERNAL_H
#define FITPROOF_DIAGNOSTICS_INTERNAL_H

#include <gsl/gsl_matrix.h>
#include <gsl/gsl_vector.h>

#include "diagnostics.h"

/* A fitted model as the diagnostics see it: the residuals and fitted
   values, √w, and the fit's factor of the estimable columns of the
   (weighted) design. No copy of the design: rows are read in blocks
   (diag_view_block) and whitened through the factor. */
typedef struct {
    size_t n;
    size_t p;                 /* estimable columns */
    size_t n_coefs;           /* columns of the design */
    const design *design;     /* borrowed */
    const fit_result *fit;    /* borrowed */
    const fit_factor *factor; /* borrowed from the fit */
    /* Per-row arrays: the fit's own when they are already in these units
       (no weights, response_exponent 0), else copies owned by the view. */
    const double *e;          /* n residuals, multiplied by √w (units of 2^response_exponent) */
    const double *fitted;     /* n fitted values ŷ (unweighted, units of 2^response_exponent) */
    const double *root_w;     /* n values √w; NULL without weights (diag_root_w reads 1) */
    double *owned[3];         /* what the view allocated of the three, to free */
    size_t *columns;          /* design column of each of the p columns */
    bool intercept;           /* one column is the intercept */
    size_t intercept_column;  /* its index among the p, when intercept */
    bool exact_fit;           /* residuals are zero to rounding */
    double rss;               /* Σ e² */
    int response_exponent;    /* e and fitted are in units of 2^e (fit.h) */
} diag_view;

/* √w of row i: 1 without weights. */
static inline double diag_root_w(const diag_view *v, size_t i)
{
    return v->root_w ? v->root_w[i] : 1.0;
}

/* Rows the passes read at a time. */
#define DIAG_BLOCK 512

/* Rows first … first + count − 1 of the weighted design √W X, all n_coefs
   columns, column-major with stride count. */
void diag_view_block(const diag_view *v, size_t first, size_t count, double *x);

/* Householder QR of a matrix whose columns were scaled to unit length
   (the exact Durbin–Watson distribution on small samples only). */
typedef struct {
    size_t n, p;
    gsl_matrix *qr;
    gsl_vector *tau;
    double *scale; /* column j was divided by scale[j] */
} diag_qr;

diag_qr *diag_qr_new(const gsl_matrix *x);
void diag_qr_free(diag_qr *q);

/* The regression sum of squares bᵀG⁺b of a vector y on k columns whose
   Gram matrix is g (k × k row-major, long double, destroyed) and whose
   products with y are b (destroyed): a Cholesky factor with symmetric
   pivoting of the Gram matrix scaled to unit diagonal; a column whose
   remaining relative pivot falls below 1e-10 counts as a combination of
   the others. Returns the rank. */
size_t diag_gram_projected_ss(long double *g, long double *b, size_t k, double *ss);

/* Upper-tail probabilities. */
double diag_chi2_q(double x, double df);
double diag_normal_q(double z);

/* One computation per assumption (each file's header gives the method). */
void diag_breusch_pagan_compute(const diag_view *v, const data_table *t,
                                diag_breusch_pagan *out);
void diag_reset_compute(const diag_view *v, diag_reset *out);
void diag_collinearity_compute(const diag_view *v, diag_collinearity *out);
void diag_collinearity_free(diag_collinearity *c);
/* Borrows lines (n) and takes owned_lines (that list, or NULL) and the
   view's copy of the residuals, when it made one: the influence reads
   them after the view is gone. */
void diag_influence_compute(diag_view *v, const uint32_t *lines, uint32_t *owned_lines,
                            double alpha, diag_influence *out);
void diag_influence_free(diag_influence *inf);
/* The Durbin–Watson test of the residuals in the given row order, the
   beta approximation's moments from the factor (large samples); in file
   order (not ordered) small samples get d only. */
void diag_durbin_watson_streamed(const diag_view *v, const size_t *order, bool ordered,
                                 diag_durbin_watson *out);
void diag_verdicts(diagnostics *g);

#endif
