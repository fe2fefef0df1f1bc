/*
 * variance.c — does the error variance change with the regressors?
 *
 * Auxiliary regression of the squared residuals gᵢ = eᵢ² on an intercept
 * and the regressors Z (the model's own columns, or the spec's
 * variance_columns), with R² = SSR/TSS of that regression:
 *   studentized (Koenker 1981, J. Econometrics 17:107–112): LM = n R²,
 *   original (Breusch & Pagan 1979, Econometrica 47:1287–1294):
 *     LM = SSR/(2 σ̃⁴) with σ̃² = Σe²/n, i.e. half the explained sum of
 *     squares of the regression of g/σ̃²;
 * both χ² with df = rank of the centred Z. The same regression's F test
 * is given as well. The original form assumes normal errors; Koenker's
 * does not, which is why it leads.
 *
 * On the model's own columns (with an intercept, unweighted) the auxiliary
 * regression has the model's design, and its explained sum of squares
 * comes from the fit's factor; other columns get a small Gram matrix of
 * their own, summed in one pass over the rows. The statistics from those
 * sums of squares on are diagnostics_breusch_pagan_from_ss, which
 * src/pushdown calls with sums computed in the database.
 */
#include "internal.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

static void not_computed(diag_breusch_pagan *out, diag_reason reason)
{
    out->computed = false;
    out->reason = reason;
}

/* SSR of the centred g on the model's own columns when they contain the
   intercept and carry no weights: the auxiliary regression then has the
   model's design, so SSR = ‖R⁻ᵀS₁ᵀX̃ᵀ(g − ḡ)‖² from the fit's factor and
   one pass for X̃ᵀ(g − ḡ). Returns the degrees of freedom. */
static size_t own_columns_ss(const diag_view *v, const double *g, double *ssr)
{
    size_t n = v->n, p = v->n_coefs, rank = fit_factor_rank(v->factor);
    long double *c = xcalloc(p + 1, sizeof(long double));
    double *x = xmalloc((DIAG_BLOCK * p + 1) * sizeof(double));
    for (size_t first = 0; first < n; first += DIAG_BLOCK) {
        size_t count = n - first < DIAG_BLOCK ? n - first : DIAG_BLOCK;
        diag_view_block(v, first, count, x);
        for (size_t j = 0; j < p; j++) {
            long double sum = 0.0L;
            const double *column = x + j * count;
            for (size_t i = 0; i < count; i++)
                sum += column[i] * g[first + i];
            c[j] += sum;
        }
    }
    long double *u = xmalloc((rank + 1) * sizeof(long double));
    fit_factor_whiten_long(v->factor, c, u);
    long double sum = 0.0L;
    for (size_t k = 0; k < rank; k++)
        sum += u[k] * u[k];
    *ssr = (double)sum;
    free(u);
    free(x);
    free(c);
    return rank - 1;
}

/* The column values of the other regressors on design row i: the spec's
   variance_columns, or the model's own non-intercept columns unweighted. */
static size_t other_columns(const diag_view *v, const data_table *t, const data_column **list)
{
    const spec_model *m = v->design->model;
    for (size_t j = 0; j < m->n_variance_columns; j++)
        list[j] = data_find(t, m->variance_columns[j]);
    return m->n_variance_columns;
}

/* SSR of the centred g on other regressors Z (k columns, centred), from
   their small Gram matrix: one pass with the values shifted by their first
   row (which leaves centred products unchanged and avoids cancellation). */
