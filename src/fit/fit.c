/*
 * fit.c — (weighted) least squares: estimates, covariance, tests and the
 * whole-model summaries. The factorisation is in qr.c; this file chooses
 * the algorithm, streams the rows and turns the solution into statistics.
 *
 * Weights enter by scaling row i by √w_i (Aitken 1935): X̃ = W^½X, ỹ = W^½y.
 * With r estimable coefficients and n rows: σ² = RSS / (n − r) with
 * RSS = Σ w_i e_i²; Cov(β) = σ² (X̃ᵀX̃)⁻¹ over the estimable columns;
 * t = β / SE with n − r degrees of freedom; F = ((TSS − RSS) / df_model) / σ²
 * with TSS = Σ w_i (y_i − ȳ_w)² (ȳ_w the weighted mean) when the model has an
 * intercept and Σ w_i y_i² otherwise. Log-likelihood of independent normal
 * errors with variances σ²/w_i at the maximum-likelihood σ² = RSS/n:
 *     log L = −n/2 (log 2π + log(RSS/n) + 1) + ½ Σ log w_i.
 * Robust covariances (White 1980; MacKinnon & White 1985, J. Econometrics
 * 29): (X̃ᵀX̃)⁻¹ X̃ᵀ diag(ω_i) X̃ (X̃ᵀX̃)⁻¹ with ω_i = ẽ_i² (HC0), ẽ_i² n/(n−r)
 * (HC1), ẽ_i²/(1−h_i) (HC2), ẽ_i²/(1−h_i)² (HC3), ẽ_i = √w_i e_i and
 * h_i the leverage of row i of X̃.
 *
 * Two algorithms (same results to the digits the data allow):
 *  - dense (n·p ≤ FIT_DENSE_MAX): the whole design in long double, pivoted
 *    Householder QR and Björck's augmented-system refinement (qr.c);
 *  - streaming (stream.c): rows folded block by block into the triangle of
 *    [X̃ | ỹ] (no n×p matrix is stored), the solution of the small
 *    triangular problem refined by corrected semi-normal equations (Björck
 *    1987, "Stability analysis of the method of seminormal equations",
 *    Linear Algebra Appl. 88/89) with residuals recomputed from the data.
 */
#include "internal.h"

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_sf_gamma.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Refinement passes over the data on the streaming path, at most. */
enum { STREAMING_REFINEMENTS = 6 };

/* A first streaming correction larger than this (relative to the solution)
   switches the refinement to binary128 gradients. */
static const long double PRECISE_TRIGGER = 1e-16L;

__extension__ typedef __float128 quad;

/* A streaming correction larger than this (relative) calls for more
   refinement passes and a final pass over the rows with the refined b. */
static const long double STREAMING_ACCEPT = 1e-12L;

/* Condition number of the scaled columns up to which the streaming row
   pass runs in double (covariances then carry relative errors near
   κ · 2⁻⁵³ < 1e-13); beyond it the pass runs in extended precision. */
static const long double WELL_CONDITIONED = 1e3L;

/* Condition number beyond which the dense path refines the covariance
   (below it R₁₁⁻¹R₁₁⁻ᵀ in long double is accurate to 1e-15). */
static const long double REFINED_COVARIANCE = 1e4L;

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

void fit_library_init(void)
{
    gsl_set_error_handler_off();
}

static bool design_has_intercept(const design *d)
{
    for (size_t c = 0; c < d->n_coefs; c++)
        if (d->coefs[c].n_parts == 0)
            return true;
    return false;
}

/* A model without an intercept whose columns still add up to the constant
   on every row: each level of its first category has an indicator of its
   own (DESIGN_ALL_LEVELS), and every row has exactly one level. Its R² and
   overall F are then the centred ones, as for the same model written with
   an intercept and a reference level. */
static bool design_spans_constant(const design *d)
{
    for (size_t c = 0; c < d->n_coefs; c++)
        if (d->coefs[c].n_parts == 1 && d->coefs[c].parts[0].kind == DESIGN_ALL_LEVELS)
            return true;
    return false;
}

static long double weight_of(const design *d, size_t i)
{
    return d->weights ? gsl_vector_get(d->weights, i) : 1.0L;
}

long double fit_weighted_row(const design *d, size_t i, long double *x)
{
    design_row(d, i, x);
    long double y = gsl_vector_get(d->y, i);
    if (!d->weights)
        return y;
    long double root = sqrtl(weight_of(d, i));
    for (size_t c = 0; c < d->n_coefs; c++)
        x[c] *= root;
    return root * y;
}

