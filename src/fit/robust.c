/*
 * robust.c — tests that follow the covariance the model asks for: Wald F
 * tests of terms, of the whole model and of nested models under a
 * heteroscedasticity-consistent (HC0–HC3) or autocorrelation-consistent
 * (Newey–West) covariance, and the Newey–West covariance itself.
 *
 * For a sub-model with columns S (fitted by least squares on the rows of
 * the design, weighted rows x̃ = √w x, ỹ = √w y, residuals ẽ = ỹ − x̃ᵀb):
 *     V = G M G,  G = (X̃ₛᵀX̃ₛ)⁻¹,
 *     HC:  M = Σ ω_i x̃_i x̃_iᵀ with ω_i = ẽ_i² (HC0), ẽ_i² n/(n − r) (HC1),
 *          ẽ_i²/(1 − h_i) (HC2), ẽ_i²/(1 − h_i)² (HC3) (MacKinnon & White
 *          1985, J. Econometrics 29);
 *     HAC: with scores s_i = ẽ_i x̃_i in the order of the rows,
 *          M = Σ s_i s_iᵀ + Σ_{l=1..L} (1 − l/(L+1)) Σ_i (s_i s_{i−l}ᵀ + s_{i−l} s_iᵀ)
 *          (Newey & West 1987, Econometrica 55, Bartlett weights).
 * The Wald test that the coefficients T ⊂ S are zero is
 *     F = b_Tᵀ (V_TT)⁻¹ b_T / q,  q = |T|, on (q, n − r) degrees of freedom,
 * r the rank of S (as statsmodels' wald_test with use_f). Term tests use
 * the same sub-models as the classical ones (terms.c): given the others,
 * S = every term not containing T; in order, S = terms 1..k.
 *
 * Lag rule when the spec gives none: L = ⌊4 (n/100)^(2/9)⌋ (Newey & West
 * 1994, Rev. Econ. Stud. 61, the fixed starting rule of their automatic
 * selection).
 */
#include "internal.h"

#include <gsl/gsl_cdf.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <threads.h>

/* Condition number of a sub-model's scaled columns beyond which its
   (X̃ₛᵀX̃ₛ)⁻¹ comes from refined solves (the fit's REFINED_COVARIANCE). */
static const long double SUBMODEL_REFINED_COVARIANCE = 1e4L;
enum { SUBMODEL_REFINED_MAX = 256 };

size_t fit_hac_rule(size_t n)
{
    return (size_t)floor(4.0 * pow((double)n / 100.0, 2.0 / 9.0));
}

/* The sandwich of one sub-model: the columns used (estimable within the
   sub-model), its coefficients and covariance, the residual df. */
typedef struct {
    size_t k;     /* columns offered */
    size_t *cols; /* design columns, k entries */
    size_t rank;
    bool *estimable;  /* k entries */
    long double *b;   /* k entries */
    long double *cov; /* k×k row-major; zero rows for aliased columns, and
                         only the rows of tested columns filled (the Wald
                         test reads no other) */
    double df_residual;
} sandwich;

static void sandwich_free(sandwich *s)
{
    free(s->cols);
    free(s->estimable);
    free(s->b);
    free(s->cov);
}

static long double dot(const long double *a, const long double *b, size_t k)
{
    long double s = 0.0L;
    for (size_t i = 0; i < k; i++)
        s += a[i] * b[i];
    return s;
}

/* The Newey–West meat Σ_l w_l Σ_i (s_i s_{i−l}ᵀ + s_{i−l} s_iᵀ) with Bartlett
   weights w_l = 1 − l/(L+1), summed as (1/(L+1)) Σ_j W_j W_jᵀ over the
   n + L sliding windows W_j = s_{j−L} + … + s_j (scores outside the rows
   taken as zero): a pair of scores l apart shares L + 1 − l windows, which
   is the Bartlett weight times L + 1 (the representation Newey & West 1987
   use to show the estimator is positive semi-definite). O(n k²) for any
   L, and only the last L + 1 scores are kept. The window sums run in long
   double; the products W_j W_jᵀ, the O(k²) part, are summed in double over
   blocks of FIT_BLOCK windows and the blocks added in long double. */
