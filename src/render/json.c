/*
 * json.c — results.json: every number the analysis computed, for other
 * programs. Keys are documented in docs/results.md and only ever added to.
 * Numbers are written with 17 significant digits so that they read back
 * to the same double; a value that is not finite (an exact fit's F) is
 * written as null.
 */
#include "../util/dates.h"
#include "../narrate/narrate.h"
#include "render.h"
#include "json_parts.h"

#include <jansson.h>
#include <string.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>

static json_t *number(double value)
{
    return isfinite(value) ? json_real(value) : json_null();
}

static void set(json_t *object, const char *key, json_t *value)
{
    json_object_set_new(object, key, value);
}

/* ---- model engine: coding, robust errors, term tests, predictions,
   comparisons (docs/results.md, "Model engine keys") -------------------- */

static const char *const part_codings[] = {"numeric", "treatment", "all_levels", "sum"};
static const char *const hc_keys[FIT_N_HC] = {"hc0", "hc1", "hc2", "hc3"};
static const char *const errors_names[] = {"classical", "hc0", "hc1", "hc2", "hc3", "hac"};

static void model_engine_part(json_t *entry, const design_part *part)
{
    set(entry, "coding", json_string(part_codings[part->kind]));
    if (part->kind == DESIGN_SUM)
        set(entry, "omitted_level", json_string(part->omitted));
    if (part->kind == DESIGN_TREATMENT)
        set(entry, "reference_level",
            json_string(part->column->levels[part->column->reference]));
}

static json_t *inference_object(const fit_inference *in)
{
    json_t *object = json_object();
    set(object, "std_error", number(in->std_error));
    set(object, "t", number(in->t));
    set(object, "p", number(in->p));
    set(object, "ci_low", number(in->ci_low));
    set(object, "ci_high", number(in->ci_high));
    return object;
}

static void model_engine_coefficient(json_t *entry, const analysis_model *am, size_t c)
{
    const fit_coef *fc = &am->fit->coefs[c];
    json_t *se = json_object(), *robust = json_object();
    for (int kind = 0; kind < FIT_N_HC; kind++) {
        set(se, hc_keys[kind], number(fc->robust[kind].std_error));
        set(robust, hc_keys[kind], inference_object(&fc->robust[kind]));
    }
    set(entry, "robust_se", se);
    set(entry, "robust", robust);
    set(entry, "newey_west", inference_object(&fc->hac));
    if (!fc->alias)
        return;
    json_t *alias = json_array();
    for (size_t j = 0; j < am->design->n_coefs; j++) {
        if (fc->alias[j] == 0.0)
            continue;
        json_t *term = json_object();
        set(term, "label", json_string(am->design->coefs[j].label));
        set(term, "coefficient", number(fc->alias[j]));
        json_array_append_new(alias, term);
    }
    set(entry, "aliased_with", alias);
}

static void model_engine_fit(json_t *fit, const fit_result *f)
{
    set(fit, "weighted", json_boolean(f->weighted));
    set(fit, "sum_log_weights", number(f->sum_log_weights));
    set(fit, "max_leverage", number(f->max_position));
    set(fit, "hc2_hc3_defined", json_boolean(f->hc_defined));
    set(fit, "solver",
        json_string(f->solver == FIT_SOLVER_STREAMING ? "streaming" : "dense"));
}

static json_t *term_tests(const analysis_model *am, const fit_term_test *tests)
{
    json_t *list = json_array();
    for (size_t k = 0; k < am->fit->n_terms; k++) {
        json_t *entry = json_object();
        set(entry, "label", json_string(am->design->terms[tests[k].term].label));
        set(entry, "df", number(tests[k].df));
        set(entry, "sum_of_squares", number(tests[k].sum_squares));
        set(entry, "f", number(tests[k].f));
        set(entry, "p", number(tests[k].p));
        json_array_append_new(list, entry);
    }
    return list;
}

static json_t *wald_object(double f, double df_num, double df_den, double p)
{
    json_t *object = json_object();
    set(object, "f", number(f));
    set(object, "df_num", number(df_num));
    set(object, "df_den", number(df_den));
    set(object, "p", number(p));
    return object;
}

