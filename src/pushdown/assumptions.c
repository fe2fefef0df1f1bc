/*
 * assumptions.c — pass two's residual diagnostics inside PostgreSQL.
 *
 * Every statistic here is a function of sums over the rows, so pass two
 * sums them as exact numeric (b inlined as the decimals of its doubles,
 * which the server multiplies exactly) and fitproof finishes them with
 * pass one's exact (XᵀWX)⁻¹ and β, then hands them to the diagnostics'
 * own formulas:
 *   Breusch–Pagan on the model's columns: g = e² regressed on X, with
 *     ESS = cᵀ(XᵀX)⁻¹c − (Σg)²/n, c = Xᵀg, and TSS = Σg² − (Σg)²/n;
 *     on other columns Z (variance_columns, or X unweighted with weights
 *     or without an intercept), the same with Z centred exactly: ESS =
 *     cᵀG⁻¹c, G = ZᵀZ − ZᵀllᵀZ/n, c = Zᵀg − Zᵀl Σg/n (l the ones);
 *   RESET: aₖ = √w ŷᵏ (k = 2, 3) residualized against √W X exactly,
 *     Gram Sₖₗ = aₖᵀaₗ − Bₖᵀ(XᵀWX)⁻¹Bₗ with Bₖ = XᵀW ŷᵏ, and their
 *     products with the residuals aₖᵀ√W y − Bₖᵀβ (the design's part of
 *     e drops out of a column orthogonal to the design);
 *   influence: the flag rules as inequalities without division (s² and
 *     the bounds inlined), the maxima of e²/(1 − h) and e²h/(1 − h)², in
 *     pass two or, on a partitioned source, a pass of their own (pushdown.c).
 * The leverage h uses the inverse inlined as the nearest doubles, and the
 * rules' bounds are the diagnostics' doubles, so the counts agree with the
 * in-process ones except for a row within rounding of a bound.
 */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* The squared Pearson residual w d², exact in numeric. */
static const char *const E2 = "w * d * d";

/* Breusch–Pagan's own-columns case: an intercept, no weights and no
   variance_columns (the others regress on unweighted or other columns). */
static bool pd_bp_case(const spec_model *m, const design *d)
{
    if (d->weight || m->n_variance_columns > 0)
        return false;
    for (size_t c = 0; c < d->n_coefs; c++)
        if (d->coefs[c].n_parts == 0)
            return true;
    return false;
}

/* Breusch–Pagan's other-columns case, as the diagnostics choose it: the
   variance_columns (when exact in SQL), else the design's columns
   unweighted, without the intercept, when the model has weights or no
   intercept. Returns how many columns, and names them z or x in *letter. */
static size_t pd_bp_other_columns(const design *d, const pushdown_result *r, char *letter,
                                  size_t **columns)
{
    const spec_model *m = d->model;
    *columns = NULL;
    if (m->n_variance_columns > 0) {
        *letter = 'z';
        if (!r->variance_exact)
            return 0;
        *columns = xmalloc(m->n_variance_columns * sizeof(size_t));
        for (size_t k = 0; k < m->n_variance_columns; k++)
            (*columns)[k] = k;
        return m->n_variance_columns;
    }
    if (pd_bp_case(m, d))
        return 0;
    *letter = 'x';
    size_t k = 0;
    *columns = xmalloc((d->n_coefs + 1) * sizeof(size_t));
    for (size_t c = 0; c < d->n_coefs; c++)
        if (d->coefs[c].n_parts > 0)
            (*columns)[k++] = c;
    return k;
}

/* Σ z_a, Σ z_a z_b (a ≤ b) and Σ z_a e² over the k other columns. */
static size_t pd_bp_other_sums(buf *a, const design *d, const pushdown_result *r, size_t at,
                               pd_layout *layout)
{
    char z;
    size_t *col;
    size_t k = pd_bp_other_columns(d, r, &z, &col);
    layout->bp_other = k > 0;
    layout->bp_variance_columns = z == 'z';
    layout->bp_other_at = at;
    layout->bp_other_k = k;
    for (size_t i = 0; i < k; i++)
        buf_printf(a, ", sum(%c%zu) AS a%zu", z, col[i], at++);
    for (size_t i = 0; i < k; i++)
        for (size_t j = i; j < k; j++)
            buf_printf(a, ", sum(%c%zu * %c%zu) AS a%zu", z, col[i], z, col[j], at++);
    for (size_t i = 0; i < k; i++)
        buf_printf(a, ", sum(%c%zu * %s) AS a%zu", z, col[i], E2, at++);
    free(col);
    return at;
}

static void pd_power(buf *a, const char *name, int k)
{
    for (int j = 0; j < k; j++)
        buf_printf(a, "%s%s", j ? " * " : "", name);
}

