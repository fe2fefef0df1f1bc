/*
 * json_diagnostics.c — the "diagnostics" object of each model and the
 * top-level "checks" array of results.json (keys in docs/results.md).
 * Copies numbers and identifiers out of the diagnostics; computes nothing.
 * Every test object says whether it was computed and, if not, why.
 */
#include <math.h>

#include "json_parts.h"

static json_t *real(double value)
{
    return isfinite(value) ? json_real(value) : json_null();
}

static json_t *text_or_null(const char *text)
{
    return text ? json_string(text) : json_null();
}

static void put(json_t *object, const char *key, json_t *value)
{
    json_object_set_new(object, key, value);
}

static json_t *status(bool computed, diag_reason reason)
{
    json_t *object = json_object();
    put(object, "computed", json_boolean(computed));
    put(object, "reason", text_or_null(diag_reason_id(reason)));
    return object;
}

static json_t *shapiro_wilk(const diag_shapiro *sw)
{
    json_t *o = status(sw->computed, sw->reason);
    put(o, "w", real(sw->w));
    put(o, "p", real(sw->p));
    put(o, "n", json_integer((json_int_t)sw->n));
    put(o, "subsampled", json_boolean(sw->subsampled));
    put(o, "seed", sw->subsampled ? json_integer((json_int_t)sw->seed) : json_null());
    put(o, "n_residuals", json_integer((json_int_t)sw->n_total));
    return o;
}

static json_t *moments(const diag_moments *m)
{
    json_t *o = status(m->computed, m->reason);
    put(o, "n", json_integer((json_int_t)m->n));
    put(o, "skewness", real(m->skewness));
    put(o, "excess_kurtosis", real(m->excess_kurtosis));
    put(o, "skewness_z", real(m->z_skewness));
    put(o, "skewness_p", real(m->p_skewness));
    put(o, "kurtosis_z", real(m->z_kurtosis));
    put(o, "kurtosis_p", real(m->p_kurtosis));
    put(o, "omnibus_k2", real(m->k2));
    put(o, "omnibus_p", real(m->p_k2));
    return o;
}

static json_t *chi2_test(const diag_chi2_test *t)
{
    json_t *o = json_object();
    put(o, "statistic", real(t->statistic));
    put(o, "df", real(t->df));
    put(o, "p", real(t->p));
    return o;
}

static json_t *breusch_pagan(const diag_breusch_pagan *bp, const spec_model *m)
{
    json_t *o = status(bp->computed, bp->reason);
    put(o, "studentized", chi2_test(&bp->studentized));
    put(o, "original", chi2_test(&bp->original));
    json_t *columns = json_array();
    for (size_t k = 0; k < m->n_variance_columns; k++)
        json_array_append_new(columns, json_string(m->variance_columns[k]));
    put(o, "regressors", json_string(bp->own_columns ? "variance_columns" : "model"));
    put(o, "variance_columns", columns);
    put(o, "aux_r_squared", real(bp->aux_r_squared));
    put(o, "f", real(bp->f));
    put(o, "f_df_num", real(bp->f_df_num));
    put(o, "f_df_den", real(bp->f_df_den));
    put(o, "f_p", real(bp->f_p));
    return o;
}

static json_t *durbin_watson(const diag_durbin_watson *dw, const char *order_by)
{
    /* Without a row order d describes nothing but the file's layout: no
       number is written, only the reason. */
    bool ordered = dw->computed && dw->ordered;
    json_t *o = ordered ? status(true, DIAG_REASON_NONE)
                        : status(false, dw->computed ? DIAG_REASON_NO_ORDER : dw->reason);
    put(o, "d", ordered ? real(dw->d) : json_null());
    put(o, "p_positive", ordered ? real(dw->p_positive) : json_null());
    put(o, "p_negative", ordered ? real(dw->p_negative) : json_null());
    put(o, "p_two_sided", ordered ? real(dw->p_two_sided) : json_null());
    put(o, "method", ordered ? json_string(diag_dw_method_id(dw->method)) : json_null());
    put(o, "order_by", text_or_null(order_by));
    put(o, "mean_d", ordered ? real(dw->mean_d) : json_null());
    put(o, "variance_d", ordered ? real(dw->variance_d) : json_null());
    put(o, "autocorrelation", ordered ? real(dw->autocorrelation) : json_null());
    return o;
}