typedef struct {
    size_t k, lags, seen;
    long double *ring;   /* (lags + 1) × k: the scores of the window */
    long double *window; /* k: their sum */
    double *pending;     /* k × FIT_BLOCK, column-major: windows not yet in meat */
    size_t n_pending;
    long double *meat;   /* k × k */
} bartlett_sum;

static void bartlett_init(bartlett_sum *b, size_t k, size_t lags, long double *meat)
{
    b->k = k;
    b->lags = lags;
    b->seen = 0;
    b->ring = xcalloc((lags + 1) * k + 1, sizeof(long double));
    b->window = xcalloc(k + 1, sizeof(long double));
    b->pending = xcalloc(k * FIT_BLOCK + 1, sizeof(double));
    b->n_pending = 0;
    b->meat = meat;
}

static void bartlett_flush(bartlett_sum *b)
{
    for (size_t a = 0; a < b->k; a++)
        for (size_t j = b->n_pending; j < FIT_BLOCK; j++)
            b->pending[a * FIT_BLOCK + j] = 0.0;
    fit_block_gram_add(b->pending, b->k, b->meat);
    b->n_pending = 0;
}

/* Whether every product of two window entries and their sum over a block
   stay well inside double's range (scores of data far from unit scale,
   1e200 say, do not). */
static bool bartlett_in_double_range(const bartlett_sum *b)
{
    for (size_t a = 0; a < b->k; a++) {
        long double m = fabsl(b->window[a]);
        if (m != 0.0L && (m > 0x1p480L || m < 0x1p-440L))
            return false;
    }
    return true;
}

static void bartlett_window(bartlett_sum *b)
{
    size_t k = b->k;
    if (!bartlett_in_double_range(b)) {
        for (size_t a = 0; a < k; a++)
            for (size_t c = 0; c <= a; c++)
                b->meat[a * k + c] += b->window[a] * b->window[c];
        return;
    }
    for (size_t a = 0; a < k; a++)
        b->pending[a * FIT_BLOCK + b->n_pending] = (double)b->window[a];
    if (++b->n_pending == FIT_BLOCK)
        bartlett_flush(b);
}

/* Slides the window on by the next score in row order (NULL: a zero past
   the last row), without adding the window to the meat. */
static void bartlett_push(bartlett_sum *b, const long double *score)
{
    size_t k = b->k;
    long double *slot = b->ring + (b->seen % (b->lags + 1)) * k;
    for (size_t a = 0; a < k; a++) {
        b->window[a] -= slot[a];
        slot[a] = score ? score[a] : 0.0L;
        b->window[a] += slot[a];
    }
    b->seen++;
}

/* Adds the next score in row order, and its window to the meat. */
static void bartlett_add(bartlett_sum *b, const long double *score)
{
    bartlett_push(b, score);
    bartlett_window(b);
}

/* The trailing windows past the last row. */
static void bartlett_tail(bartlett_sum *b)
{
    for (size_t l = 0; l < b->lags; l++)
        bartlett_add(b, NULL);
}

/* The pending windows into the meat; the buffers go. */
static void bartlett_end(bartlett_sum *b)
{
    if (b->n_pending > 0)
        bartlett_flush(b);
    free(b->ring);
    free(b->window);
    free(b->pending);
}

/* The scale 1/(L+1) and the upper triangle of a summed meat. */
static void bartlett_scale(long double *meat, size_t k, size_t lags)
{
    long double scale = 1.0L / (long double)(lags + 1);
    for (size_t a = 0; a < k; a++)
        for (size_t c = 0; c <= a; c++) {
            meat[a * k + c] *= scale;
            meat[c * k + a] = meat[a * k + c];
        }
}

/* The sub-model's coefficients and (X̃ₛᵀX̃ₛ)⁻¹ (k × k, row-major, into g)
   from a pass over the rows: the triangle of [X̃ₛ | ỹ] and its pivoted QR. */
