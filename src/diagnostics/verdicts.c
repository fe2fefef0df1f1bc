/*
 * verdicts.c — one verdict per assumption, and the remedies that apply.
 *
 * For the four tested assumptions the p-value says whether there is
 * evidence of a departure at alpha, and an effect size says whether the
 * departure is big enough to matter; a large sample detects departures
 * too small to change any conclusion, which is what "doubtful" records:
 *   holds     p ≥ alpha: no departure detected (never a claim that the
 *             assumption is true; the report prints the size beside it and
 *             says when the size is beyond its threshold all the same);
 *   doubtful  p < alpha, effect below its threshold: a possible departure;
 *   violated  p < alpha, effect at or above its threshold;
 *   not assessed  the test could not be computed (the reason says why).
 * Effect sizes and thresholds:
 *   normality: max(|√b1| / 0.5, |b2 − 3| / 1) ≥ 1, i.e. skewness beyond
 *     ±0.5 or excess kurtosis beyond ±1 (common practice, no source);
 *   constant variance: the largest relative change of a standard error when
 *     HC3 replaces the classical ones, ≥ 0.1 (fitproof's choice: a change
 *     of a tenth is where intervals start to read differently);
 *   independence: |1 − d/2| (the lag-1 autocorrelation) ≥ 0.1, Cohen's
 *     (1988) "small" correlation — it widens the standard error of a mean
 *     by about a tenth, √((1 + ρ)/(1 − ρ)) ≈ 1.1; decided on the
 *     two-sided p-value;
 *   linearity: Cohen's f² of the RESET terms ≥ 0.02, Cohen's (1988)
 *     "small" effect.
 * Two assumptions are judged without a test:
 *   collinearity: largest VIF (GVIF^(1/df) for multi-df terms) ≤ 5 holds,
 *     ≤ 10 doubtful, above 10 violated (common practice, no source);
 *   influence: a row with Cook's D above the F median is violated; a
 *     Bonferroni outlier with less influence is doubtful; otherwise holds.
 */
#include "internal.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

static void add_remedy(diag_verdict *v, diag_remedy r)
{
    if (v->n_remedies < DIAG_MAX_REMEDIES)
        v->remedies[v->n_remedies++] = r;
}

static diag_verdict start(diag_assumption assumption, diag_effect kind, double effect,
                          double threshold)
{
    diag_verdict v;
    memset(&v, 0, sizeof v);
    v.assumption = assumption;
    v.p = NAN;
    v.effect_kind = kind;
    v.effect = effect;
    v.effect_threshold = threshold;
    return v;
}

static void not_assessed(diag_verdict *v, diag_reason reason)
{
    v->verdict = DIAG_NOT_ASSESSED;
    v->reason = reason ? reason : DIAG_REASON_NOT_FINITE;
}

static bool departs(const diag_verdict *v)
{
    return v->verdict == DIAG_DOUBTFUL || v->verdict == DIAG_VIOLATED;
}

/* The tested rule: evidence from p, materiality from the effect. */
static void tested(diag_verdict *v, bool computed, diag_reason reason, double p,
                   double alpha)
{
    if (!computed || isnan(p)) {
        not_assessed(v, reason);
        return;
    }
    v->p = p;
    if (p >= alpha)
        v->verdict = DIAG_HOLDS; /* the report adds when the size is beyond its threshold */
    else if (v->effect < v->effect_threshold)
        v->verdict = DIAG_DOUBTFUL;
    else
        v->verdict = DIAG_VIOLATED; /* also when the effect is unknown (NaN) */
}

static diag_verdict normality(const diagnostics *g)
{
    const diag_moments *m = &g->moments;
    double shape =
        m->computed ? fmax(fabs(m->skewness) / 0.5, fabs(m->excess_kurtosis)) : NAN;
    diag_verdict v = start(DIAG_NORMALITY, DIAG_EFFECT_SHAPE, shape, 1.0);
    tested(&v, g->shapiro.computed, g->shapiro.reason, g->shapiro.p, g->alpha);
    if (departs(&v)) {
        add_remedy(&v, DIAG_REMEDY_TRANSFORM_RESPONSE);
        if (g->influence.count[1] > 0)
            add_remedy(&v, DIAG_REMEDY_INSPECT_ROWS);
    }
    return v;
}

static diag_verdict constant_variance(const diagnostics *g)
{
    const diag_breusch_pagan *bp = &g->breusch_pagan;
    diag_verdict v =
        start(DIAG_CONSTANT_VARIANCE, DIAG_EFFECT_SE_CHANGE, g->influence.hc3_change, 0.1);
    tested(&v, bp->computed, bp->reason, bp->studentized.p, g->alpha);
    if (departs(&v)) {
        add_remedy(&v, DIAG_REMEDY_HC3_ERRORS);
        add_remedy(&v, DIAG_REMEDY_WEIGHTED_FIT);
        add_remedy(&v, DIAG_REMEDY_TRANSFORM_RESPONSE);
        v.remedy_in_use = g->design->model->errors != SPEC_ERRORS_CLASSICAL;
    }
    return v;
}