static long double total_sum_of_squares(const design *d, bool centred)
{
    const double *y = d->y->data, *w = d->weights ? d->weights->data : NULL;
    size_t ys = d->y->stride, ws = d->weights ? d->weights->stride : 0, n = d->n_used;
    long double mean = 0.0L, total_weight = 0.0L;
    if (centred) {
        for (size_t i = 0; i < n; i++) {
            long double wi = w ? w[i * ws] : 1.0L;
            mean += wi * y[i * ys];
            total_weight += wi;
        }
        mean /= total_weight;
    }
    long double sum = 0.0L;
    for (size_t i = 0; i < n; i++) {
        long double deviation = y[i * ys] - mean;
        sum += (w ? w[i * ws] : 1.0L) * deviation * deviation;
    }
    return sum;
}

/* ---- the dense algorithm ----------------------------------------------------- */

/* The weighted design in long double, factored and refined; sets b and the
   weighted residuals (n entries, caller frees). */
static lsq_qr *solve_dense(const design *d, long double *b, long double **residuals)
{
    size_t n = d->n_used, p = d->n_coefs;
    long double *x = xmalloc((n * p + 1) * sizeof(long double));
    long double *y = xmalloc((n + 1) * sizeof(long double));
    long double *row = xmalloc((p + 1) * sizeof(long double));
    for (size_t i = 0; i < n; i++) {
        y[i] = fit_weighted_row(d, i, row);
        for (size_t c = 0; c < p; c++)
            x[c * n + i] = row[c];
    }
    lsq_qr *q = lsq_qr_new(x, n, p, FIT_RANK_TOLERANCE);
    *residuals = xmalloc((n + 1) * sizeof(long double));
    lsq_qr_solve(q, y, b, *residuals);
    free(row);
    free(y);
    return q;
}

void fit_row_sums_free(fit_row_sums *sums)
{
    free(sums->gram);
    for (int k = 0; k < 3; k++)
        free(sums->meat[k]);
    free(sums->gradient);
    memset(sums, 0, sizeof *sums);
}

/* ---- the streaming algorithm ------------------------------------------------- */

/* One pass over the data: g = X̃ᵀ(ỹ − X̃b), in long double. */
static void gradient(const design *d, const long double *b, long double *g, long double *row)
{
    size_t p = d->n_coefs;
    for (size_t c = 0; c < p; c++)
        g[c] = 0.0L;
    for (size_t i = 0; i < d->n_used; i++) {
        long double r = fit_weighted_row(d, i, row);
        for (size_t c = 0; c < p; c++)
            r -= row[c] * b[c];
        for (size_t c = 0; c < p; c++)
            g[c] += row[c] * r;
    }
}

/* The same sum, Σ w_i x_i (y_i − x_iᵀb), accumulated in binary128 from the
   unweighted rows: accurate enough to remove the cond² · ‖r‖ term that a
   working-precision gradient leaves in the solution. */
static void gradient_precise(const design *d, const long double *b, long double *g,
                             long double *row)
{
    size_t p = d->n_coefs;
    quad *sum = xcalloc(p + 1, sizeof(quad));
    for (size_t i = 0; i < d->n_used; i++) {
        design_row(d, i, row);
        quad r = gsl_vector_get(d->y, i);
        for (size_t c = 0; c < p; c++)
            r -= (quad)row[c] * (quad)b[c];
        r *= (quad)weight_of(d, i);
        for (size_t c = 0; c < p; c++)
            sum[c] += (quad)row[c] * r;
    }
    for (size_t c = 0; c < p; c++)
        g[c] = (long double)sum[c];
    free(sum);
}

/* b += (X̃ᵀX̃)⁻¹ g; returns the relative size of the step. */
static long double correct(const lsq_qr *q, const long double *gram_inverse, long double *b,
                           const long double *g, size_t p)
{
    long double *delta = xmalloc((p + 1) * sizeof(long double));
    lsq_qr_normal_solve(q, gram_inverse, g, delta);
    long double change = 0.0L, size = 0.0L;
    for (size_t c = 0; c < p; c++) {
        b[c] += delta[c];
        change = fmaxl(change, fabsl(delta[c]));
        size = fmaxl(size, fabsl(b[c]));
    }
    free(delta);
    return size > 0 ? change / size : 0.0L;
}

/* Gradient passes until the corrections stop shrinking; binary128 once a
   working-precision correction is still large (an ill-conditioned design). */