static json_t *wald_tests(const analysis_model *am, const fit_term_test *tests)
{
    if (!tests)
        return json_null();
    json_t *list = json_array();
    for (size_t k = 0; k < am->fit->n_terms; k++) {
        json_t *entry = wald_object(tests[k].f, tests[k].df, NAN, tests[k].p);
        json_object_del(entry, "df_den");
        set(entry, "label", json_string(am->design->terms[tests[k].term].label));
        json_array_append_new(list, entry);
    }
    return list;
}

static json_t *prediction(const analysis_prediction *ap, const fit_result *f)
{
    const fit_prediction *r = &ap->result;
    const spec_predict_row *row = ap->point->row;
    json_t *entry = json_object(), *values = json_object();
    for (size_t i = 0; i < row->n_values; i++)
        set(values, row->columns[i], json_string(row->values[i]));
    set(entry, "values", values);
    set(entry, "estimable", json_boolean(r->estimable));
    set(entry, "fit", number(r->fit));
    set(entry, "se_fit", number(r->se_fit));
    set(entry, "se_prediction", number(r->se_prediction));
    set(entry, "ci_low", number(r->ci_low));
    set(entry, "ci_high", number(r->ci_high));
    set(entry, "pi_low", number(r->pi_low));
    set(entry, "pi_high", number(r->pi_high));
    set(entry, "extrapolation", json_boolean(r->extrapolation));
    set(entry, "leverage", number(r->leverage));
    set(entry, "max_leverage", number(f->max_position));
    set(entry, "beyond_leverage", json_boolean(r->beyond_leverage));
    json_t *outside = json_array();
    for (size_t k = 0; k < ap->point->n_outside; k++) {
        const design_outside *o = &ap->point->outside[k];
        json_t *item = json_object();
        set(item, "column", json_string(o->range->column->name));
        set(item, "value", number(o->value));
        set(item, "min", number(o->range->min));
        set(item, "max", number(o->range->max));
        json_array_append_new(outside, item);
    }
    set(entry, "outside_range", outside);
    return entry;
}

/* ---- readings at representative values (docs/results.md, "Readings") ---- */

static const char *const reading_kinds[] = {"slope", "difference", "interaction",
                                            "level_value", "omitted_level"};

static json_t *reading_setting(const fit_setting *at)
{
    json_t *item = json_object();
    set(item, "column", json_string(at->column->name));
    if (at->column->kind == DATA_CATEGORY) {
        set(item, "level", at->code >= 0 ? json_string(at->column->levels[at->code])
                                         : json_null());
        set(item, "averaged", json_boolean(at->code < 0));
        return item;
    }
    set(item, "value", number(at->value));
    set(item, "source", json_string(at->range->at_from_spec ? "at" : "median"));
    set(item, "inside_data",
        json_boolean(at->value >= at->range->min && at->value <= at->range->max));
    return item;
}

static json_t *readings(const analysis_model *am)
{
    json_t *list = json_array();
    const fit_readings *all = am->readings;
    for (size_t k = 0; all && k < all->n; k++) {
        const fit_reading *r = &all->items[k];
        json_t *entry = json_object();
        set(entry, "coefficient", json_string(am->design->coefs[r->coef].label));
        set(entry, "kind", json_string(reading_kinds[r->kind]));
        set(entry, "column", json_string(r->target->name));
        set(entry, "level", r->level >= 0 && r->target->kind == DATA_CATEGORY
                                ? json_string(r->target->levels[r->level])
                                : json_null());
        json_t *at = json_array();
        for (size_t j = 0; j < r->n_at; j++)
            json_array_append_new(at, reading_setting(&r->at[j]));
        set(entry, "at", at);
        set(entry, "settings", json_integer((json_int_t)r->of));
        set(entry, "estimate", number(r->estimate));
        json_t *in = inference_object(&r->inference);
        const char *keys[] = {"std_error", "t", "p", "ci_low", "ci_high"};
        for (size_t j = 0; j < 5; j++)
            set(entry, keys[j], json_incref(json_object_get(in, keys[j])));
        json_decref(in);
        json_array_append_new(list, entry);
    }
    return list;
}