static void submodel_from_rows(const design *d, const size_t *cols, size_t k, sandwich *out,
                               long double *g)
{
    size_t n = d->n_used, p = d->n_coefs;
    long double *row = xmalloc(p * sizeof(long double));
    long double *x = xmalloc((k + 1) * sizeof(long double));
    lsq_tri *t = lsq_tri_new(k + 1);
    for (size_t i = 0; i < n; i++) {
        long double y = fit_weighted_row(d, i, row);
        for (size_t j = 0; j < k; j++)
            x[j] = row[cols[j]];
        x[k] = y;
        lsq_tri_add(t, x);
    }
    lsq_tri_finish(t);
    size_t m = k + 1;
    long double *a = xmalloc(m * k * sizeof(long double));
    memcpy(a, t->r, m * k * sizeof(long double));
    lsq_qr *q = lsq_qr_new(a, m, k, FIT_RANK_TOLERANCE);
    out->b = xmalloc(k * sizeof(long double));
    long double *r = xmalloc(m * sizeof(long double));
    lsq_qr_solve(q, t->r + k * m, out->b, r);
    /* As the fit's own covariance (fit.c): R⁻¹R⁻ᵀ in long double when the
       scaled columns are well conditioned, refined solves otherwise; above
       SUBMODEL_REFINED_MAX columns the refinement (k solves in binary128,
       O(k³) each) would take minutes, and R⁻¹R⁻ᵀ in long double (relative
       error near κ · 2⁻⁶⁴) is used whatever the condition. */
    if (k <= SUBMODEL_REFINED_MAX && lsq_qr_condition(q) > SUBMODEL_REFINED_COVARIANCE) {
        lsq_qr_inverse_gram(q, g);
    } else {
        long double *identity = xcalloc(q->rank * q->rank + 1, sizeof(long double));
        for (size_t j = 0; j < q->rank; j++)
            identity[j * q->rank + j] = 1.0L;
        lsq_qr_sandwich(q, identity, g);
        free(identity);
    }
    out->rank = q->rank;
    out->estimable = xmalloc(k * sizeof(bool));
    for (size_t j = 0; j < k; j++)
        out->estimable[j] = lsq_qr_estimable(q, j);
    lsq_qr_free(q);
    lsq_tri_free(t);
    free(r);
    free(x);
    free(row);
}

/* Corrections of the sub-model's coefficients b by the semi-normal
   equations over the rows, δ = G X̃ₛᵀ(ỹ − X̃ₛb) (Björck 1987): the
   triangle the first b came from may have been folded in double. */
enum { SUBMODEL_CORRECTIONS = 2 };

static void submodel_correct(const design *d, const size_t *cols, size_t k,
                             const long double *g, long double *b)
{
    size_t p = d->n_coefs;
    long double *row = xmalloc(p * sizeof(long double));
    long double *gradient = xmalloc((k + 1) * sizeof(long double));
    size_t *nz = xmalloc((k + 1) * sizeof(size_t));
    for (int pass = 0; pass < SUBMODEL_CORRECTIONS; pass++) {
        memset(gradient, 0, k * sizeof(long double));
        for (size_t i = 0; i < d->n_used; i++) {
            long double e = fit_weighted_row(d, i, row);
            size_t nnz = 0;
            for (size_t j = 0; j < k; j++)
                if (row[cols[j]] != 0.0L) {
                    nz[nnz++] = j;
                    e -= row[cols[j]] * b[j];
                }
            for (size_t u = 0; u < nnz; u++)
                gradient[nz[u]] += row[cols[nz[u]]] * e;
        }
        for (size_t a = 0; a < k; a++)
            b[a] += dot(g + a * k, gradient, k);
    }
    free(nz);
    free(gradient);
    free(row);
}

/* The same from the fit's own triangle when the full model has full rank
   (fit_subset_triangle, no pass to fold the rows): false when the rule
   there asks for the pivoted solve. */