/* ŷ's powers against the design, each other and y, weighted: B₂, B₃
   (2p), Σ w ŷ⁴, ŷ⁵, ŷ⁶, Σ w ŷ² y, Σ w ŷ³ y. */
static size_t pd_reset_sums(buf *a, const design *d, size_t at)
{
    for (int k = 2; k <= 3; k++)
        for (size_t j = 0; j < d->n_coefs; j++) {
            buf_printf(a, ", sum(w * x%zu * ", j);
            pd_power(a, "f", k);
            buf_printf(a, ") AS a%zu", at++);
        }
    for (int k = 4; k <= 6; k++) {
        buf_puts(a, ", sum(w * ");
        pd_power(a, "f", k);
        buf_printf(a, ") AS a%zu", at++);
    }
    for (int k = 2; k <= 3; k++) {
        buf_puts(a, ", sum(w * ");
        pd_power(a, "f", k);
        buf_printf(a, " * y) AS a%zu", at++);
    }
    return at;
}

static void pd_count(buf *a, size_t at, const char *condition)
{
    if (condition)
        buf_printf(a, ", sum(CASE WHEN %s THEN 1 ELSE 0 END) AS a%zu", condition, at);
    else
        buf_printf(a, ", sum(0) AS a%zu", at);
}

/* One row's rule k as an inequality free of division, with s² = RSS/(n −
   p): r² = e²/(s²(1 − h)), |t| > c ⟺ r²(n − p − 1 + c²) > c²(n − p),
   D > c ⟺ e²h > c p s² (1 − h)², |DFFITS| > c ⟺
   e²(n − p − 1)h > c²(1 − h)(RSS(1 − h) − e²). NULL when the bound is not
   a number (the rule flags nothing). */
static char *pd_rule(size_t k, const double *bound, double n, double p, const char *rss)
{
    double c = bound[k], df = n - p - 1.0;
    if (isnan(c) || (k != 0 && df <= 0))
        return NULL;
    buf b;
    buf_init(&b);
    if (k == 0)
        buf_printf(&b, "h > %.17g", c);
    else if (k == 1 || k == 2)
        buf_printf(&b, "h < 1 AND %s * %.17g > %.17g * %s * (1 - h)", E2, df + c * c, c * c,
                   rss);
    else if (k == 3 || k == 4)
        buf_printf(&b, "h < 1 AND %s * h > %.17g * %s * (1 - h) * (1 - h)", E2, c * p / (n - p),
                   rss);
    else
        buf_printf(&b, "h < 1 AND %s * %.17g * h > %.17g * (1 - h) * (%s * (1 - h) - %s)", E2,
                   df, c * c, rss, E2);
    return buf_detach(&b);
}

void pd_assumption_sums(buf *a, const design *d, size_t first, const pushdown_result *r,
                        pd_layout *layout)
{
    memset(layout, 0, sizeof *layout);
    size_t at = first, p = d->n_coefs;
    layout->breusch_pagan = pd_bp_case(d->model, d);
    layout->bp_at = at;
    for (size_t j = 0; layout->breusch_pagan && j < p; j++)
        buf_printf(a, ", sum(x%zu * d * d) AS a%zu", j, at++);
    if (!layout->breusch_pagan)
        at = pd_bp_other_sums(a, d, r, at, layout);
    layout->reset_at = at;
    layout->end = pd_reset_sums(a, d, at);
}

void pd_influence_sums(buf *a, const spec *s, const design *d, const pd_exact *ex,
                       pd_layout *layout)
{
    size_t at = layout->end, p = d->n_coefs;
    layout->flags_at = at;
    layout->influence = mpq_sgn(ex->rss) > 0;
    if (!layout->influence)
        return;
    diagnostics_influence_thresholds(d->n_used, p, s->report.alpha, layout->threshold);
    buf rss;
    buf_init(&rss);
    pd_digits(ex->rss, false, &rss);
    for (size_t k = 0; k < DIAG_N_RULES; k++) {
        char *rule = pd_rule(k, layout->threshold, (double)d->n_used, (double)p, rss.data);
        pd_count(a, at++, rule);
        free(rule);
    }
    buf_free(&rss);
    layout->end = at;
}

void pd_influence_maxima(buf *a, pd_layout *layout, size_t at)
{
    layout->max_at = at;
    if (!layout->influence)
        return;
    buf_printf(a, ", max(CASE WHEN h < 1 THEN %s / (1 - h) END) AS a%zu", E2, at);
    buf_printf(a, ", max(CASE WHEN h < 1 THEN %s * h / ((1 - h) * (1 - h)) END) AS a%zu", E2,
               at + 1);
}

