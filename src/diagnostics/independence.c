/*
 * independence.c — are the errors of neighbouring rows independent?
 *
 * Durbin & Watson (1950): d = Σₜ (eₜ − eₜ₋₁)² / Σₜ eₜ² = eᵀAe / eᵀe, with
 * A the first-difference matrix DᵀD (tridiagonal: 1, 2, …, 2, 1 on the
 * diagonal, −1 beside it). Under independent normal errors, e = M u
 * (M = I − X(XᵀX)⁻¹Xᵀ), and with ν₁ … ν_{n−p} the eigenvalues of Q₂ᵀAQ₂
 * (Q₂ an orthonormal basis of the residual space; the non-zero
 * eigenvalues of M A M)
 *   P(D ≤ c) = P(Σⱼ (νⱼ − c) ξⱼ² ≤ 0),  ξⱼ independent N(0, 1).
 * That probability comes from Imhof's (1961, Biometrika 48:419–426)
 * inversion of the characteristic function, with λⱼ = νⱼ − c:
 *   P(Σ λⱼ ξⱼ² > 0) = 1/2 + (1/π) ∫₀^∞ sin θ(u) / (u ρ(u)) du,
 *   θ(u) = ½ Σ arctan(λⱼ u),  ρ(u) = Π (1 + λⱼ² u²)^¼,
 * integrated with GSL's adaptive quadrature on [0, ∞).
 *
 * The eigenvalues cost O(n³); for n − p above DIAG_DW_EXACT_MAX, d/4 is
 * taken as a beta variable with the exact mean and variance of D (Durbin
 * & Watson 1951, section 4, recalled from memory: "the beta approximation"),
 *   E D = tr(MA)/m,  Var D = 2 [m tr((MA)²) − (tr MA)²] / (m² (m + 2)),
 * m = n − p, with the traces from a thin Q in O(n p²):
 *   tr(MA) = tr A − tr(QᵀAQ),  tr((MA)²) = tr A² − 2‖AQ‖² + ‖QᵀAQ‖²
 * (Frobenius norms; tr A = 2(n − 1), tr A² = 6n − 8).
 */
#include "internal.h"

#include <gsl/gsl_blas.h>
#include <gsl/gsl_eigen.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>
#include <gsl/gsl_linalg.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_sf_gamma.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* ---- the exact distribution ------------------------------------------- */

/* The n − p eigenvalues ν of Q₂ᵀAQ₂, ascending; caller frees. Q₂ᵀAQ₂ is
   the trailing block of QᵀAQ, formed by applying the p reflectors of the
   QR of x to both sides of A. */
static double *residual_eigenvalues(const gsl_matrix *x)
{
    size_t n = x->size1, p = x->size2, m = n - p;
    diag_qr *q = diag_qr_new(x);
    gsl_matrix *b = gsl_matrix_calloc(n, n);
    for (size_t i = 0; i < n; i++) {
        gsl_matrix_set(b, i, i, (i == 0 || i + 1 == n) ? 1.0 : 2.0);
        if (i + 1 < n) {
            gsl_matrix_set(b, i, i + 1, -1.0);
            gsl_matrix_set(b, i + 1, i, -1.0);
        }
    }
    gsl_linalg_QR_QTmat(q->qr, q->tau, b); /* QᵀA */
    gsl_matrix_transpose(b);               /* AQ */
    gsl_linalg_QR_QTmat(q->qr, q->tau, b); /* QᵀAQ */
    gsl_matrix_view block = gsl_matrix_submatrix(b, p, p, m, m);
    gsl_vector *values = gsl_vector_alloc(m);
    gsl_eigen_symm_workspace *work = gsl_eigen_symm_alloc(m);
    gsl_eigen_symm(&block.matrix, values, work);
    gsl_eigen_symm_free(work);
    double *nu = xmalloc(m * sizeof(double));
    for (size_t j = 0; j < m; j++)
        nu[j] = gsl_vector_get(values, j);
    gsl_vector_free(values);
    gsl_matrix_free(b);
    diag_qr_free(q);
    return nu;
}

typedef struct {
    const double *lambda;
    size_t m;
} imhof_data;

static double imhof_integrand(double u, void *params)
{
    const imhof_data *data = params;
    if (u == 0.0) {
        double sum = 0.0;
        for (size_t j = 0; j < data->m; j++)
            sum += data->lambda[j];
        return 0.5 * sum;
    }
    double theta = 0.0, log_rho = 0.0;
    for (size_t j = 0; j < data->m; j++) {
        double lu = data->lambda[j] * u;
        theta += atan(lu);
        log_rho += log1p(lu * lu);
    }
    return sin(0.5 * theta) / (u * exp(0.25 * log_rho));
}

