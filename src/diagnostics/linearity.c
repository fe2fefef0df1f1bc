/*
 * linearity.c — did the model miss curvature?
 *
 * Ramsey's (1969, JRSS B 31:350–371) RESET: add ŷ² and ŷ³ to the design
 * and F-test them (the design's part taken out through the fit's factor,
 * two passes over the rows, no copy of the design),
 *   F = ((RSS₀ − RSS₁)/k) / (RSS₁/(n − p − k)),
 * k the number of added columns that are not already in the design's
 * span. ŷ is divided by max|ŷ| first (same span, tamer powers), and the
 * added columns are residualized against the design, so RSS₀ − RSS₁ is
 * computed directly as the regression sum of squares of e on them.
 * Cohen's f² = (RSS₀ − RSS₁)/RSS₁ is the effect size the verdict weighs.
 * The test from the residualized Gram matrix on is
 * diagnostics_reset_from_gram, which src/pushdown calls with the same
 * matrices formed from sums computed in the database.
 */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Below this fraction of its length left after residualizing, a power of
   ŷ is taken to be in the design's span already. */
static const double SPAN_TOLERANCE = 1e-9;

/* a_k,i = √wᵢ (ŷᵢ / max|ŷ|)^k, k = 2, 3. */
static void added_columns(const diag_view *v, size_t i, double largest, double *a)
{
    double t = v->fitted[i] / largest;
    a[0] = diag_root_w(v, i) * t * t;
    a[1] = a[0] * t;
}

static void reset_clear(diag_reset *out)
{
    memset(out, 0, sizeof *out);
    out->f = out->df_num = out->df_den = out->p = out->cohen_f2 = NAN;
}

void diagnostics_reset_from_gram(size_t n, size_t p, double rss, const long double gram[4],
                                 const long double cross[2], const long double length[2],
                                 diag_reset *out)
{
    reset_clear(out);
    /* Keep the powers that are not already in the design's span. */
    size_t keep[2], k = 0;
    for (size_t j = 0; j < 2; j++)
        if (sqrtl(gram[j * 3]) > SPAN_TOLERANCE * sqrtl(length[j]))
            keep[k++] = j;
    long double g[4], y[2];
    for (size_t s = 0; s < k; s++) {
        y[s] = cross[keep[s]];
        for (size_t t = 0; t < k; t++)
            g[s * k + t] = gram[keep[s] * 2 + keep[t]];
    }
    double ss = 0.0;
    if (k > 0)
        k = diag_gram_projected_ss(g, y, k, &ss);
    if (k == 0) {
        out->reason = DIAG_REASON_FITTED_IN_DESIGN;
        return;
    }
    if (n <= p + k) {
        out->reason = DIAG_REASON_NO_RESIDUAL_DF;
        return;
    }
    double rss1 = rss - ss;
    if (rss1 < 0.0)
        rss1 = 0.0;
    out->computed = true;
    out->df_num = (double)k;
    out->df_den = (double)(n - p - k);
    out->f = (ss / out->df_num) / (rss1 / out->df_den);
    out->p = fit_f_p_value(out->f, out->df_num, out->df_den);
    out->cohen_f2 = ss / rss1;
}

void diag_reset_compute(const diag_view *v, diag_reset *out)
{
    size_t n = v->n, p = v->p, np = v->n_coefs;
    reset_clear(out);
    if (v->exact_fit) {
        out->reason = DIAG_REASON_EXACT_FIT;
        return;
    }
    double largest = 0.0;
    for (size_t i = 0; i < n; i++)
        if (fabs(v->fitted[i]) > largest)
            largest = fabs(v->fitted[i]);
    if (!(largest > 0)) {
        out->reason = DIAG_REASON_FITTED_IN_DESIGN;
        return;
    }
    /* First pass: X̃ᵀa for both columns, so that their coefficients on the
       design come from the factor, b = (X̃ᵀX̃)⁻¹X̃ᵀa. */
    long double *c = xcalloc(2 * np + 1, sizeof(long double));
    long double *b = xcalloc(2 * np + 1, sizeof(long double));
    double *x = xmalloc((DIAG_BLOCK * np + 1) * sizeof(double));
    double a[2];
    long double length[2] = {0.0L, 0.0L};
    for (size_t first = 0; first < n; first += DIAG_BLOCK) {
        size_t count = n - first < DIAG_BLOCK ? n - first : DIAG_BLOCK;
        diag_view_block(v, first, count, x);
        for (size_t i = 0; i < count; i++) {
            added_columns(v, first + i, largest, a);
            for (int k = 0; k < 2; k++) {
                length[k] += (long double)a[k] * a[k];
                for (size_t j = 0; j < np; j++)
                    c[k * np + j] += (long double)x[j * count + i] * a[k];
            }
        }
    }
    for (int k = 0; k < 2; k++)
        fit_factor_solve(v->factor, c + k * np, b + k * np);
    /* Second pass: the residualized columns rₖ = aₖ − X̃bₖ, formed row by
       row, their Gram matrix and their products with e (e ⊥ X̃, so rₖᵀe =
       aₖᵀe, but the residualized form keeps the digits). */
    long double gram[4] = {0, 0, 0, 0}, cross[2] = {0, 0};
    for (size_t first = 0; first < n; first += DIAG_BLOCK) {
        size_t count = n - first < DIAG_BLOCK ? n - first : DIAG_BLOCK;
        diag_view_block(v, first, count, x);
        for (size_t i = 0; i < count; i++) {
            added_columns(v, first + i, largest, a);
            long double r[2];
            for (int k = 0; k < 2; k++) {
                long double value = a[k];
                for (size_t j = 0; j < np; j++)
                    value -= (long double)x[j * count + i] * b[k * np + j];
                r[k] = value;
                cross[k] += value * v->e[first + i];
            }
            gram[0] += r[0] * r[0];
            gram[1] += r[0] * r[1];
            gram[3] += r[1] * r[1];
        }
    }
    gram[2] = gram[1];
    free(x);
    free(b);
    free(c);
    diagnostics_reset_from_gram(n, p, v->rss, gram, cross, length, out);
}
