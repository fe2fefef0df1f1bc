/*
 * linearity.c — did the model miss curvature?
 *
 * Ramsey's (1969, JRSS B 31:350–371) RESET: add ŷ² and ŷ³ to the design
 * and F-test them,
 *   F = ((RSS₀ − RSS₁)/k) / (RSS₁/(n − p − k)),
 * k the number of added columns that are not already in the design's
 * span. ŷ is divided by max|ŷ| first (same span, tamer powers), and the
 * added columns are residualized against the design, so RSS₀ − RSS₁ is
 * computed directly as the regression sum of squares of e on them.
 * Cohen's f² = (RSS₀ − RSS₁)/RSS₁ is the effect size the verdict weighs.
 */
#include "internal.h"

#include <gsl/gsl_blas.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Below this fraction of its length left after residualizing, a power of
   ŷ is taken to be in the design's span already. */
static const double SPAN_TOLERANCE = 1e-9;

void diag_reset_compute(const diag_view *v, const diag_qr *q, diag_reset *out)
{
    size_t n = v->n, p = v->p;
    memset(out, 0, sizeof *out);
    out->f = out->df_num = out->df_den = out->p = out->cohen_f2 = NAN;
    if (v->exact_fit) {
        out->reason = DIAG_REASON_EXACT_FIT;
        return;
    }
    double largest = 0.0;
    for (size_t i = 0; i < n; i++)
        if (fabs(v->fitted[i]) > largest)
            largest = fabs(v->fitted[i]);
    gsl_matrix *added = gsl_matrix_alloc(n, 2);
    size_t k = 0;
    gsl_vector *column = gsl_vector_alloc(n);
    for (int power = 2; power <= 3 && largest > 0; power++) {
        for (size_t i = 0; i < n; i++) {
            double t = v->fitted[i] / largest;
            gsl_vector_set(column, i, v->root_w[i] * pow(t, power));
        }
        double before = gsl_blas_dnrm2(column);
        diag_qr_residualize(q, column);
        if (gsl_blas_dnrm2(column) > SPAN_TOLERANCE * before)
            gsl_matrix_set_col(added, k++, column);
    }
    gsl_vector_free(column);
    double ss = 0.0;
    if (k > 0) {
        gsl_matrix_view kept = gsl_matrix_submatrix(added, 0, 0, n, k);
        k = diag_projected_ss(&kept.matrix, v->e, &ss);
    }
    gsl_matrix_free(added);
    if (k == 0) {
        out->reason = DIAG_REASON_FITTED_IN_DESIGN;
        return;
    }
    if (n <= p + k) {
        out->reason = DIAG_REASON_NO_RESIDUAL_DF;
        return;
    }
    double rss1 = v->rss - ss;
    if (rss1 < 0.0)
        rss1 = 0.0;
    out->computed = true;
    out->df_num = (double)k;
    out->df_den = (double)(n - p - k);
    out->f = (ss / out->df_num) / (rss1 / out->df_den);
    out->p = fit_f_p_value(out->f, out->df_num, out->df_den);
    out->cohen_f2 = ss / rss1;
}
