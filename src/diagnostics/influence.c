/*
 * influence.c — which rows drive the fit, and which do not fit it?
 *
 * With X = QR (p estimable columns; the fit's factor) and s² = Σe²/(n − p):
 *   leverage hᵢ = ‖R⁻ᵀxᵢ‖² (the diagonal of the hat matrix),
 *   internally studentized rᵢ = eᵢ / (s √(1 − hᵢ)),
 *   externally studentized tᵢ = rᵢ √((n − p − 1)/(n − p − rᵢ²))
 *     (s from the fit without row i; Belsley, Kuh & Welsch 1980, 2.2),
 *   Cook's distance Dᵢ = rᵢ² hᵢ / (p (1 − hᵢ)) (Cook 1977),
 *   DFFITSᵢ = tᵢ √(hᵢ / (1 − hᵢ)) (Belsley, Kuh & Welsch 1980).
 * The leverages are the fit's (‖R⁻ᵀxᵢ‖² from its factor, in its pass over
 * the rows), and so is the HC3 covariance (MacKinnon & White 1985),
 * Σᵢ eᵢ²/(1 − hᵢ)² gᵢgᵢᵀ with gᵢ = (XᵀX)⁻¹xᵢ, read here only to measure how
 * far heteroscedasticity-consistent standard errors move from the
 * classical ones.
 *
 * Flag rules (bounds in diag_rules order): leverage above 2p/n (Hoaglin &
 * Welsch 1978); the Bonferroni outlier test, n·P(|T| > |tᵢ|) < alpha with
 * n − p − 1 degrees of freedom (Cook & Weisberg 1982, 2.2.2); |tᵢ| > 3
 * (common practice, no source); Cook's D above the median of F(p, n − p)
 * (Cook 1977's comparison with F percentiles); Cook's D above 4/n (common
 * practice, no source); |DFFITS| above 2√(p/n) (Belsley, Kuh & Welsch 1980).
 */
#include "internal.h"

#include <gsl/gsl_cdf.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

const diag_rule diag_rules[DIAG_N_RULES] = {
    {"leverage_above_2p_over_n", "Hoaglin & Welsch (1978)"},
    {"bonferroni_outlier", "Cook & Weisberg (1982)"},
    {"studentized_above_3", NULL},
    {"cooks_above_f_median", "Cook (1977)"},
    {"cooks_above_4_over_n", NULL},
    {"dffits_above_2_root_p_over_n", "Belsley, Kuh & Welsch (1980)"},
};

void diag_influence_free(diag_influence *inf)
{
    free(inf->owned_lines);
    free(inf->owned_residual);
    free(inf->zero_leverage);
    free(inf->flags);
}

void diagnostics_influence_thresholds(size_t rows, size_t coefs, double alpha,
                                      double threshold[DIAG_N_RULES])
{
    double n = (double)rows, p = (double)coefs, df = n - p - 1.0;
    threshold[0] = 2.0 * p / n;
    threshold[1] = df > 0 ? gsl_cdf_tdist_Qinv(alpha / (2.0 * n), df) : NAN;
    threshold[2] = 3.0;
    threshold[3] = n > p ? gsl_cdf_fdist_Pinv(0.5, p, n - p) : NAN;
    threshold[4] = 4.0 / n;
    threshold[5] = 2.0 * sqrt(p / n);
}

static void thresholds(diag_influence *out, double alpha)
{
    double n = (double)out->n, p = (double)out->p, df = n - p - 1.0;
    diagnostics_influence_thresholds(out->n, out->p, alpha, out->threshold);
    /* With every h_i = p/n, DFFITS_i = t_i √(p/(n − p)), and under normal
       errors the externally studentized t_i follows t(n − p − 1) (Belsley,
       Kuh & Welsch 1980, §2.1), so |DFFITS_i| > 2√(p/n) exactly when
       |t_i| > 2√((n − p)/n): the share a clean sample flags by chance. */
    out->chance_share =
        df > 0 ? 2.0 * gsl_cdf_tdist_Q(2.0 * sqrt((n - p) / n), df) : NAN;
    /* The same clean sample for every rule: no leverage exceeds 2p/n; each
       tᵢ ~ t(n − p − 1), so the Bonferroni rule flags alpha/n of the rows
       and |t| > 3 a share 2 P(T > 3); with hᵢ = p/n, Dᵢ = rᵢ²/(n − p) and
       rᵢ²/(n − p) ~ Beta(½, (n − p − 1)/2) (Cook & Weisberg 1982, §2.2),
       which gives both Cook's rules. */
    out->expected_share[0] = 0.0;
    out->expected_share[1] = df > 0 ? alpha / n : NAN;
    out->expected_share[2] = df > 0 ? 2.0 * gsl_cdf_tdist_Q(3.0, df) : NAN;
    out->expected_share[3] =
        df > 0 ? gsl_cdf_beta_Q(out->threshold[3], 0.5, df / 2.0) : NAN;
    out->expected_share[4] = df > 0 ? gsl_cdf_beta_Q(out->threshold[4], 0.5, df / 2.0) : NAN;
    out->expected_share[5] = out->chance_share;
}