static json_t *reset(const diag_reset *r)
{
    json_t *o = status(r->computed, r->reason);
    put(o, "f", real(r->f));
    put(o, "df_num", real(r->df_num));
    put(o, "df_den", real(r->df_den));
    put(o, "p", real(r->p));
    json_t *powers = json_array();
    json_array_append_new(powers, json_integer(2));
    json_array_append_new(powers, json_integer(3));
    put(o, "powers", powers);
    put(o, "cohen_f2", real(r->cohen_f2));
    return o;
}

static json_t *vif(const diag_collinearity *c)
{
    json_t *list = json_array();
    for (size_t t = 0; t < c->n_terms; t++) {
        const diag_vif *v = &c->terms[t];
        json_t *o = json_object();
        put(o, "label", json_string(v->label));
        put(o, "vif", real(v->vif));
        put(o, "gvif", real(v->gvif));
        put(o, "gvif_adjusted", real(v->gvif_adjusted));
        put(o, "df", json_integer((json_int_t)v->df));
        json_array_append_new(list, o);
    }
    return list;
}

static json_t *rule_ids(unsigned flags)
{
    json_t *ids = json_array();
    for (size_t k = 0; k < DIAG_N_RULES; k++)
        if (flags & (1u << k))
            json_array_append_new(ids, json_string(diag_rules[k].id));
    return ids;
}

static json_t *influence(const diag_influence *inf)
{
    json_t *o = json_object();
    put(o, "max_leverage", real(inf->max_leverage));
    put(o, "max_leverage_line", json_integer(inf->max_leverage_line));
    put(o, "chance_share", real(inf->chance_share));
    put(o, "max_cooks_distance", real(inf->max_cooks));
    put(o, "max_cooks_line",
        isnan(inf->max_cooks) ? json_null() : json_integer(inf->max_cooks_line));
    json_t *rules = json_array();
    for (size_t k = 0; k < DIAG_N_RULES; k++) {
        json_t *rule = json_object();
        put(rule, "id", json_string(diag_rules[k].id));
        put(rule, "threshold", real(inf->threshold[k]));
        put(rule, "source", text_or_null(diag_rules[k].source));
        put(rule, "common_practice", json_boolean(diag_rules[k].source == NULL));
        put(rule, "rows", json_integer((json_int_t)inf->count[k]));
        put(rule, "expected_share", real(inf->expected_share[k]));
        json_array_append_new(rules, rule);
    }
    put(o, "rules", rules);
    put(o, "rows_flagged", json_integer((json_int_t)inf->n_flagged));
    json_t *top = json_array();
    for (size_t k = 0; k < inf->n_top; k++) {
        size_t i = inf->top[k];
        json_t *row = json_object();
        diag_row_measures m = diag_influence_row(inf, i);
        put(row, "line", json_integer(inf->lines[i]));
        put(row, "leverage", real(inf->leverage[i]));
        put(row, "studentized_residual", real(m.studentized));
        put(row, "cooks_distance", real(m.cooks));
        put(row, "dffits", real(m.dffits));
        put(row, "reasons", rule_ids(inf->flags[i]));
        json_array_append_new(top, row);
    }
    put(o, "most_influential", top);
    return o;
}