static void model_engine_model(json_t *entry, const analysis_model *am)
{
    const design *d = am->design;
    set(entry, "weights", d->weight ? json_string(d->weight->name) : json_null());
    set(entry, "coding",
        json_string(am->model->coding == SPEC_CODING_SUM ? "sum" : "treatment"));
    set(entry, "standard_errors", json_string(errors_names[am->fit->errors]));
    json_t *missing = json_array();
    for (size_t k = 0; k < d->n_missing; k++) {
        json_t *item = json_object();
        set(item, "column", json_string(d->missing[k].column->name));
        set(item, "rows", json_integer((json_int_t)d->missing[k].rows));
        json_array_append_new(missing, item);
    }
    set(entry, "dropped_by_column", missing);
    json_t *empty = json_array();
    for (size_t k = 0; k < d->n_empty_levels; k++) {
        json_t *item = json_object();
        set(item, "column", json_string(d->empty_levels[k].column->name));
        set(item, "level", json_string(d->empty_levels[k].level));
        json_array_append_new(empty, item);
    }
    set(entry, "levels_without_rows", empty);
    set(entry, "term_tests", term_tests(am, am->fit->term_tests));
    set(entry, "sequential_tests", term_tests(am, am->fit->sequential_tests));
    const fit_result *f = am->fit;
    set(entry, "smearing_factor", number(am->smearing));
    set(entry, "newey_west_lags", f->hac_defined ? json_integer((json_int_t)f->hac_lags)
                                                 : json_null());
    json_t *wald = json_object();
    set(wald, "covariance", f->errors != SPEC_ERRORS_CLASSICAL
                                ? json_string(errors_names[f->errors])
                                : json_null());
    set(wald, "overall", wald_object(f->wald_f, f->wald_df_num, f->wald_df_den, f->wald_f_p));
    set(wald, "term_tests", wald_tests(am, f->wald_term_tests));
    set(wald, "sequential_tests", wald_tests(am, f->wald_sequential_tests));
    set(entry, "wald", wald);
    json_t *caveat = json_object();
    set(caveat, "covariance", am->caveat_kind != SPEC_ERRORS_CLASSICAL
                                  ? json_string(errors_names[am->caveat_kind])
                                  : json_null());
    set(caveat, "violated",
        am->caveat_kind != SPEC_ERRORS_CLASSICAL
            ? json_string(diag_assumption_id(am->caveat_assumption))
            : json_null());
    set(caveat, "overall", wald_object(am->caveat_overall.f, am->caveat_overall.df_num,
                                       am->caveat_overall.df_den, am->caveat_overall.p));
    set(caveat, "term_tests", wald_tests(am, am->caveat_term_tests));
    set(caveat, "sequential_tests", wald_tests(am, am->caveat_sequential_tests));
    set(entry, "caveat", caveat);
    json_t *predictions = json_array();
    for (size_t k = 0; k < am->n_predictions; k++)
        json_array_append_new(predictions, prediction(&am->predictions[k], am->fit));
    set(entry, "predictions", predictions);
}

static const char *nesting_reason(fit_nesting nesting)
{
    switch (nesting) {
    case FIT_NESTED: return NULL;
    case FIT_SAME_SPACE: return "same_columns";
    case FIT_NOT_NESTED: return "not_nested";
    case FIT_DIFFERENT_ROWS: return "different_rows";
    case FIT_DIFFERENT_RESPONSE: return "different_response";
    case FIT_DIFFERENT_WEIGHTS: return "different_weights";
    }
    return NULL;
}

