/*
 * linalg.c — the least-squares pieces the diagnostics share: design rows
 * read in blocks and weighted, the regression sum of squares of a small
 * auxiliary regression from its Gram matrix by a pivoted Cholesky factor
 * (which tolerates rank-deficient regressors), and a Householder QR (GSL)
 * for the exact Durbin–Watson distribution of small samples. Sums of
 * squares are formed as ‖L⁻¹b‖² rather than as differences of residual
 * sums, so that a small explained part keeps its digits.
 */
#include "internal.h"

#include "../util/stage.h"

#include <gsl/gsl_blas.h>
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_linalg.h>
#include <math.h>
#include <stdlib.h>

/* Relative pivot below which a unit-length column counts as a combination
   of the columns before it. */
static const double PIVOT_TOLERANCE = 1e-10;

/* Divides each column by its length (kept in scale when not NULL). */
static void scale_columns(gsl_matrix *x, double *scale)
{
    for (size_t j = 0; j < x->size2; j++) {
        gsl_vector_view column = gsl_matrix_column(x, j);
        double norm = gsl_blas_dnrm2(&column.vector);
        if (norm > 0)
            gsl_vector_scale(&column.vector, 1.0 / norm);
        if (scale)
            scale[j] = norm > 0 ? norm : 1.0;
    }
}

diag_qr *diag_qr_new(const gsl_matrix *x)
{
    diag_qr *q = xcalloc(1, sizeof *q);
    q->n = x->size1;
    q->p = x->size2;
    q->qr = gsl_matrix_alloc(q->n, q->p);
    gsl_matrix_memcpy(q->qr, x);
    q->scale = xmalloc((q->p ? q->p : 1) * sizeof(double));
    scale_columns(q->qr, q->scale);
    q->tau = gsl_vector_alloc(q->p);
    gsl_linalg_QR_decomp(q->qr, q->tau);
    return q;
}

void diag_qr_free(diag_qr *q)
{
    if (!q)
        return;
    gsl_matrix_free(q->qr);
    gsl_vector_free(q->tau);
    free(q->scale);
    free(q);
}

void diag_view_block(const diag_view *v, size_t first, size_t count, double *x)
{
    design_block_double(v->design, first, count, x, count);
    stage_rows(first + count, v->n); /* the progress line, when shown */
    if (!v->design->weights)
        return;
    for (size_t c = 0; c < v->n_coefs; c++)
        for (size_t i = 0; i < count; i++)
            x[c * count + i] *= v->root_w[first + i];
}

size_t diag_gram_projected_ss(long double *g, long double *b, size_t k, double *ss)
{
    *ss = 0.0;
    if (k == 0)
        return 0;
    /* Unit diagonal: the pivots are then the sines of the angles between
       each column and the span of the ones before it. */
    for (size_t a = 0; a < k; a++) {
        long double d = g[a * k + a];
        long double s = d > 0 ? 1.0L / sqrtl(d) : 0.0L;
        b[a] *= s;
        for (size_t c = 0; c < k; c++) {
            g[a * k + c] *= s;
            g[c * k + a] *= s;
        }
    }
    size_t *perm = xmalloc(k * sizeof(size_t));
    for (size_t a = 0; a < k; a++)
        perm[a] = a;
    long double sum = 0.0L;
    size_t rank = 0;
    const long double tolerance = (long double)PIVOT_TOLERANCE * PIVOT_TOLERANCE;
    for (; rank < k; rank++) {
        /* The largest remaining pivot leads (Higham 2002, §10.3). */
        size_t best = rank;
        for (size_t a = rank + 1; a < k; a++)
            if (g[perm[a] * k + perm[a]] > g[perm[best] * k + perm[best]])
                best = a;
        size_t t = perm[rank];
        perm[rank] = perm[best];
        perm[best] = t;
        size_t j = perm[rank];
        long double d = g[j * k + j];
        if (!(d > tolerance))
            break;
        long double root = sqrtl(d);
        /* Column j of the factor, and the next entry of L⁻¹b. */
        for (size_t a = rank + 1; a < k; a++)
            g[perm[a] * k + j] /= root;
        b[j] /= root;
        sum += b[j] * b[j];
        for (size_t a = rank + 1; a < k; a++) {
            size_t ia = perm[a];
            b[ia] -= g[ia * k + j] * b[j];
            for (size_t c = rank + 1; c <= a; c++) {
                size_t ic = perm[c];
                g[ia * k + ic] -= g[ia * k + j] * g[ic * k + j];
                g[ic * k + ia] = g[ia * k + ic];
            }
        }
    }
    free(perm);
    *ss = (double)sum;
    return rank;
}

double diag_chi2_q(double x, double df)
{
    if (isnan(x) || !(df > 0))
        return NAN;
    return x <= 0 ? 1.0 : gsl_cdf_chisq_Q(x, df);
}

double diag_normal_q(double z)
{
    return isnan(z) ? NAN : gsl_cdf_ugaussian_Q(z);
}