/* P(Σ λⱼ ξⱼ² > 0). */
static double imhof_upper(const double *lambda, size_t m)
{
    bool any_positive = false, any_negative = false;
    double largest = 0.0;
    for (size_t j = 0; j < m; j++) {
        any_positive = any_positive || lambda[j] > 0;
        any_negative = any_negative || lambda[j] < 0;
        if (fabs(lambda[j]) > largest)
            largest = fabs(lambda[j]);
    }
    if (!any_negative)
        return any_positive ? 1.0 : 0.5;
    if (!any_positive)
        return 0.0;
    /* The probability does not change when every λ is scaled by the same
       positive factor; unit scale keeps the integrand's width near 1. */
    double *scaled = xmalloc(m * sizeof(double));
    for (size_t j = 0; j < m; j++)
        scaled[j] = lambda[j] / largest;
    imhof_data data = {scaled, m};
    gsl_function f = {imhof_integrand, &data};
    gsl_integration_workspace *work = gsl_integration_workspace_alloc(4000);
    double integral, error;
    int status =
        gsl_integration_qagiu(&f, 0.0, 1e-12, 1e-10, 4000, work, &integral, &error);
    gsl_integration_workspace_free(work);
    free(scaled);
    if (status != GSL_SUCCESS && error > 1e-7)
        return NAN;
    double p = 0.5 + integral / M_PI;
    return p < 0.0 ? 0.0 : (p > 1.0 ? 1.0 : p);
}

static double exact_cdf(const double *nu, size_t m, double c)
{
    double *lambda = xmalloc(m * sizeof(double));
    for (size_t j = 0; j < m; j++)
        lambda[j] = nu[j] - c;
    double p = 1.0 - imhof_upper(lambda, m);
    free(lambda);
    return p;
}

static void exact_moments(const double *nu, size_t m, double *mean, double *variance)
{
    long double sum = 0.0L, sum2 = 0.0L;
    for (size_t j = 0; j < m; j++) {
        sum += nu[j];
        sum2 += (long double)nu[j] * nu[j];
    }
    long double mm = (long double)m;
    *mean = (double)(sum / mm);
    *variance = (double)(2.0L * (mm * sum2 - sum * sum) / (mm * mm * (mm + 2.0L)));
}

/* ---- the beta approximation -------------------------------------------- */

/* Exact mean and variance of D from traces, without eigenvalues. */
static void trace_moments(const gsl_matrix *x, double *mean, double *variance)
{
    size_t n = x->size1, p = x->size2;
    diag_qr *q = diag_qr_new(x);
    gsl_matrix *thin = gsl_matrix_alloc(n, p); /* Q₁, then A Q₁ beside it */
    gsl_vector *column = gsl_vector_alloc(n);
    for (size_t j = 0; j < p; j++) {
        gsl_vector_set_basis(column, j);
        gsl_linalg_QR_Qvec(q->qr, q->tau, column);
        gsl_matrix_set_col(thin, j, column);
    }
    gsl_matrix *aq = gsl_matrix_alloc(n, p);
    for (size_t j = 0; j < p; j++)
        for (size_t i = 0; i < n; i++) {
            double v = gsl_matrix_get(thin, i, j) * ((i == 0 || i + 1 == n) ? 1.0 : 2.0);
            if (i > 0)
                v -= gsl_matrix_get(thin, i - 1, j);
            if (i + 1 < n)
                v -= gsl_matrix_get(thin, i + 1, j);
            gsl_matrix_set(aq, i, j, v);
        }
    gsl_matrix *qaq = gsl_matrix_alloc(p, p);
    gsl_blas_dgemm(CblasTrans, CblasNoTrans, 1.0, thin, aq, 0.0, qaq);
    long double trace_qaq = 0.0L, aq_norm2 = 0.0L, qaq_norm2 = 0.0L;
    for (size_t j = 0; j < p; j++) {
        trace_qaq += gsl_matrix_get(qaq, j, j);
        for (size_t k = 0; k < p; k++)
            qaq_norm2 += (long double)gsl_matrix_get(qaq, j, k) * gsl_matrix_get(qaq, j, k);
        for (size_t i = 0; i < n; i++)
            aq_norm2 += (long double)gsl_matrix_get(aq, i, j) * gsl_matrix_get(aq, i, j);
    }
    long double nn = (long double)n, m = (long double)(n - p);
    long double trace_ma = 2.0L * (nn - 1.0L) - trace_qaq;
    long double trace_ma2 = (6.0L * nn - 8.0L) - 2.0L * aq_norm2 + qaq_norm2;
    *mean = (double)(trace_ma / m);
    *variance =
        (double)(2.0L * (m * trace_ma2 - trace_ma * trace_ma) / (m * m * (m + 2.0L)));
    gsl_matrix_free(qaq);
    gsl_matrix_free(aq);
    gsl_vector_free(column);
    gsl_matrix_free(thin);
    diag_qr_free(q);
}