static json_t *comparison(const analysis_comparison *c)
{
    const fit_comparison *r = &c->result;
    const fit_result *fs = c->small->fit, *fb = c->big->fit;
    json_t *entry = json_object();
    set(entry, "small", json_string(c->pair->small));
    set(entry, "big", json_string(c->pair->big));
    bool checked = r->nesting == FIT_NESTED || r->nesting == FIT_SAME_SPACE ||
                   r->nesting == FIT_NOT_NESTED;
    set(entry, "nested", checked ? json_boolean(r->nesting != FIT_NOT_NESTED) : json_null());
    const char *reason = nesting_reason(r->nesting);
    set(entry, "reason", reason ? json_string(reason) : json_null());
    set(entry, "df_num", number(r->df_num));
    set(entry, "df_den", number(r->df_den));
    set(entry, "f", number(r->f));
    set(entry, "p", number(r->p));
    set(entry, "wald", wald_object(r->wald.f, r->wald.df_num, r->wald.df_den, r->wald.p));
    set(entry, "caveat_wald",
        wald_object(c->caveat.f, c->caveat.df_num, c->caveat.df_den, c->caveat.p));
    set(entry, "outside_coefficient",
        r->outside_coef == SIZE_MAX
            ? json_null()
            : json_string(c->small->design->coefs[r->outside_coef].label));
    set(entry, "big_nested_in_small", json_boolean(r->reversed));
    set(entry, "rows_only_small", json_integer((json_int_t)r->rows_only_small));
    set(entry, "rows_only_big", json_integer((json_int_t)r->rows_only_big));
    set(entry, "n_small", json_integer((json_int_t)fs->n));
    set(entry, "n_big", json_integer((json_int_t)fb->n));
    set(entry, "rss_small", number(fs->rss));
    set(entry, "rss_big", number(fb->rss));
    set(entry, "aic_small", number(fs->aic));
    set(entry, "aic_big", number(fb->aic));
    set(entry, "bic_small", number(fs->bic));
    set(entry, "bic_big", number(fb->bic));
    return entry;
}

static json_t *model_engine_comparisons(const analysis *a)
{
    json_t *list = json_array();
    for (size_t k = 0; k < a->n_comparisons; k++)
        json_array_append_new(list, comparison(&a->comparisons[k]));
    return list;
}

/* ---- end of model engine keys ------------------------------------------ */

static json_t *coefficient_parts(const design_coef *coef)
{
    json_t *parts = json_array();
    for (size_t i = 0; i < coef->n_parts; i++) {
        const design_part *part = &coef->parts[i];
        json_t *entry = json_object();
        set(entry, "column", json_string(part->column->name));
        set(entry, "level", part->level ? json_string(part->level) : json_null());
        if (!part->level)
            set(entry, "power", json_integer(part->power));
        else
            model_engine_part(entry, part);
        json_array_append_new(parts, entry);
    }
    return parts;
}

static json_t *coefficients(const analysis_model *am)
{
    json_t *list = json_array();
    for (size_t c = 0; c < am->design->n_coefs; c++) {
        const fit_coef *fc = &am->fit->coefs[c];
        json_t *entry = json_object();
        set(entry, "label", json_string(am->design->coefs[c].label));
        set(entry, "parts", coefficient_parts(&am->design->coefs[c]));
        set(entry, "estimable", json_boolean(fc->estimable));
        set(entry, "estimate", number(fc->estimate));
        set(entry, "std_error", number(fc->std_error));
        set(entry, "t", number(fc->t));
        set(entry, "p", number(fc->p));
        set(entry, "ci_low", number(fc->ci_low));
        set(entry, "ci_high", number(fc->ci_high));
        model_engine_coefficient(entry, am, c);
        json_array_append_new(list, entry);
    }
    return list;
}

static json_t *fit_summary(const fit_result *f)
{
    json_t *fit = json_object();
    set(fit, "r_squared", number(f->r_squared));
    set(fit, "adj_r_squared", number(f->adj_r_squared));
    set(fit, "r_squared_centred", json_boolean(f->centred));
    set(fit, "sigma", number(f->sigma));
    set(fit, "df_model", number(f->df_model));
    set(fit, "df_residual", number(f->df_residual));
    set(fit, "f", number(f->f));
    set(fit, "f_p", number(f->f_p));
    set(fit, "rss", number(f->rss));
    set(fit, "tss", number(f->tss));
    set(fit, "rank", json_integer((json_int_t)f->rank));
    set(fit, "log_likelihood", number(f->log_likelihood));
    set(fit, "aic", number(f->aic));
    set(fit, "bic", number(f->bic));
    set(fit, "confidence_level", number(f->level));
    model_engine_fit(fit, f);
    return fit;
}