static size_t other_columns_ss(const diag_view *v, const data_table *t, const double *g,
                               double *ssr)
{
    const design *d = v->design;
    size_t n = v->n;
    const data_column **list =
        xmalloc((d->model->n_variance_columns + 1) * sizeof(data_column *));
    size_t k = other_columns(v, t, list);
    size_t *own = xmalloc((v->p + 1) * sizeof(size_t));
    if (k == 0)
        for (size_t j = 0; j < v->p; j++)
            if (!(v->intercept && j == v->intercept_column))
                own[k++] = v->columns[j];
    bool from_table = d->model->n_variance_columns > 0;
    if (k == 0) {
        free(own);
        free(list);
        *ssr = 0.0;
        return 0;
    }
    long double *gram = xcalloc(k * k + 1, sizeof(long double));
    long double *sum = xcalloc(k + 1, sizeof(long double));
    long double *cross = xcalloc(k + 1, sizeof(long double));
    double *shift = xmalloc((k + 1) * sizeof(double));
    double *z = xmalloc((k + 1) * sizeof(double));
    size_t p = v->n_coefs;
    double *x = xmalloc((DIAG_BLOCK * p + 1) * sizeof(double));
    long double g_sum = 0.0L;
    for (size_t first = 0; first < n; first += DIAG_BLOCK) {
        size_t count = n - first < DIAG_BLOCK ? n - first : DIAG_BLOCK;
        if (!from_table)
            design_block_double(d, first, count, x, count);
        for (size_t i = 0; i < count; i++) {
            for (size_t a = 0; a < k; a++)
                z[a] = from_table ? list[a]->numbers[design_table_row(d, first + i)]
                                  : x[own[a] * count + i];
            if (first + i == 0)
                memcpy(shift, z, k * sizeof(double));
            for (size_t a = 0; a < k; a++)
                z[a] -= shift[a];
            double gi = g[first + i];
            g_sum += gi;
            for (size_t a = 0; a < k; a++) {
                sum[a] += z[a];
                cross[a] += (long double)z[a] * gi;
                for (size_t b = 0; b <= a; b++)
                    gram[a * k + b] += (long double)z[a] * z[b];
            }
        }
    }
    long double nn = (long double)n;
    for (size_t a = 0; a < k; a++) {
        cross[a] -= sum[a] * g_sum / nn;
        for (size_t b = 0; b <= a; b++) {
            gram[a * k + b] -= sum[a] * sum[b] / nn;
            gram[b * k + a] = gram[a * k + b];
        }
    }
    size_t df = diag_gram_projected_ss(gram, cross, k, ssr);
    free(x);
    free(z);
    free(shift);
    free(cross);
    free(sum);
    free(gram);
    free(own);
    free(list);
    return df;
}

static void bp_clear(size_t n, diag_breusch_pagan *out)
{
    memset(out, 0, sizeof *out);
    out->n = n;
    out->aux_r_squared = out->f = out->f_df_num = out->f_df_den = out->f_p = NAN;
    out->studentized = out->original = (diag_chi2_test){NAN, NAN, NAN};
}

void diagnostics_breusch_pagan_from_ss(size_t n, size_t df, double ssr, long double tss,
                                       long double mean, double rss, diag_breusch_pagan *out)
{
    bp_clear(n, out);
    if (df == 0) {
        not_computed(out, DIAG_REASON_NO_REGRESSORS);
        return;
    }
    out->computed = true;
    double nn = (double)n, sigma2 = rss / nn;
    /* Squared residuals equal to rounding: the variance is constant. */
    bool constant = tss <= nn * (64.0 * DBL_EPSILON * mean) * (64.0 * DBL_EPSILON * mean);
    double r2 = constant ? 0.0 : ssr / (double)tss;
    out->aux_r_squared = r2;
    out->studentized.df = out->original.df = out->f_df_num = (double)df;
    out->studentized.statistic = nn * r2;
    out->original.statistic = constant ? 0.0 : ssr / (2.0 * sigma2 * sigma2);
    out->studentized.p = diag_chi2_q(out->studentized.statistic, (double)df);
    out->original.p = diag_chi2_q(out->original.statistic, (double)df);
    out->f_df_den = nn - (double)df - 1.0;
    if (out->f_df_den > 0) {
        out->f = constant ? 0.0 : (r2 / (double)df) / ((1.0 - r2) / out->f_df_den);
        out->f_p = constant ? 1.0 : fit_f_p_value(out->f, (double)df, out->f_df_den);
    }
}

void diag_breusch_pagan_compute(const diag_view *v, const data_table *t,
                                diag_breusch_pagan *out)
{
    size_t n = v->n;
    bool own_columns = v->design->model->n_variance_columns > 0;
    if (v->exact_fit) {
        bp_clear(n, out);
        out->own_columns = own_columns;
        not_computed(out, DIAG_REASON_EXACT_FIT);
        return;
    }
    double *g = xmalloc((n + 1) * sizeof(double));
    long double mean = 0.0L;
    for (size_t i = 0; i < n; i++) {
        g[i] = v->e[i] * v->e[i];
        mean += g[i];
    }
    mean /= (long double)n;
    long double tss = 0.0L;
    for (size_t i = 0; i < n; i++) {
        g[i] = (double)(g[i] - mean);
        tss += (long double)g[i] * g[i];
    }
    double ssr = 0.0;
    size_t df;
    if (!own_columns && !v->design->weights && v->intercept)
        df = own_columns_ss(v, g, &ssr);
    else
        df = other_columns_ss(v, t, g, &ssr);
    free(g);
    diagnostics_breusch_pagan_from_ss(n, df, ssr, tss, mean, v->rss, out);
    out->own_columns = own_columns;
}