static bool submodel_from_triangle(const design *d, const fit_result *f, const size_t *cols,
                                   size_t k, sandwich *out, long double *g)
{
    const lsq_tri *t = f->triangle;
    if (!t || f->rank != d->n_coefs || t->k != d->n_coefs + 1)
        return false;
    long double *r = xmalloc((k * k + 1) * sizeof(long double));
    long double *z = xmalloc((t->k + 1) * sizeof(long double));
    bool done = fit_subset_triangle(t, cols, k, d->n_coefs, r, z, g);
    if (done) {
        /* R b = z₁ by columns of R, then back in the data's units. */
        out->b = xmalloc(k * sizeof(long double));
        memcpy(out->b, z, k * sizeof(long double));
        for (size_t l = k; l-- > 0;) {
            out->b[l] /= r[l * k + l];
            for (size_t i = 0; i < l; i++)
                out->b[i] -= r[l * k + i] * out->b[l];
        }
        for (size_t j = 0; j < k; j++)
            out->b[j] = ldexpl(out->b[j], f->response_exponent);
        submodel_correct(d, cols, k, g, out->b);
        out->rank = k;
        out->estimable = xmalloc(k * sizeof(bool));
        for (size_t j = 0; j < k; j++)
            out->estimable[j] = true;
    }
    free(r);
    free(z);
    return done;
}

/* Fits the columns cols[0..k) and forms V under kind (not classical), its
   entries for the columns flagged in tested (by design column). */
static bool sandwich_compute(const design *d, const fit_result *f, const size_t *cols,
                             size_t k, const bool *tested, spec_errors kind, sandwich *out)
{
    memset(out, 0, sizeof *out);
    size_t n = d->n_used, p = d->n_coefs;
    if (k == 0 || (kind == SPEC_ERRORS_HAC && !d->order))
        return false;
    out->k = k;
    out->cols = xmalloc(k * sizeof(size_t));
    memcpy(out->cols, cols, k * sizeof(size_t));
    long double *g = xmalloc((k * k + 1) * sizeof(long double));
    if (!submodel_from_triangle(d, f, cols, k, out, g))
        submodel_from_rows(d, cols, k, out, g);
    long double *row = xmalloc(p * sizeof(long double));
    long double *x = xmalloc((k + 1) * sizeof(long double));
    out->df_residual = (double)n - (double)out->rank;
    /* Pass 2: residuals, leverages and the meat, rows in order for HAC. */
    bool hac = kind == SPEC_ERRORS_HAC;
    size_t lags = hac ? f->hac_lags : 0;
    long double *meat = xcalloc(k * k, sizeof(long double));
    long double *score = xmalloc((k + 1) * sizeof(long double));
    bartlett_sum window;
    if (hac)
        bartlett_init(&window, k, lags, meat);
    size_t *nz = xmalloc(k * sizeof(size_t));
    bool defined = true;
    long double scale = kind == SPEC_ERRORS_HC1 && out->df_residual > 0
                            ? (long double)n / (long double)out->df_residual
                            : 1.0L;
    for (size_t step = 0; step < n; step++) {
        size_t i = hac ? d->order[step] : step;
        long double y = fit_weighted_row(d, i, row);
        for (size_t j = 0; j < k; j++)
            x[j] = out->estimable[j] ? row[cols[j]] : 0.0L;
        long double e = y - dot(x, out->b, k);
        if (hac) {
            for (size_t j = 0; j < k; j++)
                score[j] = e * x[j];
            bartlett_add(&window, score);
            continue;
        }
        /* Indicator columns are mostly zero: the row products run over
           the nonzero entries only (skipping exact zeros leaves every sum
           as it was). */
        size_t nnz = 0;
        for (size_t j = 0; j < k; j++)
            if (x[j] != 0.0L)
                nz[nnz++] = j;
        long double h = 0.0L;
        for (size_t u = 0; u < nnz; u++) {
            size_t a1 = nz[u];
            long double s = 0.0L;
            for (size_t v = 0; v < nnz; v++)
                s += g[a1 * k + nz[v]] * x[nz[v]];
            h += x[a1] * s;
        }
        long double omega = e * e * scale;
        if (kind == SPEC_ERRORS_HC2 || kind == SPEC_ERRORS_HC3) {
            long double rest = 1.0L - h;
            if (rest < (long double)FIT_LEVERAGE_ONE)
                defined = false;
            omega /= kind == SPEC_ERRORS_HC3 ? rest * rest : rest;
        }
        for (size_t u = 0; u < nnz; u++)
            for (size_t v = 0; v < nnz; v++)
                meat[nz[u] * k + nz[v]] += omega * x[nz[u]] * x[nz[v]];
    }
    if (hac) {
        bartlett_tail(&window);
        bartlett_end(&window);
        bartlett_scale(meat, k, lags);
    }
    /* V = G M G. */
    long double *gm = xcalloc(k * k, sizeof(long double));
    out->cov = xcalloc(k * k, sizeof(long double));
    for (size_t a1 = 0; a1 < k; a1++)
        for (size_t c = 0; c < k && tested[cols[a1]]; c++) {
            long double gc = g[a1 * k + c];
            const long double *mc = meat + c * k;
            for (size_t a2 = 0; a2 < k; a2++)
                if (mc[a2] != 0.0L)
                    gm[a1 * k + a2] += gc * mc[a2];
        }
    /* The tested rows of (G M) G, row by row of G (lsq_combine_rows). */
    for (size_t a1 = 0; a1 < k; a1++)
        if (tested[cols[a1]])
            lsq_combine_rows(out->cov + a1 * k, gm + a1 * k, k, g, k, k);
    free(gm);
    free(meat);
    free(score);
    free(nz);
    free(g);
    free(x);
    free(row);
    if (!defined) {
        sandwich_free(out);
        memset(out, 0, sizeof *out);
        return false;
    }
    return true;
}

