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

void diag_breusch_pagan_compute(const diag_view *v, const gsl_matrix *z, bool own_columns,
                                diag_breusch_pagan *out)
{
    size_t n = v->n, k = z ? z->size2 : 0;
    memset(out, 0, sizeof *out);
    out->own_columns = own_columns;
    out->n = n;
    out->aux_r_squared = out->f = out->f_df_num = out->f_df_den = out->f_p = NAN;
    out->studentized = out->original = (diag_chi2_test){NAN, NAN, NAN};
    if (v->exact_fit) {
        not_computed(out, DIAG_REASON_EXACT_FIT);
        return;
    }
    double *g = xmalloc(n * sizeof(double));
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
    gsl_matrix *centred = k ? gsl_matrix_alloc(n, k) : NULL;
    for (size_t j = 0; j < k; j++) {
        long double column_mean = 0.0L;
        for (size_t i = 0; i < n; i++)
            column_mean += gsl_matrix_get(z, i, j);
        column_mean /= (long double)n;
        for (size_t i = 0; i < n; i++)
            gsl_matrix_set(centred, i, j, (double)(gsl_matrix_get(z, i, j) - column_mean));
    }
    double ssr = 0.0;
    size_t df = k ? diag_projected_ss(centred, g, &ssr) : 0;
    gsl_matrix_free(centred);
    free(g);
    if (df == 0) {
        not_computed(out, DIAG_REASON_NO_REGRESSORS);
        return;
    }
    out->computed = true;
    double nn = (double)n, sigma2 = v->rss / nn;
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
