/*
 * fit.c — ordinary least squares: estimates, covariance, tests and the
 * whole-model summaries. The solving itself is in qr.c (extended-precision
 * Householder QR with pivoting and refinement); this file turns its output
 * into statistics.
 *
 * With r estimable coefficients and n rows: σ² = RSS / (n − r);
 * Cov(β) = σ² (XᵀX)⁻¹ over the estimable columns; t = β / SE with n − r
 * degrees of freedom; F = ((TSS − RSS) / df_model) / σ², where TSS is
 * centred when the model has an intercept and uncentred otherwise.
 */
#include "fit.h"

#include <gsl/gsl_blas.h>
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_sf_gamma.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "qr.h"

/* Relative size of a pivot, after scaling the columns to unit order of
   norm, below which a column counts as aliased with those before it. */
static const long double RANK_TOLERANCE = 1e-13L;

/*
 * P(|T| > t) = I_x(df/2, 1/2) with x = df / (df + t²), and
 * P(F > f) = I_x(df2/2, df1/2) with x = df2 / (df2 + df1 f)
 * (Abramowitz & Stegun 26.7.1 and 26.6.2). The small tail probabilities are
 * the ones that need relative accuracy, and I_x gives them directly.
 */
static double beta_tail(double a, double b, double numerator, double other)
{
    gsl_sf_result result;
    int status = gsl_sf_beta_inc_e(a, b, numerator / (numerator + other), &result);
    if (status == GSL_EUNDRFLW)
        return 0.0;
    return status == GSL_SUCCESS ? result.val : NAN;
}

double fit_t_p_value(double t, double df)
{
    if (isnan(t) || !(df > 0))
        return NAN;
    if (isinf(t))
        return 0.0;
    return beta_tail(df / 2.0, 0.5, df, t * t);
}

double fit_f_p_value(double f, double df1, double df2)
{
    if (isnan(f) || !(df1 > 0) || !(df2 > 0) || f < 0)
        return NAN;
    if (isinf(f))
        return 0.0;
    return beta_tail(df2 / 2.0, df1 / 2.0, df2, df1 * f);
}

static bool design_has_intercept(const design *d)
{
    for (size_t c = 0; c < d->n_coefs; c++)
        if (d->coefs[c].n_parts == 0)
            return true;
    return false;
}

static long double total_sum_of_squares(const gsl_vector *y, bool centred)
{
    long double mean = 0.0L;
    if (centred) {
        for (size_t i = 0; i < y->size; i++)
            mean += gsl_vector_get(y, i);
        mean /= (long double)y->size;
    }
    long double sum = 0.0L;
    for (size_t i = 0; i < y->size; i++) {
        long double deviation = gsl_vector_get(y, i) - mean;
        sum += deviation * deviation;
    }
    return sum;
}

static void coefficient_inference(fit_result *f, const lsq_qr *q, const long double *b,
                                  const long double *inverse_gram)
{
    double variance = f->df_residual > 0 ? f->rss / f->df_residual : NAN;
    double t_critical = f->df_residual > 0
                            ? gsl_cdf_tdist_Qinv((1.0 - f->level) / 2.0, f->df_residual)
                            : NAN;
    size_t p = f->n_coefs;
    for (size_t i = 0; i < p; i++)
        for (size_t j = 0; j < p; j++)
            gsl_matrix_set(f->cov, i, j, (double)(inverse_gram[i * p + j] * variance));
    for (size_t j = 0; j < p; j++) {
        fit_coef *c = &f->coefs[j];
        c->estimable = lsq_qr_estimable(q, j);
        if (!c->estimable) {
            c->estimate = c->std_error = c->t = c->p = c->ci_low = c->ci_high = NAN;
            continue;
        }
        c->estimate = (double)b[j];
        c->std_error = (double)sqrtl(inverse_gram[j * p + j] * variance);
        c->t = c->estimate / c->std_error;
        c->p = fit_t_p_value(c->t, f->df_residual);
        c->ci_low = c->estimate - t_critical * c->std_error;
        c->ci_high = c->estimate + t_critical * c->std_error;
    }
}