static diag_verdict independence(const diagnostics *g)
{
    const diag_durbin_watson *dw = &g->durbin_watson;
    if (dw->computed && !dw->ordered) {
        diag_verdict v = start(DIAG_INDEPENDENCE, DIAG_EFFECT_NONE, NAN, NAN);
        not_assessed(&v, DIAG_REASON_NO_ORDER);
        add_remedy(&v, DIAG_REMEDY_ORDER_ROWS);
        return v;
    }
    diag_verdict v = start(DIAG_INDEPENDENCE, DIAG_EFFECT_AUTOCORRELATION,
                           fabs(dw->autocorrelation), 0.1);
    tested(&v, dw->computed, dw->reason, dw->p_two_sided, g->alpha);
    if (departs(&v)) {
        add_remedy(&v, DIAG_REMEDY_TIME_SERIES_MODEL);
        /* Missing shape can show as dependence, but only suggest it when
           the linearity test does not contradict it. */
        if (departs(&g->verdicts[DIAG_LINEARITY]))
            add_remedy(&v, DIAG_REMEDY_ADD_TERMS);
    }
    return v;
}

static diag_verdict linearity(const diagnostics *g)
{
    const diag_reset *r = &g->reset;
    diag_verdict v = start(DIAG_LINEARITY, DIAG_EFFECT_COHEN_F2, r->cohen_f2, 0.02);
    tested(&v, r->computed, r->reason, r->p, g->alpha);
    if (departs(&v)) {
        add_remedy(&v, DIAG_REMEDY_ADD_TERMS);
        add_remedy(&v, DIAG_REMEDY_TRANSFORM_RESPONSE);
    }
    return v;
}

static bool has_compound_terms(const spec_model *m)
{
    for (size_t t = 0; t < m->n_terms; t++)
        if (m->terms[t].kind != SPEC_TERM_MAIN)
            return true;
    return false;
}

static diag_verdict collinearity(const diagnostics *g)
{
    const diag_collinearity *c = &g->collinearity;
    diag_verdict v = start(DIAG_COLLINEARITY, DIAG_EFFECT_VIF, c->max_vif, 10.0);
    if (!c->computed || isnan(c->max_vif)) {
        not_assessed(&v, c->computed ? DIAG_REASON_TERM_ALIASED : c->reason);
        return v;
    }
    v.verdict = c->max_vif <= 5.0 ? DIAG_HOLDS
                                  : (c->max_vif <= 10.0 ? DIAG_DOUBTFUL : DIAG_VIOLATED);
    if (departs(&v) && has_compound_terms(g->design->model))
        add_remedy(&v, DIAG_REMEDY_CENTER_TERMS);
    if (departs(&v))
        add_remedy(&v, DIAG_REMEDY_COMBINE_TERMS);
    return v;
}

static diag_verdict influence(const diagnostics *g)
{
    const diag_influence *inf = &g->influence;
    double median = inf->threshold[3];
    diag_verdict v = start(DIAG_INFLUENCE, DIAG_EFFECT_COOKS, inf->max_cooks / median, 1.0);
    if (isnan(v.effect)) {
        not_assessed(&v,
                     isnan(median) ? DIAG_REASON_NO_RESIDUAL_DF : DIAG_REASON_EXACT_FIT);
        return v;
    }
    if (inf->count[3] > 0)
        v.verdict = DIAG_VIOLATED;
    else if (inf->count[1] > 0)
        v.verdict = DIAG_DOUBTFUL;
    else
        v.verdict = DIAG_HOLDS;
    if (departs(&v))
        add_remedy(&v, DIAG_REMEDY_INSPECT_ROWS);
    return v;
}

void diag_verdicts(diagnostics *g)
{
    g->verdicts[DIAG_NORMALITY] = normality(g);
    g->verdicts[DIAG_CONSTANT_VARIANCE] = constant_variance(g);
    g->verdicts[DIAG_LINEARITY] = linearity(g); /* before independence, which reads it */
    g->verdicts[DIAG_INDEPENDENCE] = independence(g);
    g->verdicts[DIAG_COLLINEARITY] = collinearity(g);
    g->verdicts[DIAG_INFLUENCE] = influence(g);
}

/* ---- identifiers ----------------------------------------------------------- */

const char *diag_reason_id(diag_reason r)
{
    static const char *const ids[] = {
        NULL,         "too_few_rows",  "exact_fit",        "no_residual_df",
        "no_order",   "no_regressors", "fitted_in_design", "not_estimable",
        "not_finite", "term_aliased"};
    return ids[r];
}

const char *diag_assumption_id(diag_assumption a)
{
    static const char *const ids[] = {"normality", "constant_variance", "independence",
                                      "linearity", "collinearity",      "influence"};
    return ids[a];
}

const char *diag_verdict_id(diag_verdict_kind v)
{
    static const char *const ids[] = {"no_departure_detected", "possible_departure",
                                      "violated", "not_assessed"};
    return ids[v];
}

const char *diag_remedy_id(diag_remedy r)
{
    static const char *const ids[] = {
        "none",          "hc3_standard_errors", "transform_response", "weighted_fit",
        "add_terms",     "order_rows",          "time_series_model",  "center_terms",
        "combine_terms", "inspect_rows"};
    return ids[r];
}

const char *diag_effect_id(diag_effect e)
{
    static const char *const ids[] = {
        NULL,       "shape",   "standard_error_change", "autocorrelation",
        "cohen_f2", "max_vif", "cooks_over_f_median"};
    return ids[e];
}

const char *diag_dw_method_id(diag_dw_method m)
{
    return m == DIAG_DW_EXACT ? "exact_imhof" : "beta_approximation";
}