static void refine_streaming(const design *d, const lsq_qr *q, const long double *gram_inverse,
                             long double *b)
{
    size_t p = d->n_coefs;
    long double *g = xmalloc((p + 1) * sizeof(long double));
    long double *row = xmalloc((p + 1) * sizeof(long double));
    long double previous = INFINITY;
    bool precise = false;
    for (int pass = 0; pass < STREAMING_REFINEMENTS; pass++) {
        if (precise)
            gradient_precise(d, b, g, row);
        else
            gradient(d, b, g, row);
        long double relative = correct(q, gram_inverse, b, g, p);
        if (!precise && relative > PRECISE_TRIGGER) {
            precise = true;
            continue;
        }
        if (relative < 1e-19L || relative >= previous * 0.5L)
            break;
        previous = relative;
    }
    free(g);
    free(row);
}

/* The second streaming pass: in double when the scaled design is well
   conditioned, in extended precision (with the Gram matrix in whitened
   coordinates, so that the covariance does not inherit R₀'s rounding)
   otherwise. */
static void streaming_rows(fit_result *f, const design *d, const lsq_qr *q,
                           const long double *b, fit_row_sums *sums)
{
    bool well = lsq_qr_condition(q) <= WELL_CONDITIONED;
    fit_row_input in = {b, NULL, !well, !well};
    fit_rows(f, d, q, &in, sums);
}

/* Streaming: the (p+1)×p problem on the triangle of [X̃ | ỹ] gives b, then
   the pass over the rows gives the gradient (and, when ill-conditioned, the
   Gram matrix in whitened coordinates); one correction suffices unless it
   is large, in which case the refinement continues and the rows are passed
   again with the final b. */
static lsq_qr *solve_streaming(fit_result *f, const design *d, const lsq_tri *t,
                               long double *b, fit_row_sums *sums, long double **gram_inverse)
{
    size_t p = d->n_coefs, k = t->k;
    long double *a = xmalloc((k * p + 1) * sizeof(long double));
    memcpy(a, t->r, k * p * sizeof(long double));
    lsq_qr *q = lsq_qr_new(a, k, p, FIT_RANK_TOLERANCE);
    long double *r = xmalloc(k * sizeof(long double));
    lsq_qr_solve(q, t->r + p * k, b, r);
    free(r);
    streaming_rows(f, d, q, b, sums);
    size_t rank = q->rank;
    *gram_inverse = NULL;
    if (sums->gram) {
        *gram_inverse = xmalloc((rank * rank + 1) * sizeof(long double));
        memcpy(*gram_inverse, sums->gram, rank * rank * sizeof(long double));
        if (!lsq_spd_inverse(*gram_inverse, rank)) {
            free(*gram_inverse);
            *gram_inverse = NULL;
        }
    }
    if (correct(q, *gram_inverse, b, sums->gradient, p) > STREAMING_ACCEPT) {
        refine_streaming(d, q, *gram_inverse, b);
        fit_row_sums_free(sums);
        streaming_rows(f, d, q, b, sums);
    }
    return q;
}

/* ---- statistics ------------------------------------------------------------- */

/* The variance in long double: the square of a standard error near 1e-200
   or 1e200 is outside double's range, the standard error is not. */
static fit_inference inference(double estimate, long double variance, double df,
                               double t_critical)
{
    fit_inference out;
    out.std_error = variance >= 0 ? fit_root(variance) : NAN;
    out.t = estimate / out.std_error;
    out.p = fit_t_p_value(out.t, df);
    out.ci_low = estimate - t_critical * out.std_error;
    out.ci_high = estimate + t_critical * out.std_error;
    return out;
}

/* On the streaming path the factor R₀ is the triangle's and the rows
   whitened by it have Gram matrix G = R₀⁻ᵀX̃ᵀX̃R₀⁻¹, so (X̃ᵀX̃)⁻¹ =
   R₀⁻¹G⁻¹R₀⁻ᵀ and a meat M in those coordinates gives R₀⁻¹G⁻¹MG⁻¹R₀⁻ᵀ: both
   are T M Tᵀ with T = R₀⁻¹G⁻¹, formed once here (M = G for the former). */
static long double *corrected_left(const lsq_qr *q, const long double *gram_inverse)
{
    if (!gram_inverse)
        return NULL;
    size_t rank = q->rank;
    long double *t = xmalloc((rank * rank + 1) * sizeof(long double));
    memcpy(t, gram_inverse, rank * rank * sizeof(long double));
    lsq_qr_solve_upper(q, t);
    return t;
}

/* S₁R₀⁻¹G⁻¹MG⁻¹R₀⁻ᵀS₁ᵀ with T = corrected (streaming), or S₁R⁻¹MR⁻ᵀS₁ᵀ
   when corrected is NULL (G = I: the dense factor, or a well-conditioned
   triangle). */