static const fit_wald NO_WALD = {NAN, NAN, NAN, NAN};

/* Wald test that the columns flagged in tested (among s's) are zero. */
static fit_wald wald_of(const sandwich *s, const bool *tested)
{
    size_t *at = xmalloc(s->k * sizeof(size_t));
    size_t q = 0;
    for (size_t j = 0; j < s->k; j++)
        if (tested[s->cols[j]] && s->estimable[j])
            at[q++] = j;
    fit_wald out = NO_WALD;
    if (q > 0 && s->df_residual > 0) {
        long double *v = xmalloc(q * q * sizeof(long double));
        long double *b_tested = xmalloc(q * sizeof(long double));
        long double *solved = xmalloc(q * sizeof(long double));
        for (size_t a = 0; a < q; a++) {
            b_tested[a] = s->b[at[a]];
            for (size_t b = 0; b < q; b++)
                v[a * q + b] = s->cov[at[a] * s->k + at[b]];
        }
        /* b_Tᵀ V_TT⁻¹ b_T from one solve, not the inverse. */
        if (lsq_spd_solve(v, q, b_tested, solved)) {
            long double w = dot(b_tested, solved, q);
            out.df_num = (double)q;
            out.df_den = s->df_residual;
            out.f = (double)(w / (long double)q);
            out.p = fit_f_p_value(out.f, out.df_num, out.df_den);
        }
        free(v);
        free(b_tested);
        free(solved);
    }
    free(at);
    return out;
}

/* The whole model's sandwich is the fit's own covariance (from its
   factor and its pass over the rows): no refit. False when that
   covariance is not defined. */
static bool full_model_sandwich(const fit_result *f, spec_errors kind, sandwich *out)
{
    memset(out, 0, sizeof *out);
    const gsl_matrix *v = NULL;
    switch (kind) {
    case SPEC_ERRORS_HC0: v = f->robust_cov[FIT_HC0]; break;
    case SPEC_ERRORS_HC1: v = f->robust_cov[FIT_HC1]; break;
    case SPEC_ERRORS_HC2: v = f->hc_defined ? f->robust_cov[FIT_HC2] : NULL; break;
    case SPEC_ERRORS_HC3: v = f->hc_defined ? f->robust_cov[FIT_HC3] : NULL; break;
    case SPEC_ERRORS_HAC: v = f->hac_defined ? f->hac_cov : NULL; break;
    case SPEC_ERRORS_CLASSICAL: break;
    }
    size_t k = f->n_coefs;
    if (!v || k == 0)
        return false;
    out->k = k;
    out->cols = xmalloc(k * sizeof(size_t));
    out->estimable = xmalloc(k * sizeof(bool));
    out->b = xmalloc(k * sizeof(long double));
    out->cov = xmalloc(k * k * sizeof(long double));
    out->rank = f->rank;
    out->df_residual = f->df_residual;
    for (size_t j = 0; j < k; j++) {
        out->cols[j] = j;
        out->estimable[j] = f->coefs[j].estimable;
        out->b[j] = f->coefs[j].estimable ? f->coefs[j].estimate : 0.0L;
        for (size_t c = 0; c < k; c++)
            out->cov[j * k + c] = fit_cov_at(f, v, j, c);
    }
    return true;
}