static json_t *verdicts(const diagnostics *g)
{
    json_t *list = json_array();
    for (size_t a = 0; a < DIAG_N_ASSUMPTIONS; a++) {
        const diag_verdict *v = &g->verdicts[a];
        json_t *o = json_object();
        put(o, "assumption", json_string(diag_assumption_id(v->assumption)));
        put(o, "verdict", json_string(diag_verdict_id(v->verdict)));
        put(o, "remedy",
            v->n_remedies ? json_string(diag_remedy_id(v->remedies[0])) : json_null());
        json_t *remedies = json_array();
        for (size_t k = 0; k < v->n_remedies; k++)
            json_array_append_new(remedies, json_string(diag_remedy_id(v->remedies[k])));
        put(o, "remedies", remedies);
        put(o, "remedy_in_use", json_boolean(v->remedy_in_use));
        put(o, "reason", text_or_null(diag_reason_id(v->reason)));
        put(o, "p", real(v->p));
        put(o, "effect_measure", text_or_null(diag_effect_id(v->effect_kind)));
        put(o, "effect", real(v->effect));
        put(o, "effect_threshold", real(v->effect_threshold));
        json_array_append_new(list, o);
    }
    return list;
}

json_t *render_json_diagnostics(const analysis_model *am)
{
    const diagnostics *g = am->diagnostics;
    json_t *o = json_object();
    put(o, "weighted", json_boolean(g->weighted));
    put(o, "alpha", real(g->alpha));
    put(o, "shapiro_wilk", shapiro_wilk(&g->shapiro));
    put(o, "moments", moments(&g->moments));
    put(o, "breusch_pagan", breusch_pagan(&g->breusch_pagan, am->model));
    put(o, "durbin_watson", durbin_watson(&g->durbin_watson, g->order_by));
    put(o, "reset", reset(&g->reset));
    put(o, "condition_number", real(g->collinearity.condition_number));
    put(o, "vif", vif(&g->collinearity));
    put(o, "influence", influence(&g->influence));
    put(o, "verdicts", verdicts(g));
    return o;
}

/* ---- checks ------------------------------------------------------------ */

static const char *require_id(const spec_check *c)
{
    static const char *const ids[] = {"normal_residuals",
                                      "constant_variance",
                                      "independent_errors",
                                      "linearity",
                                      "max_vif",
                                      "max_cooks_distance",
                                      NULL,
                                      "metric"};
    if (c->kind == SPEC_CHECK_SIGN)
        return c->sign > 0 ? "positive" : "negative";
    return ids[c->kind];
}

static json_t *check_detail(const diag_check_result *r)
{
    const spec_check *c = r->check;
    json_t *o = json_object();
    put(o, "value", real(r->value));
    put(o, "bound", real(r->bound));
    switch (c->kind) {
    case SPEC_CHECK_RESIDUALS_NORMAL:
    case SPEC_CHECK_VARIANCE_CONSTANT:
    case SPEC_CHECK_ERRORS_INDEPENDENT:
    case SPEC_CHECK_LINEAR:
        put(o, "verdict", json_string(diag_verdict_id(r->verdict)));
        break;
    case SPEC_CHECK_VIF_BELOW: put(o, "term", text_or_null(r->label)); break;
    case SPEC_CHECK_COOKS_BELOW:
        put(o, "line", r->line ? json_integer(r->line) : json_null());
        break;
    case SPEC_CHECK_SIGN:
        put(o, "coefficient", json_string(c->coefficient));
        put(o, "ci_low", real(r->ci_low));
        put(o, "ci_high", real(r->ci_high));
        break;
    case SPEC_CHECK_METRIC:
        put(o, "metric", text_or_null(c->metric));
        put(o, "at_least", c->has_at_least ? real(c->at_least) : json_null());
        put(o, "at_most", c->has_at_most ? real(c->at_most) : json_null());
        break;
    }
    put(o, "reason", text_or_null(diag_reason_id(r->reason)));
    return o;
}

json_t *render_json_checks(const analysis *a)
{
    json_t *list = json_array();
    for (size_t k = 0; k < a->n_checks; k++) {
        const diag_check_result *r = &a->checks[k];
        json_t *o = json_object();
        put(o, "name", text_or_null(r->check->name));
        put(o, "model", text_or_null(r->check->model));
        put(o, "require", json_string(require_id(r->check)));
        put(o, "passed", json_boolean(r->passed));
        put(o, "detail", check_detail(r));
        json_array_append_new(list, o);
    }
    return list;
}