static json_t *pushdown_chi2(const diag_chi2_test *t)
{
    json_t *o = json_object();
    set(o, "statistic", number(t->statistic));
    set(o, "df", number(t->df));
    set(o, "p", number(t->p));
    return o;
}

/* Pass two's Breusch–Pagan, or null; "regressors" as in the diagnostics:
   the model's columns (weighted or not) or the variance_columns. */
static json_t *pushdown_breusch_pagan(const pushdown_result *r)
{
    const diag_breusch_pagan *bp = &r->breusch_pagan;
    if (!r->bp_computed || !bp->computed)
        return json_null();
    json_t *o = json_object();
    set(o, "regressors", json_string(bp->own_columns ? "variance_columns" : "model"));
    set(o, "studentized", pushdown_chi2(&bp->studentized));
    set(o, "original", pushdown_chi2(&bp->original));
    set(o, "aux_r_squared", number(bp->aux_r_squared));
    set(o, "f", number(bp->f));
    set(o, "f_p", number(bp->f_p));
    return o;
}

/* Pass two's RESET, or null. */
static json_t *pushdown_reset(const pushdown_result *r)
{
    const diag_reset *t = &r->reset;
    if (!r->reset_computed || !t->computed)
        return json_null();
    json_t *o = json_object();
    set(o, "f", number(t->f));
    set(o, "df_num", number(t->df_num));
    set(o, "df_den", number(t->df_den));
    set(o, "p", number(t->p));
    set(o, "cohen_f2", number(t->cohen_f2));
    return o;
}

/* Pass two's influence maxima and rows per flag rule, or null. */
static json_t *pushdown_influence(const pushdown_result *r)
{
    if (!r->influence_computed)
        return json_null();
    json_t *o = json_object();
    set(o, "max_abs_studentized_residual", number(r->max_abs_studentized));
    set(o, "max_cooks_distance", number(r->max_cooks));
    json_t *rules = json_array();
    for (size_t k = 0; k < DIAG_N_RULES; k++) {
        json_t *rule = json_object();
        set(rule, "id", json_string(diag_rules[k].id));
        set(rule, "threshold", number(r->threshold[k]));
        set(rule, "rows", json_integer((json_int_t)r->flag_count[k]));
        json_array_append_new(rules, rule);
    }
    set(o, "rules", rules);
    return o;
}

/* The top-rows pass: each row's key as the server wrote it and its
   Cook's distance; null when the pass did not run. */
static json_t *pushdown_top(const pushdown_result *r)
{
    bool ran = false;
    for (size_t i = 0; i < r->n_passes; i++)
        ran = ran || strcmp(r->passes[i].name, "top rows") == 0;
    if (!ran)
        return json_null();
    json_t *rows = json_array();
    for (size_t i = 0; i < r->n_top; i++) {
        json_t *row = json_object();
        set(row, "key", json_string(r->top_key[i]));
        set(row, "cooks_distance", number(r->top_cooks[i]));
        json_array_append_new(rows, row);
    }
    return rows;
}

/* data.pushdown: whether the exact sums from the server were used, why
   not or what was not pushed down, and every pass's SQL as sent. */