static void sandwich_of(const lsq_qr *q, const long double *corrected, const long double *m,
                        long double *out)
{
    if (corrected)
        lsq_qr_outer_sandwich(q, corrected, m, out);
    else
        lsq_qr_sandwich(q, m, out);
}

double fit_root(long double variance)
{
    double v = (double)variance;
    if (isnormal(v) || variance == 0.0L)
        return sqrt(v);
    return variance >= 0 ? (double)sqrtl(variance) : NAN;
}

/* (v · factor) rounded to double, then times after (HC1's n/(n − r), in
   double as it always was). */
void fit_store_matrix(const fit_result *f, gsl_matrix *m, const long double *v,
                      long double factor, double after, bool defined)
{
    size_t p = f->n_coefs;
    for (size_t a = 0; a < p; a++)
        for (size_t b = 0; b < p; b++)
            gsl_matrix_set(m, a, b,
                           defined ? (double)ldexpl(v[a * p + b] * factor,
                                                    -(f->column_exponent[a] +
                                                      f->column_exponent[b])) *
                                         after
                                   : NAN);
}

long double fit_xtx_inverse_at(const fit_result *f, size_t a, size_t b)
{
    return ldexpl(gsl_matrix_get(f->xtx_inverse, a, b),
                  f->column_exponent[a] + f->column_exponent[b]);
}

long double fit_cov_at(const fit_result *f, const gsl_matrix *v, size_t a, size_t b)
{
    return ldexpl(gsl_matrix_get(v, a, b), 2 * f->response_exponent + f->column_exponent[a] +
                                               f->column_exponent[b]);
}

/* out = A M A for symmetric p×p row-major A and a sparse symmetric M:
   A M over M's nonzero entries (rows of M as lists), then dot products of
   rows of A M with rows of A (A = Aᵀ), the lower half mirrored. */
static void sparse_sandwich(const long double *a, const long double *m, size_t p,
                            long double *out)
{
    size_t *start = xmalloc((p + 1) * sizeof(size_t)), count = 0;
    for (size_t j = 0; j < p; j++)
        for (size_t c = 0; c < p; c++)
            count += m[j * p + c] != 0.0L;
    size_t *column = xmalloc((count + 1) * sizeof(size_t));
    count = 0;
    for (size_t j = 0; j < p; j++) {
        start[j] = count;
        for (size_t c = 0; c < p; c++)
            if (m[j * p + c] != 0.0L)
                column[count++] = c;
    }
    start[p] = count;
    long double *am = xcalloc(p * p + 1, sizeof(long double));
    for (size_t r = 0; r < p; r++) {
        long double *row = am + r * p;
        for (size_t j = 0; j < p; j++) {
            long double arj = a[r * p + j];
            if (arj == 0.0L)
                continue;
            for (size_t t = start[j]; t < start[j + 1]; t++)
                row[column[t]] += arj * m[j * p + column[t]];
        }
    }
    for (size_t r = 0; r < p; r++)
        for (size_t b = 0; b <= r; b++) {
            /* Four running sums: one would wait on each addition. */
            const long double *x = am + r * p, *y = a + b * p;
            long double s0 = 0.0L, s1 = 0.0L, s2 = 0.0L, s3 = 0.0L;
            size_t c = 0;
            for (; c + 4 <= p; c += 4) {
                s0 += x[c] * y[c];
                s1 += x[c + 1] * y[c + 1];
                s2 += x[c + 2] * y[c + 2];
                s3 += x[c + 3] * y[c + 3];
            }
            for (; c < p; c++)
                s0 += x[c] * y[c];
            out[r * p + b] = out[b * p + r] = (s0 + s1) + (s2 + s3);
        }
    free(am);
    free(column);
    free(start);
}

/* Designs wider than FIT_UNPIVOTED_MIN columns: the meats X̃ᵀΩX̃ in the
   design's own coordinates are as sparse as its rows (a category's
   indicators), so each sandwich is A M A with A = (X̃ᵀX̃)⁻¹ (inverse), one
   dense half product, where T M Tᵀ in the whitened coordinates costs three
   halves (the meats there are dense). cov[k] for HC0, HC2, HC3. */