fit_wald fit_wald_columns(const design *d, const fit_result *f, const bool *in_model,
                          const bool *tested, spec_errors kind)
{
    size_t *cols = xmalloc((d->n_coefs ? d->n_coefs : 1) * sizeof(size_t));
    size_t k = 0;
    for (size_t c = 0; c < d->n_coefs; c++)
        if (in_model[c])
            cols[k++] = c;
    sandwich s;
    fit_wald out = NO_WALD;
    if (k == d->n_coefs && full_model_sandwich(f, kind, &s)) {
        out = wald_of(&s, tested);
        sandwich_free(&s);
    } else if (k < d->n_coefs && sandwich_compute(d, f, cols, k, tested, kind, &s)) {
        out = wald_of(&s, tested);
        sandwich_free(&s);
    }
    free(cols);
    return out;
}

static bool term_has_column(const design_term *term, const data_column *column)
{
    for (size_t i = 0; i < term->n_columns; i++)
        if (term->columns[i] == column)
            return true;
    return false;
}

/* Does big strictly contain small (as in terms.c)? */
static bool contains(const design_term *big, const design_term *small)
{
    for (size_t i = 0; i < small->n_columns; i++)
        if (!term_has_column(big, small->columns[i]))
            return false;
    for (size_t i = 0; i < big->n_columns; i++)
        if (!term_has_column(small, big->columns[i]))
            return true;
    return false;
}

void fit_wald_terms(const design *d, const fit_result *f, spec_errors kind,
                    fit_term_test *marginal, fit_term_test *sequential)
{
    size_t p = d->n_coefs;
    bool *in_model = xmalloc((p ? p : 1) * sizeof(bool));
    bool *tested = xmalloc((p ? p : 1) * sizeof(bool));
    for (size_t t = 0; t < d->n_terms; t++) {
        /* Given the others: every term not strictly containing t. */
        for (size_t c = 0; c < p; c++) {
            size_t term = d->coefs[c].term;
            in_model[c] = term == SIZE_MAX || !contains(&d->terms[term], &d->terms[t]);
            tested[c] = term == t;
        }
        fit_wald w = fit_wald_columns(d, f, in_model, tested, kind);
        marginal[t] = (fit_term_test){t, w.df_num, NAN, w.f, w.p};
        /* In order: terms 1..t. */
        for (size_t c = 0; c < p; c++) {
            size_t term = d->coefs[c].term;
            in_model[c] = term == SIZE_MAX || term <= t;
        }
        w = fit_wald_columns(d, f, in_model, tested, kind);
        sequential[t] = (fit_term_test){t, w.df_num, NAN, w.f, w.p};
    }
    free(in_model);
    free(tested);
}

fit_wald fit_wald_overall(const design *d, const fit_result *f, spec_errors kind)
{
    size_t p = d->n_coefs;
    if (f->constant_spanned)
        return NO_WALD; /* the constant lies in the span of the level indicators */
    bool *in_model = xmalloc((p ? p : 1) * sizeof(bool));
    bool *tested = xmalloc((p ? p : 1) * sizeof(bool));
    for (size_t c = 0; c < p; c++) {
        in_model[c] = true;
        tested[c] = d->coefs[c].n_parts > 0;
    }
    fit_wald w = fit_wald_columns(d, f, in_model, tested, kind);
    free(in_model);
    free(tested);
    return w;
}

/* One stretch of the Newey–West pass: the windows that end at steps first
   … last − 1 of the row order (and, for the last stretch, the trailing
   windows), summed into meat. The window is first filled with the L
   scores before first, which its first windows reach back to. */
typedef struct {
    const design *d;
    const fit_result *f;
    size_t first, last;
    long double *meat; /* rank², zeroed */
} hac_stretch;