/* Σ_ij u_i A_ij v_j over the p × p rational A. */
static void pd_form(mpq_t out, mpq_t *u, mpq_t *a, mpq_t *v, size_t p)
{
    mpq_t t;
    mpq_init(t);
    mpq_set_ui(out, 0, 1);
    for (size_t i = 0; i < p; i++)
        for (size_t j = 0; j < p; j++) {
            mpq_mul(t, u[i], a[i * p + j]);
            mpq_mul(t, t, v[j]);
            mpq_add(out, out, t);
        }
    mpq_clear(t);
}

/* Columns first … first + count − 1 of res as rationals; false when one is
   not a number. */
static bool pd_read(const PGresult *res, size_t first, size_t count, mpq_t *out)
{
    bool ok = true;
    for (size_t k = 0; k < count; k++) {
        mpq_init(out[k]);
        ok = pd_rational(out[k], PQgetvalue(res, 0, (int)(first + k))) && ok;
    }
    return ok;
}

static void pd_clear(mpq_t *q, size_t count)
{
    for (size_t k = 0; k < count; k++)
        mpq_clear(q[k]);
    free(q);
}

/* count rationals, each 0; free with pd_clear. */
static mpq_t *pd_zeros(size_t count)
{
    mpq_t *q = xcalloc(count + 1, sizeof(mpq_t));
    for (size_t k = 0; k < count; k++)
        mpq_init(q[k]);
    return q;
}

/* The diagnostics' Breusch–Pagan from the auxiliary regression's explained
   sum of squares ess (df regressors) and pass two's g_sum = Σe² and
   g_squares = Σe⁴: TSS = Σe⁴ − (Σe²)²/n, exactly. */
static void pd_bp_from_sums(size_t n, size_t df, const mpq_t ess, const mpq_t g_sum,
                            const mpq_t g_squares, pushdown_result *r)
{
    mpq_t tss, mean, t;
    mpq_inits(tss, mean, t, NULL);
    mpq_set_ui(t, (unsigned long)n, 1);
    mpq_div(mean, g_sum, t);
    mpq_mul(t, mean, g_sum); /* (Σe²)²/n */
    mpq_sub(tss, g_squares, t);
    diagnostics_breusch_pagan_from_ss(n, df, pd_nearest(ess, false), pd_nearest_long(tss),
                                      pd_nearest_long(mean), pd_nearest(g_sum, false),
                                      &r->breusch_pagan);
    r->bp_computed = true;
    mpq_clears(tss, mean, t, NULL);
}

/* ESS = cᵀ(XᵀX)⁻¹c − (Σe²)²/n exactly. */
static void pd_breusch_pagan(const PGresult *res, const pd_layout *l, const pd_exact *ex,
                             size_t n, pushdown_result *r)
{
    size_t p = ex->p;
    mpq_t *c = xcalloc(p + 2, sizeof(mpq_t));
    bool ok = pd_read(res, l->bp_at, p, c);
    ok = pd_read(res, 3, 1, c + p) && ok;     /* Σ e² */
    ok = pd_read(res, 5, 1, c + p + 1) && ok; /* Σ e⁴ */
    if (ok && n > 0) {
        mpq_t ess, t;
        mpq_inits(ess, t, NULL);
        mpq_set_ui(t, (unsigned long)n, 1);
        mpq_div(t, c[p], t);
        mpq_mul(t, t, c[p]); /* (Σe²)²/n */
        pd_form(ess, c, ex->inverse, c, p);
        mpq_sub(ess, ess, t);
        pd_bp_from_sums(n, p - 1, ess, c[p], c[p + 1], r);
        mpq_clears(ess, t, NULL);
    }
    pd_clear(c, p + 2);
}

/* The other-columns case: the auxiliary regression of g = e² on the k
   columns z with an intercept, centred exactly, SSR = cᵀG⁻¹c with
   G = Σzzᵀ − ΣzΣzᵀ/n and c = Σz g − Σz Σg/n; not computed when G is
   singular (the diagnostics then use its rank). */