static void wide_sandwiches(const fit_result *f, const design *d, const long double *inverse,
                            long double *cov[3])
{
    size_t p = d->n_coefs;
    long double *meat[3];
    for (int k = 0; k < 3; k++)
        meat[k] = xcalloc(p * p + 1, sizeof(long double));
    long double *row = xmalloc((p + 1) * sizeof(long double));
    size_t *nz = xmalloc((p + 1) * sizeof(size_t));
    for (size_t i = 0; i < d->n_used; i++) {
        fit_weighted_row(d, i, row);
        long double root = d->weights ? sqrtl(weight_of(d, i)) : 1.0L;
        long double e = root * (long double)gsl_vector_get(f->residuals, i);
        long double rest = 1.0L - (long double)gsl_vector_get(f->leverage, i);
        bool defined = rest >= (long double)FIT_LEVERAGE_ONE;
        long double omega[3] = {e * e, defined ? e * e / rest : 0.0L,
                                defined ? e * e / (rest * rest) : 0.0L};
        size_t nnz = 0;
        for (size_t c = 0; c < p; c++)
            if (row[c] != 0.0L)
                nz[nnz++] = c;
        for (size_t u = 0; u < nnz; u++)
            for (size_t v = 0; v < nnz; v++) {
                long double product = row[nz[u]] * row[nz[v]];
                for (int k = 0; k < 3; k++)
                    meat[k][nz[u] * p + nz[v]] += omega[k] * product;
            }
    }
    for (int k = 0; k < 3; k++) {
        sparse_sandwich(inverse, meat[k], p, cov[k]);
        free(meat[k]);
    }
    free(nz);
    free(row);
}

static void robust_covariances(fit_result *f, const design *d, const lsq_qr *q,
                               const fit_row_sums *sums, const long double *corrected,
                               const long double *inverse)
{
    size_t p = f->n_coefs;
    long double *cov[3];
    for (int k = 0; k < 3; k++)
        cov[k] = xmalloc((p * p + 1) * sizeof(long double));
    if (p > FIT_UNPIVOTED_MIN)
        wide_sandwiches(f, d, inverse, cov);
    else
        for (int k = 0; k < 3; k++)
            sandwich_of(q, corrected, sums->meat[k], cov[k]);
    double hc1_factor = f->df_residual > 0 ? (double)f->n / f->df_residual : NAN;
    /* HC1 is HC0 scaled. */
    static const int meat_of[FIT_N_HC] = {0, 0, 1, 2};
    for (int kind = 0; kind < FIT_N_HC; kind++) {
        f->robust_cov[kind] = gsl_matrix_alloc(p, p);
        double factor = kind == FIT_HC1 ? hc1_factor : 1.0;
        bool defined = f->df_residual > 0 && (kind < FIT_HC2 || f->hc_defined);
        fit_store_matrix(f, f->robust_cov[kind], cov[meat_of[kind]], 1.0L, factor, defined);
    }
    for (int k = 0; k < 3; k++)
        free(cov[k]);
}