static json_t *pushdown(const pushdown_result *r, const design *d)
{
    json_t *entry = json_object();
    set(entry, "used", json_boolean(r->used));
    set(entry, "reason", json_string(pushdown_reason_name(r->reason)));
    buf why;
    buf_init(&why);
    narrate_pushdown_reason(&why, r);
    set(entry, "reason_text", json_string(why.data));
    buf_free(&why);
    json_t *passes = json_array();
    for (size_t i = 0; i < r->n_passes; i++) {
        json_t *pass = json_object();
        set(pass, "name", json_string(r->passes[i].name));
        set(pass, "rows_scanned", json_integer((json_int_t)r->passes[i].rows_scanned));
        set(pass, "sql", json_string(r->passes[i].sql));
        json_array_append_new(passes, pass);
    }
    set(entry, "passes", passes);
    set(entry, "rss_pass_two", number(r->rss_pass_two));
    json_t *sums = json_array();
    for (size_t k = 0; r->moments_computed && k < PUSHDOWN_N_POWERS; k++)
        json_array_append_new(sums, number(r->residual_power_sums[k]));
    set(entry, "residual_power_sums", sums);
    json_t *moments = json_null();
    if (r->moments_computed) {
        moments = json_object();
        set(moments, "skewness", number(r->moments.skewness));
        set(moments, "excess_kurtosis", number(r->moments.excess_kurtosis));
    }
    set(entry, "moments", moments);
    set(entry, "durbin_watson", number(r->durbin_watson));
    set(entry, "max_leverage", number(r->max_leverage));
    set(entry, "breusch_pagan", pushdown_breusch_pagan(r));
    set(entry, "reset", pushdown_reset(r));
    set(entry, "influence", pushdown_influence(r));
    set(entry, "most_influential", pushdown_top(r));
    json_t *ranges = json_array();
    for (size_t k = 0; k < r->n_ranges; k++)
        json_array_append_new(ranges, json_pack("{s:s,s:o,s:o}", "column",
                                                d->ranges[k].column->name, "min",
                                                number(r->range_min[k]), "max",
                                                number(r->range_max[k])));
    set(entry, "ranges", ranges);
    return entry;
}

/* Each numeric predictor's range over the rows used and the value its
   readings are given at when the spec names none (the median). */
static json_t *predictor_ranges(const design *d)
{
    json_t *list = json_array();
    for (size_t k = 0; k < d->n_ranges; k++)
        json_array_append_new(list, json_pack("{s:s,s:o,s:o,s:o}", "column",
                                              d->ranges[k].column->name, "min",
                                              number(d->ranges[k].min), "max",
                                              number(d->ranges[k].max), "median",
                                              number(d->ranges[k].median)));
    return list;
}

static json_t *model(const analysis_model *am)
{
    json_t *entry = json_object();
    set(entry, "id", json_string(am->model->id));
    set(entry, "response", json_string(am->model->response));
    set(entry, "intercept", json_boolean(am->model->intercept));
    set(entry, "n_used", json_integer((json_int_t)am->design->n_used));
    set(entry, "n_dropped", json_integer((json_int_t)am->design->n_dropped));
    json_t *lines = json_array();
    for (size_t i = 0; i < am->design->n_dropped; i++)
        json_array_append_new(lines, json_integer(am->design->dropped_lines[i]));
    set(entry, "dropped_lines", lines);
    set(entry, "ranges", predictor_ranges(am->design));
    set(entry, "coefficients", coefficients(am));
    set(entry, "readings", readings(am));
    model_engine_model(entry, am);
    set(entry, "fit", fit_summary(am->fit));
    if (am->pushdown)
        set(entry, "pushdown", pushdown(am->pushdown, am->design));
    set(entry, "diagnostics", render_json_diagnostics(am)); /* json_diagnostics.c */
    return entry;
}