static void pd_bp_other(const PGresult *res, const pd_layout *l, size_t n, pushdown_result *r)
{
    size_t k = l->bp_other_k, m = k + k * (k + 1) / 2 + k;
    mpq_t *v = xcalloc(m + 2, sizeof(mpq_t));
    bool ok = pd_read(res, l->bp_other_at, m, v);
    ok = pd_read(res, 3, 1, v + m) && ok;     /* Σ e² */
    ok = pd_read(res, 5, 1, v + m + 1) && ok; /* Σ e⁴ */
    mpq_t *gram = pd_zeros(k * k), *inverse = pd_zeros(k * k), *cross = pd_zeros(k);
    mpq_t count, t, ssr;
    mpq_inits(count, t, ssr, NULL);
    mpq_set_ui(count, (unsigned long)n, 1);
    mpq_t *sum = v, *products = v + k, *with_g = v + k + k * (k + 1) / 2;
    mpq_t *g_sum = v + m, *g_squares = v + m + 1;
    size_t at = 0;
    for (size_t i = 0; i < k; i++)
        for (size_t j = i; j < k; j++, at++) {
            mpq_mul(t, sum[i], sum[j]);
            mpq_div(t, t, count);
            mpq_sub(gram[i * k + j], products[at], t);
            mpq_set(gram[j * k + i], gram[i * k + j]);
        }
    for (size_t i = 0; i < k; i++) {
        mpq_mul(t, sum[i], *g_sum);
        mpq_div(t, t, count);
        mpq_sub(cross[i], with_g[i], t);
    }
    if (ok && n > k + 1 && pd_invert(gram, inverse, k)) {
        pd_form(ssr, cross, inverse, cross, k);
        pd_bp_from_sums(n, k, ssr, *g_sum, *g_squares, r);
        r->breusch_pagan.own_columns = l->bp_variance_columns; /* as the diagnostics set it */
        r->bp_other = true;
    }
    mpq_clears(count, t, ssr, NULL);
    pd_clear(gram, k * k);
    pd_clear(inverse, k * k);
    pd_clear(cross, k);
    pd_clear(v, m + 2);
}

/* The residualized Gram matrix of √w ŷ², √w ŷ³ and their products with
   the residuals, exactly, then the diagnostics' RESET. */
static void pd_reset(const PGresult *res, const pd_layout *l, const pd_exact *ex, size_t n,
                     pushdown_result *r)
{
    size_t p = ex->p, m = 2 * p + 5;
    mpq_t *v = xcalloc(m, sizeof(mpq_t));
    if (pd_read(res, l->reset_at, m, v)) {
        mpq_t *b[2] = {v, v + p}, *c = v + 2 * p, *dy = v + 2 * p + 3;
        long double gram[4], cross[2], length[2];
        mpq_t t, u;
        mpq_inits(t, u, NULL);
        for (int k = 0; k < 2; k++) {
            for (int j = 0; j < 2; j++) {
                pd_form(t, b[k], ex->inverse, b[j], p);
                mpq_sub(t, c[k + j], t);
                gram[k * 2 + j] = pd_nearest_long(t);
            }
            mpq_set_ui(t, 0, 1);
            for (size_t j = 0; j < p; j++) {
                mpq_mul(u, b[k][j], ex->beta[j]);
                mpq_add(t, t, u);
            }
            mpq_sub(t, dy[k], t);
            cross[k] = pd_nearest_long(t);
            length[k] = pd_nearest_long(c[2 * k]);
        }
        diagnostics_reset_from_gram(n, p, pd_nearest(ex->rss, false), gram, cross, length,
                                    &r->reset);
        r->reset_computed = true;
        mpq_clears(t, u, NULL);
    }
    pd_clear(v, m);
}

/* The counts, and the maxima: max r² = max e²/(1 − h) / s², t from r²
   (increasing in r²), max D = max e²h/(1 − h)² / (p s²). */
void pd_influence_read(const PGresult *res, const pd_layout *l, const pd_exact *ex,
                       pushdown_result *r)
{
    size_t p = ex->p, n = (size_t)strtoull(PQgetvalue(res, 0, 0), NULL, 10);
    if (!l->influence || n <= p)
        return;
    for (size_t k = 0; k < DIAG_N_RULES; k++) {
        r->threshold[k] = l->threshold[k];
        r->flag_count[k] = strtoull(PQgetvalue(res, 0, (int)(l->flags_at + k)), NULL, 10);
    }
    long double rss = pd_nearest_long(ex->rss), residual_df = (long double)(n - p);
    long double s2 = rss / residual_df, df = residual_df - 1.0L;
    int at = (int)l->max_at;
    r->max_abs_studentized = r->max_cooks = NAN;
    if (!PQgetisnull(res, 0, at) && df > 0) {
        long double r2 = strtold(PQgetvalue(res, 0, at), NULL) / s2;
        long double rest = residual_df - r2;
        r->max_abs_studentized = rest > 0 ? (double)sqrtl(r2 * df / rest) : INFINITY;
    }
    if (!PQgetisnull(res, 0, at + 1))
        r->max_cooks = (double)(strtold(PQgetvalue(res, 0, at + 1), NULL) / ((long double)p * s2));
    r->influence_computed = true;
}

void pd_assumptions_read(const PGresult *res, const pd_layout *layout, const pd_exact *ex,
                         pushdown_result *r)
{
    size_t n = r->passes[1].rows_scanned;
    if (mpq_sgn(ex->rss) <= 0 || n <= ex->p)
        return; /* an exact fit: the diagnostics say why they are not computed */
    if (layout->breusch_pagan)
        pd_breusch_pagan(res, layout, ex, n, r);
    else if (layout->bp_other)
        pd_bp_other(res, layout, n, r);
    pd_reset(res, layout, ex, n, r);
}
