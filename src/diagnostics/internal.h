/*
 * internal.h — private to the diagnostics stage: the shared view of a
 * fitted model (weighted design of the estimable columns, residuals), a
 * small QR toolkit, and the per-assumption computations that
 * diagnostics.c calls. Not part of fitproof's interface.
 */
#ifndef FITPROOF_DIAGNOSTICS_INTERNAL_H
#define FITPROOF_DIAGNOSTICS_INTERNAL_H

#include <gsl/gsl_matrix.h>
#include <gsl/gsl_vector.h>

#include "diagnostics.h"

/* A fitted model as the diagnostics see it: the estimable columns of the
   design and the residuals, both multiplied by √w when weighted. */
typedef struct {
    size_t n;
    size_t p;                /* estimable columns */
    gsl_matrix *x;           /* n × p */
    double *e;               /* n residuals */
    double *fitted;          /* n fitted values ŷ (original scale) */
    double *root_w;          /* n values √w; all 1 without weights */
    size_t *columns;         /* design column of each of the p columns */
    bool intercept;          /* one column is the intercept */
    size_t intercept_column; /* its index among the p, when intercept */
    bool exact_fit;          /* residuals are zero to rounding */
    double rss;              /* Σ e² */
} diag_view;

/* Householder QR of a matrix whose columns were scaled to unit length
   (scaling leaves every projection unchanged and helps conditioning). */
typedef struct {
    size_t n, p;
    gsl_matrix *qr;
    gsl_vector *tau;
    double *scale; /* column j was divided by scale[j] */
} diag_qr;

diag_qr *diag_qr_new(const gsl_matrix *x);
void diag_qr_free(diag_qr *q);
/* y ← (I − Q Qᵀ) y: what is left of y outside the column space. */
void diag_qr_residualize(const diag_qr *q, gsl_vector *y);

/* ‖P y‖², P the projection on the columns of z (n × k, destroyed). Columns
   that are linear combinations of earlier ones (relative pivot below 1e-10
   after scaling to unit length) do not count. Returns the rank of z. */
size_t diag_projected_ss(gsl_matrix *z, const double *y, double *ss);

/* Upper-tail probabilities. */
double diag_chi2_q(double x, double df);
double diag_normal_q(double z);

/* One computation per assumption (each file's header gives the method). */
/* z: the regressors without an intercept, or NULL when there are none. */
void diag_breusch_pagan_compute(const diag_view *v, const gsl_matrix *z, bool own_columns,
                                diag_breusch_pagan *out);
void diag_reset_compute(const diag_view *v, const diag_qr *q, diag_reset *out);
void diag_collinearity_compute(const diag_view *v, const diag_qr *q, const design *d,
                               diag_collinearity *out);
void diag_collinearity_free(diag_collinearity *c);
/* q: the QR of v->x, or NULL when no column is estimable. */
void diag_influence_compute(const diag_view *v, const diag_qr *q, const uint32_t *lines,
                            double alpha, diag_influence *out);
void diag_influence_free(diag_influence *inf);
void diag_verdicts(diagnostics *g);

#endif