static void model_summaries(fit_result *f, bool intercept)
{
    double n = (double)f->n;
    f->sigma = f->df_residual > 0 ? sqrt(f->rss / f->df_residual) : NAN;
    f->r_squared = f->tss > 0 ? 1.0 - f->rss / f->tss : NAN;
    double k0 = intercept ? 1.0 : 0.0;
    f->adj_r_squared =
        f->df_residual > 0 ? 1.0 - (1.0 - f->r_squared) * (n - k0) / f->df_residual : NAN;
    if (f->df_model > 0 && f->df_residual > 0) {
        f->f = ((f->tss - f->rss) / f->df_model) / (f->rss / f->df_residual);
        f->f_p = fit_f_p_value(f->f, f->df_model, f->df_residual);
    } else {
        f->f = f->f_p = NAN;
    }
    /* Gaussian log-likelihood at the maximum-likelihood variance RSS/n. */
    f->log_likelihood = -0.5 * n * (log(2.0 * M_PI) + log(f->rss / n) + 1.0);
    double parameters = (double)f->rank + 1.0;
    f->aic = -2.0 * f->log_likelihood + 2.0 * parameters;
    f->bic = -2.0 * f->log_likelihood + log(n) * parameters;
}

/* The design as a column-major long double matrix, entries recomputed from
   the data so that powers and products are not rounded to double. */
static long double *extended_design(const design *d)
{
    size_t n = d->n_used, p = d->n_coefs;
    long double *x = xmalloc(n * p * sizeof(long double));
    for (size_t j = 0; j < p; j++)
        for (size_t i = 0; i < n; i++)
            x[j * n + i] = design_entry(d, i, j);
    return x;
}

void fit_library_init(void)
{
    gsl_set_error_handler_off();
}

fit_result *fit_new(const design *d, double level)
{
    size_t n = d->n_used, p = d->n_coefs;
    fit_result *f = xcalloc(1, sizeof *f);
    f->n = n;
    f->n_coefs = p;
    f->level = level;
    f->coefs = xcalloc(p, sizeof *f->coefs);
    f->fitted = gsl_vector_alloc(n);
    f->residuals = gsl_vector_alloc(n);
    f->cov = gsl_matrix_alloc(p, p);

    long double *x = extended_design(d);
    lsq_qr *q = lsq_qr_new(x, n, p, RANK_TOLERANCE);
    free(x);
    long double *y = xmalloc(n * sizeof(long double));
    long double *r = xmalloc(n * sizeof(long double));
    long double *b = xmalloc(p * sizeof(long double));
    long double *inverse_gram = xmalloc(p * p * sizeof(long double));
    for (size_t i = 0; i < n; i++)
        y[i] = gsl_vector_get(d->y, i);
    lsq_qr_solve(q, y, b, r);
    lsq_qr_inverse_gram(q, inverse_gram);

    long double rss = 0.0L;
    for (size_t i = 0; i < n; i++) {
        rss += r[i] * r[i];
        gsl_vector_set(f->residuals, i, (double)r[i]);
        gsl_vector_set(f->fitted, i, (double)(y[i] - r[i]));
    }
    bool intercept = design_has_intercept(d);
    f->rss = (double)rss;
    f->rank = q->rank;
    f->centred = intercept;
    f->tss = (double)total_sum_of_squares(d->y, intercept);
    f->df_residual = (double)n - (double)q->rank;
    f->df_model = (double)q->rank - (intercept ? 1.0 : 0.0);
    coefficient_inference(f, q, b, inverse_gram);
    model_summaries(f, intercept);
    free(y);
    free(r);
    free(b);
    free(inverse_gram);
    lsq_qr_free(q);
    return f;
}

void fit_free(fit_result *f)
{
    if (!f)
        return;
    free(f->coefs);
    gsl_matrix_free(f->cov);
    gsl_vector_free(f->fitted);
    gsl_vector_free(f->residuals);
    free(f);
}