static json_t *data_summary(const analysis *a)
{
    const data_table *t = a->table;
    json_t *data = json_object();
    set(data, "path", json_string(a->spec->data.path));
    set(data, "sha256", json_string(t->sha256));
    set(data, "rows_read", json_integer((json_int_t)t->rows_read));
    set(data, "rows_removed", json_integer((json_int_t)t->n_removed));
    json_t *removed = json_array();
    for (size_t i = 0; i < t->n_removed; i++)
        json_array_append_new(removed, json_integer(t->removed_lines[i]));
    set(data, "removed_lines", removed);
    set(data, "rows_kept", json_integer((json_int_t)t->n_rows));
    json_t *columns = json_array();
    for (size_t j = 0; j < t->n_columns; j++) {
        const data_column *column = &t->columns[j];
        json_t *entry = json_object();
        set(entry, "name", json_string(column->name));
        set(entry, "kind", json_string(column->is_date                 ? "date"
                                       : column->kind == DATA_NUMERIC ? "numeric"
                                                                      : "category"));
        if (column->is_date) { /* its values count units from the origin */
            char origin[32];
            date_format(column->date_origin, origin, sizeof origin);
            set(entry, "origin", json_string(origin));
            set(entry, "unit", json_string(column->date_unit));
        }
        set(entry, "missing", json_integer((json_int_t)column->n_missing));
        if (column->derive) {
            json_t *derived = json_object();
            set(derived, "from", json_string(column->derive->from));
            set(derived, "transform", json_string(spec_transform_name(column->derive->transform)));
            set(entry, "derived", derived);
        }
        if (column->kind == DATA_CATEGORY) {
            json_t *levels = json_array();
            for (size_t k = 0; k < column->n_levels; k++) {
                json_t *level = json_object();
                set(level, "level", json_string(column->levels[k]));
                set(level, "count", json_integer((json_int_t)column->level_counts[k]));
                json_array_append_new(levels, level);
            }
            set(entry, "levels", levels);
            set(entry, "reference", json_string(column->levels[column->reference]));
        }
        json_array_append_new(columns, entry);
    }
    set(data, "columns", columns);
    return data;
}

static json_t *people_json(const spec_person *people, size_t count)
{
    json_t *list = json_array();
    for (size_t i = 0; i < count; i++)
        json_array_append_new(list, json_pack("{s:s,s:o}", "name", people[i].name, "role",
                                              people[i].role ? json_string(people[i].role)
                                                             : json_null()));
    return list;
}

/* The spec's meta, in its order, and the document-control facts. */
static void add_document(json_t *root, const spec *s)
{
    json_t *meta = json_object();
    for (size_t i = 0; i < s->n_meta; i++)
        set(meta, s->meta[i].key, json_string(s->meta[i].value));
    set(root, "meta", meta);
    const spec_document *d = &s->document;
    static const char *const sources[] = {NULL, "meta.date", "--date", "SOURCE_DATE_EPOCH"};
    json_t *history = json_array();
    for (size_t i = 0; i < d->n_history; i++)
        json_array_append_new(
            history, json_pack("{s:s,s:o,s:s}", "revision", d->history[i].revision, "date",
                               d->history[i].date ? json_string(d->history[i].date)
                                                  : json_null(),
                               "change", d->history[i].change));
    json_t *document = json_object();
    set(document, "date", d->date ? json_string(d->date) : json_null());
    set(document, "date_source",
        d->date && sources[d->date_source] ? json_string(sources[d->date_source]) : json_null());
    set(document, "revision", d->revision ? json_string(d->revision) : json_null());
    set(document, "history", history);
    set(document, "prepared_by", people_json(d->prepared, d->n_prepared));
    set(document, "reviewed_by", people_json(d->reviewed, d->n_reviewed));
    set(document, "approved_by", people_json(d->approved, d->n_approved));
    set(root, "document", document);
}

void render_results_json(const analysis *a, buf *out)
{
    json_t *root = json_object();
    set(root, "format", json_string("fitproof.results/2"));
    set(root, "title", a->spec->title ? json_string(a->spec->title) : json_null());
    add_document(root, a->spec);
    set(root, "data", data_summary(a));
    json_t *models = json_array();
    for (size_t m = 0; m < a->n_models; m++)
        json_array_append_new(models, model(&a->models[m]));
    set(root, "comparisons", model_engine_comparisons(a));
    set(root, "models", models);
    set(root, "checks", render_json_checks(a)); /* json_diagnostics.c */
    char *text = json_dumps(root, JSON_INDENT(2) | JSON_REAL_PRECISION(17));
    buf_puts(out, text);
    buf_putc(out, '\n');
    free(text);
    json_decref(root);
}