/* P(D/4 ≤ c/4) for the beta distribution with the given moments of D. */
static double beta_cdf(double mean, double variance, double c, bool upper)
{
    double mu = mean / 4.0, v = variance / 16.0;
    double common = mu * (1.0 - mu) / v - 1.0;
    double a = mu * common, b = (1.0 - mu) * common;
    double x = c / 4.0;
    if (x <= 0.0)
        return upper ? 1.0 : 0.0;
    if (x >= 1.0)
        return upper ? 0.0 : 1.0;
    gsl_sf_result result;
    int status = upper ? gsl_sf_beta_inc_e(b, a, 1.0 - x, &result)
                       : gsl_sf_beta_inc_e(a, b, x, &result);
    if (status == GSL_EUNDRFLW)
        return 0.0;
    return status == GSL_SUCCESS ? result.val : NAN;
}

/* ---- the test ------------------------------------------------------------ */

double diagnostics_dw_cdf(const gsl_matrix *x, double c, size_t exact_max)
{
    size_t n = x->size1, p = x->size2;
    if (n < p + 2)
        return NAN;
    if (n - p <= exact_max) {
        double *nu = residual_eigenvalues(x);
        double value = exact_cdf(nu, n - p, c);
        free(nu);
        return value;
    }
    double mean, variance;
    trace_moments(x, &mean, &variance);
    return beta_cdf(mean, variance, c, false);
}

static double statistic(const double *e, size_t n)
{
    long double numerator = 0.0L, denominator = 0.0L;
    for (size_t t = 0; t < n; t++) {
        denominator += (long double)e[t] * e[t];
        if (t > 0)
            numerator += ((long double)e[t] - e[t - 1]) * ((long double)e[t] - e[t - 1]);
    }
    return denominator > 0.0L ? (double)(numerator / denominator) : NAN;
}

void diagnostics_durbin_watson(const gsl_matrix *x, const double *e, size_t exact_max,
                               diag_durbin_watson *out)
{
    memset(out, 0, sizeof *out);
    out->d = out->p_positive = out->p_negative = out->p_two_sided = NAN;
    out->mean_d = out->variance_d = out->autocorrelation = NAN;
    size_t n = x->size1, p = x->size2;
    if (n < p + 2) {
        out->reason = DIAG_REASON_NO_RESIDUAL_DF;
        return;
    }
    out->d = statistic(e, n);
    if (isnan(out->d)) {
        out->reason = DIAG_REASON_EXACT_FIT;
        return;
    }
    out->computed = true;
    out->autocorrelation = 1.0 - out->d / 2.0;
    if (n - p <= exact_max) {
        out->method = DIAG_DW_EXACT;
        double *nu = residual_eigenvalues(x);
        exact_moments(nu, n - p, &out->mean_d, &out->variance_d);
        out->p_positive = exact_cdf(nu, n - p, out->d);
        out->p_negative = 1.0 - out->p_positive;
        free(nu);
    } else {
        out->method = DIAG_DW_BETA;
        trace_moments(x, &out->mean_d, &out->variance_d);
        out->p_positive = beta_cdf(out->mean_d, out->variance_d, out->d, false);
        out->p_negative = beta_cdf(out->mean_d, out->variance_d, out->d, true);
    }
    double smaller = out->p_positive < out->p_negative ? out->p_positive : out->p_negative;
    out->p_two_sided = 2.0 * smaller > 1.0 ? 1.0 : 2.0 * smaller;
}

/* ---- from the fit's factor ---------------------------------------------- */

/* The traces of trace_moments from the rows of Q₁ = X̃S₁R⁻¹ in order, a
   window of three rows at a time: (AQ)ₜ = cₜuₜ − uₜ₋₁ − uₜ₊₁ (cₜ = 1 at
   the ends, 2 inside), QᵀAQ = Σₜ uₜ(AQ)ₜᵀ. O(n p²), no n × p matrix. */