static void coefficient_inference(fit_result *f, const lsq_qr *q, const long double *b,
                                  const long double *inverse_gram)
{
    double variance = f->df_residual > 0 ? f->rss / f->df_residual : NAN;
    double t_critical = f->df_residual > 0
                            ? gsl_cdf_tdist_Qinv((1.0 - f->level) / 2.0, f->df_residual)
                            : NAN;
    size_t p = f->n_coefs;
    fit_store_matrix(f, f->xtx_inverse, inverse_gram, 1.0L, 1.0, true);
    fit_store_matrix(f, f->cov, inverse_gram, variance, 1.0, true);
    for (size_t j = 0; j < p; j++) {
        fit_coef *c = &f->coefs[j];
        c->estimable = lsq_qr_estimable(q, j);
        if (!c->estimable) {
            c->estimate = c->std_error = c->t = c->p = c->ci_low = c->ci_high = NAN;
            for (int kind = 0; kind < FIT_N_HC; kind++)
                c->robust[kind] = (fit_inference){NAN, NAN, NAN, NAN, NAN};
            long double *alias = xmalloc(p * sizeof(long double));
            lsq_qr_alias(q, j, alias);
            c->alias = xmalloc(p * sizeof(double));
            for (size_t k = 0; k < p; k++)
                c->alias[k] = (double)alias[k];
            free(alias);
            continue;
        }
        c->estimate = (double)b[j];
        fit_inference classical =
            inference(c->estimate, inverse_gram[j * p + j] * variance, f->df_residual, t_critical);
        c->std_error = classical.std_error;
        c->t = classical.t;
        c->p = classical.p;
        c->ci_low = classical.ci_low;
        c->ci_high = classical.ci_high;
        for (int kind = 0; kind < FIT_N_HC; kind++)
            c->robust[kind] = inference(c->estimate, fit_cov_at(f, f->robust_cov[kind], j, j),
                                        f->df_residual, t_critical);
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
    /* Normal errors with variance σ²/w_i, at the maximum-likelihood σ². */
    f->log_likelihood =
        -0.5 * n * (log(2.0 * M_PI) + log(f->rss / n) + 1.0) + 0.5 * f->sum_log_weights;
    double parameters = (double)f->rank + 1.0;
    f->aic = -2.0 * f->log_likelihood + 2.0 * parameters;
    f->bic = -2.0 * f->log_likelihood + log(n) * parameters;
}

static fit_result *result_new(const design *d, double level)
{
    size_t n = d->n_used, p = d->n_coefs;
    fit_result *f = xcalloc(1, sizeof *f);
    f->n = n;
    f->n_coefs = p;
    f->level = level;
    f->errors = d->model->errors;
    f->weighted = d->weights != NULL;
    f->coefs = xcalloc(p ? p : 1, sizeof *f->coefs);
    f->fitted = gsl_vector_alloc(n);
    f->residuals = gsl_vector_alloc(n);
    f->leverage = gsl_vector_alloc(n);
    f->cov = gsl_matrix_alloc(p ? p : 1, p ? p : 1);
    f->xtx_inverse = gsl_matrix_alloc(p ? p : 1, p ? p : 1);
    f->column_exponent = xcalloc(p ? p : 1, sizeof(int));
    long double log_weights = 0.0L;
    for (size_t i = 0; i < n && d->weights; i++)
        log_weights += logl(weight_of(d, i));
    f->sum_log_weights = (double)log_weights;
    return f;
}

/* (X̃ᵀX̃)⁻¹ in original coordinates (p×p row-major): R⁻¹R⁻ᵀ of the dense
   factor, or R₀⁻¹G⁻¹R₀⁻ᵀ of a corrected triangle (sandwich_of with M = G),
   whose relative error is near κ times the factor's rounding; on the
   dense path of an ill-conditioned design, refined solves instead (qr.c),
   which are accurate to the data's digits but cost passes in binary128. */
static void inverse_gram(const lsq_qr *q, const long double *corrected, const long double *gram,
                         bool dense, long double *out)
{
    if (dense && lsq_qr_condition(q) > REFINED_COVARIANCE) {
        lsq_qr_inverse_gram(q, out);
        return;
    }
    if (corrected) {
        lsq_qr_outer_sandwich(q, corrected, gram, out);
        return;
    }
    size_t rank = q->rank;
    long double *identity = xcalloc(rank * rank + 1, sizeof(long double));
    for (size_t k = 0; k < rank; k++)
        identity[k * rank + k] = 1.0L;
    lsq_qr_sandwich(q, identity, out);
    free(identity);
}

/* ---- units ------------------------------------------------------------------ */

/* The power of two taken out of the response: 0 while max √w|y| lies within
   2^±FIT_SAFE_EXPONENT (squares and sums of squares then fit in double),
   else its exponent, so that the fit sees numbers near 1. */
static int response_exponent_of(const design *d)
{
    double largest = 0.0;
    for (size_t i = 0; i < d->n_used; i++) {
        double v = fabs(gsl_vector_get(d->y, i)) * (d->weights ? sqrt(weight_of(d, i)) : 1.0);
        if (v > largest && isfinite(v))
            largest = v;
    }
    int exponent = 0;
    if (largest > 0)
        frexp(largest, &exponent);
    return abs(exponent) > FIT_SAFE_EXPONENT ? exponent : 0;
}

/* A column whose length is beyond 2^±FIT_SAFE_EXPONENT keeps its power of
   two out of the stored matrices (the factor has scaled it already). */
static void column_exponents(fit_result *f, const lsq_qr *q)
{
    for (size_t j = 0; j < f->n_coefs; j++) {
        int exponent;
        frexpl(1.0L / q->scale[j], &exponent);
        exponent -= 1; /* scale = 2^-e exactly */
        f->column_exponent[j] = abs(exponent) > FIT_SAFE_EXPONENT ? -exponent : 0;
    }
}

/* A sum of squares back in the data's units: NaN when that is beyond
   double's range (results.json shows null; the ratios were computed on
   the rescaled response). */
static double squares_in_units(double scaled, int e)
{
    if (e == 0)
        return scaled;
    double v = ldexp(scaled, 2 * e);
    return isfinite(v) && (v != 0 || scaled == 0) && (fabs(v) >= DBL_MIN || v == 0) ? v : NAN;
}

static void inference_in_units(fit_inference *in, double s)
{
    in->std_error *= s;
    in->ci_low *= s;
    in->ci_high *= s;
}

/* The fit ran on y·2^-e: first powers are multiplied back exactly, squares
   where double can hold them; the matrices keep the exponent
   (fit_cov_at). */
static void result_in_units(fit_result *f, int e)
{
    f->rss_scaled = f->rss;
    f->response_exponent = e;
    if (e == 0)
        return;
    double s = ldexp(1.0, e);
    for (size_t c = 0; c < f->n_coefs; c++) {
        fit_coef *coef = &f->coefs[c];
        coef->estimate *= s;
        fit_inference classical = {coef->std_error, coef->t, coef->p, coef->ci_low,
                                   coef->ci_high};
        inference_in_units(&classical, s);
        coef->std_error = classical.std_error;
        coef->ci_low = classical.ci_low;
        coef->ci_high = classical.ci_high;
        for (int kind = 0; kind < FIT_N_HC; kind++)
            inference_in_units(&coef->robust[kind], s);
        inference_in_units(&coef->hac, s);
    }
    gsl_vector_scale(f->fitted, s);
    gsl_vector_scale(f->residuals, s);
    f->sigma *= s;
    f->rss = squares_in_units(f->rss, e);
    f->tss = squares_in_units(f->tss, e);
    for (size_t k = 0; k < f->n_terms; k++) {
        f->term_tests[k].sum_squares = squares_in_units(f->term_tests[k].sum_squares, e);
        f->sequential_tests[k].sum_squares =
            squares_in_units(f->sequential_tests[k].sum_squares, e);
    }
    /* log(RSS/n) gains 2e·ln 2. */
    double shift = (double)f->n * (double)e * M_LN2;
    f->log_likelihood -= shift;
    f->aic += 2.0 * shift;
    f->bic += 2.0 * shift;
}

static fit_result *fit_scaled(const design *d, double level, fit_solver solver);

fit_result *fit_new_using(const design *d, double level, fit_solver solver)
{
    int e = response_exponent_of(d);
    if (e == 0) {
        fit_result *f = fit_scaled(d, level, solver);
        result_in_units(f, 0);
        return f;
    }
    /* The same design with its response divided by 2^e (exact). */
    design scaled = *d;
    scaled.y = gsl_vector_alloc(d->y->size);
    for (size_t i = 0; i < d->y->size; i++)
        gsl_vector_set(scaled.y, i, ldexp(gsl_vector_get(d->y, i), -e));
    fit_result *f = fit_scaled(&scaled, level, solver);
    gsl_vector_free(scaled.y);
    result_in_units(f, e);
    return f;
}

static fit_result *fit_scaled(const design *d, double level, fit_solver solver)
{
    size_t n = d->n_used, p = d->n_coefs;
    fit_result *f = result_new(d, level);
    bool dense = solver == FIT_SOLVER_DENSE ||
                 (solver == FIT_SOLVER_AUTO && n <= FIT_DENSE_MAX / p);
    f->solver = dense ? FIT_SOLVER_DENSE : FIT_SOLVER_STREAMING;
    lsq_tri *t = dense ? fit_triangle(&d, 1) : fit_triangle_fast(&d, 1);
    long double *b = xcalloc(p + 1, sizeof(long double));
    fit_row_sums sums = {NULL, {NULL, NULL, NULL}, NULL, 0.0L, 0.0, false};
    long double *gram_inverse = NULL;
    lsq_qr *q;
    if (dense) {
        long double *residuals;
        q = solve_dense(d, b, &residuals);
        fit_row_input in = {b, residuals, true, false};
        fit_rows(f, d, q, &in, &sums);
        free(residuals);
    } else {
        q = solve_streaming(f, d, t, b, &sums, &gram_inverse);
    }
    f->factor = fit_factor_new(q, gram_inverse ? sums.gram : NULL);
    long double *inverse = xmalloc((p * p + 1) * sizeof(long double));
    /* A wide design's sandwiches need only (X̃ᵀX̃)⁻¹ (wide_sandwiches),
       which the corrected factor R = LᵀR₀ gives as R⁻¹R⁻ᵀ directly. */
    bool wide = p > FIT_UNPIVOTED_MIN;
    long double *corrected = wide ? NULL : corrected_left(q, gram_inverse);
    if (wide && gram_inverse)
        fit_factor_inverse_gram(f->factor, inverse);
    else
        inverse_gram(q, corrected, sums.gram, dense, inverse);
    column_exponents(f, q);

    bool has_intercept = design_has_intercept(d);
    bool intercept = has_intercept || design_spans_constant(d);
    f->rss = (double)sums.rss;
    f->rank = q->rank;
    f->centred = intercept;
    f->constant_spanned = intercept && !has_intercept;
    f->hc_defined = !sums.leverage_one;
    f->tss = (double)total_sum_of_squares(d, intercept);
    f->df_residual = (double)n - (double)q->rank;
    f->df_model = (double)q->rank - (intercept ? 1.0 : 0.0);
    robust_covariances(f, d, q, &sums, corrected, inverse);
    free(corrected);
    coefficient_inference(f, q, b, inverse);
    model_summaries(f, intercept);
    f->triangle = t;
    fit_term_tests(f, d, t);
    fit_hac_inference(d, f);
    f->wald_f = f->wald_df_num = f->wald_df_den = f->wald_f_p = NAN;
    if (f->errors != SPEC_ERRORS_CLASSICAL && d->n_terms > 0) {
        f->wald_term_tests = xcalloc(d->n_terms, sizeof(fit_term_test));
        f->wald_sequential_tests = xcalloc(d->n_terms, sizeof(fit_term_test));
        fit_wald_terms(d, f, f->errors, f->wald_term_tests, f->wald_sequential_tests);
    }
    if (f->errors != SPEC_ERRORS_CLASSICAL) {
        fit_wald w = fit_wald_overall(d, f, f->errors);
        f->wald_f = w.f;
        f->wald_df_num = w.df_num;
        f->wald_df_den = w.df_den;
        f->wald_f_p = w.p;
    }
    fit_row_sums_free(&sums);
    free(gram_inverse);
    free(b);
    free(inverse);
    lsq_qr_free(q);
    return f;
}

fit_result *fit_new(const design *d, double level)
{
    return fit_new_using(d, level, FIT_SOLVER_AUTO);
}

fit_inference fit_lead_inference(const fit_result *f, size_t c)
{
    const fit_coef *coef = &f->coefs[c];
    switch (f->errors) {
    case SPEC_ERRORS_HC0: return coef->robust[FIT_HC0];
    case SPEC_ERRORS_HC1: return coef->robust[FIT_HC1];
    case SPEC_ERRORS_HC2: return coef->robust[FIT_HC2];
    case SPEC_ERRORS_HC3: return coef->robust[FIT_HC3];
    case SPEC_ERRORS_HAC: return coef->hac;
    case SPEC_ERRORS_CLASSICAL: break;
    }
    return (fit_inference){coef->std_error, coef->t, coef->p, coef->ci_low, coef->ci_high};
}

fit_inference fit_combination(const fit_result *f, const double *w, double *estimate)
{
    const gsl_matrix *v = f->cov;
    switch (f->errors) {
    case SPEC_ERRORS_HC0: v = f->robust_cov[FIT_HC0]; break;
    case SPEC_ERRORS_HC1: v = f->robust_cov[FIT_HC1]; break;
    case SPEC_ERRORS_HC2: v = f->robust_cov[FIT_HC2]; break;
    case SPEC_ERRORS_HC3: v = f->robust_cov[FIT_HC3]; break;
    case SPEC_ERRORS_HAC: v = f->hac_cov; break;
    case SPEC_ERRORS_CLASSICAL: break;
    }
    fit_inference none = {NAN, NAN, NAN, NAN, NAN};
    long double value = 0.0L, variance = 0.0L;
    for (size_t a = 0; a < f->n_coefs; a++) {
        if (w[a] == 0.0)
            continue;
        if (!f->coefs[a].estimable || !v) {
            *estimate = NAN;
            return none;
        }
        value += (long double)w[a] * f->coefs[a].estimate;
        for (size_t b = 0; b < f->n_coefs; b++)
            if (w[b] != 0.0)
                variance += (long double)w[a] * w[b] * fit_cov_at(f, v, a, b);
    }
    *estimate = (double)value;
    if (!(f->df_residual > 0))
        return none;
    double t_critical = gsl_cdf_tdist_Qinv((1.0 - f->level) / 2.0, f->df_residual);
    return inference((double)value, variance, f->df_residual, t_critical);
}

void fit_free(fit_result *f)
{
    if (!f)
        return;
    for (size_t c = 0; c < f->n_coefs; c++)
        free(f->coefs[c].alias);
    free(f->coefs);
    free(f->term_tests);
    free(f->sequential_tests);
    free(f->wald_term_tests);
    free(f->wald_sequential_tests);
    gsl_matrix_free(f->hac_cov);
    gsl_matrix_free(f->cov);
    gsl_matrix_free(f->xtx_inverse);
    free(f->column_exponent);
    for (int kind = 0; kind < FIT_N_HC; kind++)
        gsl_matrix_free(f->robust_cov[kind]);
    gsl_vector_free(f->fitted);
    gsl_vector_free(f->residuals);
    gsl_vector_free(f->leverage);
    fit_factor_free(f->factor);
    lsq_tri_free(f->triangle);
    free(f);
}