diag_row_measures diag_influence_row(const diag_influence *inf, size_t i)
{
    diag_row_measures m = {NAN, NAN, NAN, NAN};
    double h = inf->leverage[i], s = inf->scale;
    if (!inf->measured || !(h < 1.0))
        return m;
    double n = (double)inf->n, p = (double)inf->p;
    double r = inf->scaled_residual[i] / (s * sqrt(1.0 - h));
    m.standardized = r;
    m.cooks = r * r * h / (p * (1.0 - h));
    double df = n - p - 1.0;
    if (df <= 0)
        return m;
    double rest = n - p - r * r;
    double t = rest > 0 ? r * sqrt(df / rest) : copysign(INFINITY, r);
    m.studentized = t;
    m.dffits = t * sqrt(h / (1.0 - h));
    return m;
}

double diag_influence_residual(const diag_influence *inf, size_t i)
{
    return ldexp(inf->scaled_residual[i], inf->exponent);
}

/* Order of influence: Cook's distance, then leverage, then file order. */
typedef struct {
    double cooks; /* -1 where undefined */
    double leverage;
    size_t row;
} ranked_row;

static ranked_row ranked(const diag_influence *out, size_t i, double cooks)
{
    double h = out->leverage[i];
    return (ranked_row){isnan(cooks) ? -1.0 : cooks, isnan(h) ? -1.0 : h, i};
}

static bool more_influential(ranked_row a, ranked_row b)
{
    if (a.cooks != b.cooks)
        return a.cooks > b.cooks;
    if (a.leverage != b.leverage)
        return a.leverage > b.leverage;
    return a.row < b.row;
}

/* Row r among the DIAG_TOP_ROWS most influential so far, by insertion into
   a short sorted list (one comparison for nearly every row). */
static void keep_top(diag_influence *out, ranked_row *top, ranked_row r)
{
    if (out->n_top == DIAG_TOP_ROWS && !more_influential(r, top[DIAG_TOP_ROWS - 1]))
        return;
    size_t at = out->n_top < DIAG_TOP_ROWS ? out->n_top++ : DIAG_TOP_ROWS - 1;
    while (at > 0 && more_influential(r, top[at - 1])) {
        top[at] = top[at - 1];
        at--;
    }
    top[at] = r;
}

static unsigned row_flags(const diag_influence *out, double h, const diag_row_measures *m)
{
    double value[DIAG_N_RULES] = {h,
                                  fabs(m->studentized),
                                  fabs(m->studentized),
                                  m->cooks,
                                  m->cooks,
                                  fabs(m->dffits)};
    unsigned flags = 0;
    for (size_t k = 0; k < DIAG_N_RULES; k++)
        if (value[k] > out->threshold[k]) /* false for NaN */
            flags |= 1u << k;
    return flags;
}

/* One pass over the rows: the flags, the counts per rule, the largest
   leverage and Cook's distance, the most influential rows. */
static void summarize(diag_influence *out)
{
    ranked_row top[DIAG_TOP_ROWS];
    out->n_top = 0;
    for (size_t i = 0; i < out->n; i++) {
        diag_row_measures m = diag_influence_row(out, i);
        double h = out->leverage[i];
        unsigned flags = row_flags(out, h, &m);
        out->flags[i] = (uint8_t)flags;
        for (size_t k = 0; k < DIAG_N_RULES; k++)
            if (flags & (1u << k))
                out->count[k]++;
        if (flags)
            out->n_flagged++;
        if (h > out->max_leverage || i == 0) {
            out->max_leverage = h;
            out->max_leverage_line = out->lines[i];
        }
        if (!isnan(m.cooks) && (isnan(out->max_cooks) || m.cooks > out->max_cooks)) {
            out->max_cooks = m.cooks;
            out->max_cooks_line = out->lines[i];
        }
        keep_top(out, top, ranked(out, i, m.cooks));
    }
    for (size_t k = 0; k < out->n_top; k++)
        out->top[k] = top[k].row;
}

void diag_influence_compute(diag_view *v, const uint32_t *lines, uint32_t *owned_lines,
                            double alpha, diag_influence *out)
{
    size_t n = v->n, p = v->p;
    const fit_result *f = v->fit;
    memset(out, 0, sizeof *out);
    out->n = n;
    out->p = p;
    out->max_cooks = NAN;
    out->hc3_change = NAN;
    out->lines = lines;
    out->owned_lines = owned_lines;
    out->flags = xcalloc(n ? n : 1, sizeof *out->flags);
    thresholds(out, alpha);
    double s = n > p ? sqrt(v->rss / (double)(n - p)) : NAN;
    out->scale = s;
    out->measured = !(v->exact_fit || p == 0) && s > 0;
    /* The leverages are the fit's: ‖R⁻ᵀx̃ᵢ‖² from its factor, summed in
       its pass over the rows, and not copied. */
    if (p)
        out->leverage = f->leverage->data;
    else
        out->leverage = out->zero_leverage = xcalloc(n ? n : 1, sizeof(double));
    /* The view's residuals: the fit's own, or its copy in the fit's units
       times √w, which the influence now owns. */
    out->scaled_residual = v->e;
    out->exponent = v->response_exponent;
    out->owned_residual = v->owned[1];
    v->owned[1] = NULL;
    if (p && !v->exact_fit && s > 0) {
        /* The fit's HC3 covariance is the sum above, Σ ωᵢ gᵢgᵢᵀ. */
        double change = 0.0;
        for (size_t j = 0; j < p; j++) {
            const fit_coef *c = &f->coefs[v->columns[j]];
            double ratio = c->robust[FIT_HC3].std_error / c->std_error;
            if (fabs(ratio - 1.0) > change || isnan(ratio))
                change = isnan(ratio) ? NAN : fabs(ratio - 1.0);
            if (isnan(change))
                break;
        }
        out->hc3_change = change;
    }
    summarize(out);
}