static void streamed_moments(const diag_view *v, const size_t *order, double *mean,
                             double *variance)
{
    size_t n = v->n, p = fit_factor_rank(v->factor);
    fit_whitened_rows *rows = fit_whitened_rows_new(v->factor, v->design, order, n);
    double *window = xcalloc(3 * p + 1, sizeof(double));
    double *aq = xmalloc((p + 1) * sizeof(double));
    long double *qaq = xcalloc(p * p + 1, sizeof(long double));
    /* Products summed in double over short runs of rows, the runs in long
       double: the same digits at a fraction of the cost. */
    double *partial = xcalloc(p * p + 1, sizeof(double));
    long double aq_norm2 = 0.0L;
    double *previous = window, *current = window + p, *next = window + 2 * p;
    fit_whitened_row(rows, 0, current);
    for (size_t t = 0; t < n; t++) {
        if (t + 1 < n)
            fit_whitened_row(rows, t + 1, next);
        double centre = (t == 0 || t + 1 == n) ? 1.0 : 2.0;
        for (size_t j = 0; j < p; j++) {
            double value = centre * current[j];
            if (t > 0)
                value -= previous[j];
            if (t + 1 < n)
                value -= next[j];
            aq[j] = value;
            aq_norm2 += (long double)value * value;
        }
        for (size_t a = 0; a < p; a++)
            for (size_t b = 0; b < p; b++)
                partial[a * p + b] += current[a] * aq[b];
        if (t % 256 == 255 || t + 1 == n)
            for (size_t a = 0; a < p * p; a++) {
                qaq[a] += partial[a];
                partial[a] = 0.0;
            }
        double *spare = previous;
        previous = current;
        current = next;
        next = spare;
    }
    long double trace_qaq = 0.0L, qaq_norm2 = 0.0L;
    for (size_t a = 0; a < p; a++) {
        trace_qaq += qaq[a * p + a];
        for (size_t b = 0; b < p; b++)
            qaq_norm2 += qaq[a * p + b] * qaq[a * p + b];
    }
    long double nn = (long double)n, m = (long double)(n - p);
    long double trace_ma = 2.0L * (nn - 1.0L) - trace_qaq;
    long double trace_ma2 = (6.0L * nn - 8.0L) - 2.0L * aq_norm2 + qaq_norm2;
    *mean = (double)(trace_ma / m);
    *variance =
        (double)(2.0L * (m * trace_ma2 - trace_ma * trace_ma) / (m * m * (m + 2.0L)));
    free(partial);
    free(qaq);
    free(aq);
    free(window);
    fit_whitened_rows_free(rows);
}

void diag_durbin_watson_streamed(const diag_view *v, const size_t *order, bool ordered,
                                 diag_durbin_watson *out)
{
    size_t n = v->n, p = v->p;
    double *e = xmalloc((n + 1) * sizeof(double));
    for (size_t i = 0; i < n; i++)
        e[i] = v->e[order[i]];
    if (!ordered && n >= p + 2 && n - p <= DIAG_DW_EXACT_MAX) {
        /* In file order d describes only the file's layout and no report
           shows its distribution: the O(n³) exact one is not worth it. */
        memset(out, 0, sizeof *out);
        out->p_positive = out->p_negative = out->p_two_sided = NAN;
        out->mean_d = out->variance_d = NAN;
        out->d = statistic(e, n);
        out->computed = !isnan(out->d);
        out->reason = out->computed ? DIAG_REASON_NONE : DIAG_REASON_EXACT_FIT;
        out->autocorrelation = 1.0 - out->d / 2.0;
        out->method = DIAG_DW_EXACT;
        free(e);
        return;
    }
    if (n < p + 2 || n - p <= DIAG_DW_EXACT_MAX) {
        /* Small samples: the exact distribution needs the n × n problem
           anyway, so the n × p copy of the design costs nothing extra. */
        gsl_matrix *x = gsl_matrix_alloc(n ? n : 1, p);
        double *row = xmalloc((v->n_coefs + 1) * sizeof(double));
        for (size_t i = 0; i < n; i++) {
            design_block_double(v->design, order[i], 1, row, 1);
            for (size_t j = 0; j < p; j++)
                gsl_matrix_set(x, i, j, diag_root_w(v, order[i]) * row[v->columns[j]]);
        }
        diagnostics_durbin_watson(x, e, DIAG_DW_EXACT_MAX, out);
        free(row);
        gsl_matrix_free(x);
        free(e);
        return;
    }
    memset(out, 0, sizeof *out);
    out->d = out->p_positive = out->p_negative = out->p_two_sided = NAN;
    out->mean_d = out->variance_d = out->autocorrelation = NAN;
    out->d = statistic(e, n);
    free(e);
    if (isnan(out->d)) {
        out->reason = DIAG_REASON_EXACT_FIT;
        return;
    }
    out->computed = true;
    out->autocorrelation = 1.0 - out->d / 2.0;
    out->method = DIAG_DW_BETA;
    streamed_moments(v, order, &out->mean_d, &out->variance_d);
    out->p_positive = beta_cdf(out->mean_d, out->variance_d, out->d, false);
    out->p_negative = beta_cdf(out->mean_d, out->variance_d, out->d, true);
    double smaller = out->p_positive < out->p_negative ? out->p_positive : out->p_negative;
    out->p_two_sided = 2.0 * smaller > 1.0 ? 1.0 : 2.0 * smaller;
}