static int hac_stretch_sum(void *arg)
{
    hac_stretch *h = arg;
    const design *d = h->d;
    const fit_result *f = h->f;
    size_t rank = fit_factor_rank(f->factor), n = d->n_used;
    double *u = xmalloc((rank + 1) * sizeof(double));
    long double *score = xmalloc((rank + 1) * sizeof(long double));
    bartlett_sum window;
    bartlett_init(&window, rank, f->hac_lags, h->meat);
    fit_whitened_rows *rows = fit_whitened_rows_new(f->factor, d, d->order, n);
    size_t from = h->first > f->hac_lags ? h->first - f->hac_lags : 0;
    for (size_t step = from; step < h->last; step++) {
        size_t i = d->order[step];
        double root = d->weights ? sqrt(gsl_vector_get(d->weights, i)) : 1.0;
        fit_whitened_row(rows, step, u);
        long double e = root * (long double)gsl_vector_get(f->residuals, i);
        for (size_t a = 0; a < rank; a++)
            score[a] = e * u[a];
        if (step < h->first)
            bartlett_push(&window, score);
        else
            bartlett_add(&window, score);
    }
    if (h->last == n)
        bartlett_tail(&window);
    bartlett_end(&window);
    fit_whitened_rows_free(rows);
    free(score);
    free(u);
    return 0;
}

/* The meat Σ W_j W_jᵀ/(L + 1) of the whole model's scores in the whitened
   coordinates of the fit's factor, s_i = ẽ_i R⁻ᵀS₁ᵀx̃_i: no second
   factorization, rows read in order. */
static void hac_meat(const design *d, const fit_result *f, long double *meat)
{
    size_t rank = fit_factor_rank(f->factor), n = d->n_used;
    hac_stretch whole = {d, f, 0, n, meat};
    if (n < FIT_HAC_SPLIT_ROWS) {
        hac_stretch_sum(&whole);
    } else {
        /* The second stretch starts at a multiple of FIT_BLOCK windows, as
           the blocks of one stretch would. */
        size_t middle = n / 2 / FIT_BLOCK * FIT_BLOCK;
        long double *second = xcalloc(rank * rank + 1, sizeof(long double));
        hac_stretch first_half = {d, f, 0, middle, meat},
                    second_half = {d, f, middle, n, second};
        thrd_t helper;
        bool parallel = thrd_create(&helper, hac_stretch_sum, &second_half) == thrd_success;
        hac_stretch_sum(&first_half);
        if (parallel)
            thrd_join(helper, NULL);
        else
            hac_stretch_sum(&second_half);
        for (size_t a = 0; a < rank * rank; a++)
            meat[a] += second[a];
        free(second);
    }
    bartlett_scale(meat, rank, f->hac_lags);
}

void fit_hac_inference(const design *d, fit_result *f)
{
    size_t p = d->n_coefs;
    f->hac_lags = d->model->lags >= 0 ? (size_t)d->model->lags : fit_hac_rule(d->n_used);
    for (size_t c = 0; c < p; c++)
        f->coefs[c].hac = (fit_inference){NAN, NAN, NAN, NAN, NAN};
    if (!d->order || !(f->df_residual > 0))
        return;
    size_t rank = fit_factor_rank(f->factor);
    long double *meat = xcalloc(rank * rank + 1, sizeof(long double));
    long double *cov = xmalloc((p * p + 1) * sizeof(long double));
    hac_meat(d, f, meat);
    fit_factor_sandwich(f->factor, meat, cov);
    free(meat);
    {
        f->hac_defined = true;
        f->hac_cov = gsl_matrix_calloc(p, p);
        fit_store_matrix(f, f->hac_cov, cov, 1.0L, 1.0, true);
        double t_critical = gsl_cdf_tdist_Qinv((1.0 - f->level) / 2.0, f->df_residual);
        for (size_t c = 0; c < p; c++) {
            fit_coef *coef = &f->coefs[c];
            if (!coef->estimable)
                continue;
            long double variance = cov[c * p + c];
            fit_inference *out = &coef->hac;
            out->std_error = variance >= 0 ? fit_root(variance) : NAN;
            out->t = coef->estimate / out->std_error;
            out->p = fit_t_p_value(out->t, f->df_residual);
            out->ci_low = coef->estimate - t_critical * out->std_error;
            out->ci_high = coef->estimate + t_critical * out->std_error;
        }
    }
    free(cov);
}
