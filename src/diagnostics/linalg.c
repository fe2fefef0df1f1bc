/*
 * linalg.c — the least-squares pieces the diagnostics share: a Householder
 * QR (GSL) of a column-scaled matrix, residualizing a vector against it,
 * and the regression sum of squares ‖P y‖² of an auxiliary regression by
 * QR with column pivoting, which tolerates rank-deficient regressors.
 * Sums of squares are formed from Qᵀy rather than as differences of
 * residual sums, so that a small explained part keeps its digits.
 */
#include "internal.h"

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

void diag_qr_residualize(const diag_qr *q, gsl_vector *y)
{
    gsl_linalg_QR_QTvec(q->qr, q->tau, y);
    for (size_t j = 0; j < q->p; j++)
        gsl_vector_set(y, j, 0.0);
    gsl_linalg_QR_Qvec(q->qr, q->tau, y);
}

size_t diag_projected_ss(gsl_matrix *z, const double *y, double *ss)
{
    size_t n = z->size1, k = z->size2;
    *ss = 0.0;
    if (k == 0 || n == 0)
        return 0;
    scale_columns(z, NULL);
    size_t m = n < k ? n : k;
    gsl_vector *tau = gsl_vector_alloc(m);
    gsl_vector *norm = gsl_vector_alloc(k);
    gsl_permutation *perm = gsl_permutation_alloc(k);
    int signum;
    gsl_linalg_QRPT_decomp(z, tau, perm, &signum, norm);
    double first = fabs(gsl_matrix_get(z, 0, 0));
    size_t rank = 0;
    while (rank < m && first > 0 &&
           fabs(gsl_matrix_get(z, rank, rank)) > PIVOT_TOLERANCE * first)
        rank++;
    gsl_vector *v = gsl_vector_alloc(n);
    for (size_t i = 0; i < n; i++)
        gsl_vector_set(v, i, y[i]);
    gsl_linalg_QR_QTvec(z, tau, v);
    long double sum = 0.0L;
    for (size_t j = 0; j < rank; j++)
        sum += (long double)gsl_vector_get(v, j) * gsl_vector_get(v, j);
    *ss = (double)sum;
    gsl_vector_free(v);
    gsl_permutation_free(perm);
    gsl_vector_free(norm);
    gsl_vector_free(tau);
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
