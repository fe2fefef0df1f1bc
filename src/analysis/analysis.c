/*
 * analysis.c — runs design, fit and diagnostics for each model in spec
 * order, then evaluates the spec's checks. All designs are built (and what
 * the diagnostics and checks need of the spec validated) before any fit,
 * so that every spec error is reported before any computing starts.
 */
#include "analysis.h"

#include "../util/stage.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static analysis_model *find_model(analysis *a, const char *id)
{
    for (size_t m = 0; m < a->n_models; m++)
        if (a->models[m].model->id && strcmp(a->models[m].model->id, id) == 0)
            return &a->models[m];
    return NULL;
}

/* ---- predictions and comparisons (src/fit) ---- */

/* Turns every predict row into a design row of its model (before any fit,
   so that a bad row is reported with the other spec errors). */
static bool build_points(analysis *a, const spec *s, error_list *errors)
{
    bool ok = true;
    for (size_t k = 0; k < s->n_predict; k++) {
        const spec_predict *set = &s->predict[k];
        analysis_model *am = find_model(a, set->model);
        if (!am || !am->design)
            continue; /* an unknown model was reported by the spec stage */
        am->predictions = xrealloc(am->predictions, (am->n_predictions + set->n_rows + 1) *
                                                        sizeof(analysis_prediction));
        for (size_t r = 0; r < set->n_rows; r++) {
            design_point *point = design_point_new(am->design, s, &set->rows[r], errors);
            ok = ok && point;
            if (point)
                am->predictions[am->n_predictions++] = (analysis_prediction){point, {0}};
        }
    }
    return ok;
}

/* After the fits: the predictions of every model, then the comparisons. */
static void predict_and_compare(analysis *a, const spec *s)
{
    for (size_t m = 0; m < a->n_models; m++) {
        analysis_model *am = &a->models[m];
        for (size_t k = 0; k < am->n_predictions; k++)
            fit_predict(am->fit, am->predictions[k].point, &am->predictions[k].result);
    }
    a->comparisons = xcalloc(s->n_compare ? s->n_compare : 1, sizeof(analysis_comparison));
    for (size_t k = 0; k < s->n_compare; k++) {
        const analysis_model *small = find_model(a, s->compare[k].small);
        const analysis_model *big = find_model(a, s->compare[k].big);
        if (!small || !big)
            continue;
        analysis_comparison *c = &a->comparisons[a->n_comparisons++];
        c->pair = &s->compare[k];
        c->small = small;
        c->big = big;
        fit_compare(small->design, small->fit, big->design, big->fit, &c->result);
        c->caveat = (fit_wald){NAN, NAN, NAN, NAN};
        if (big->caveat_kind != SPEC_ERRORS_CLASSICAL && c->result.nesting == FIT_NESTED)
            c->caveat =
                fit_compare_wald(small->design, big->design, big->fit, big->caveat_kind);
    }
}

/* ---- checks (src/diagnostics) ---- */

static const analysis_model *model_of_check(const analysis *a, const spec_check *c)
{
    const spec_model *m = spec_find_model(a->spec, c->model);
    return m ? &a->models[m - a->spec->models] : NULL;
}

static bool validate_checks(const analysis *a, error_list *errors)
{
    bool ok = true;
    for (size_t k = 0; k < a->spec->n_checks; k++) {
        const spec_check *c = &a->spec->checks[k];
        const analysis_model *am = model_of_check(a, c);
        if (am && am->design)
            ok = diagnostics_check_validate(a->spec, c, am->design, errors) && ok;
    }
    return ok;
}

static void evaluate_checks(analysis *a)
{
    a->n_checks = a->spec->n_checks;
    a->checks = xcalloc(a->n_checks ? a->n_checks : 1, sizeof(diag_check_result));
    for (size_t k = 0; k < a->n_checks; k++) {
        const spec_check *c = &a->spec->checks[k];
        const analysis_model *am = model_of_check(a, c);
        a->checks[k] = diagnostics_check(c, am->design, am->fit, am->diagnostics);
        if (!a->checks[k].passed)
            a->n_failed_checks++;
    }
}

analysis *analysis_prepare(const spec *s, const data_table *t, design **designs,
                           const data_table *const *tables, bool *complete,
                           error_list *errors)
{
    analysis *a = xcalloc(1, sizeof *a);
    a->spec = s;
    a->table = t;
    a->level = s->report.confidence_level;
    a->alpha = s->report.alpha;
    a->n_models = s->n_models;
    a->models = xcalloc(s->n_models ? s->n_models : 1, sizeof *a->models);
    bool ok = true;
    for (size_t m = 0; m < s->n_models; m++) {
        a->models[m].model = &s->models[m];
        stage_begin("design %s", s->models[m].id);
        a->models[m].design = designs ? designs[m] : design_new(s, &s->models[m], t, errors);
        ok = ok && a->models[m].design;
        /* ---- diagnostics: order_by and variance_columns ---- */
        const data_table *rows = tables && tables[m] ? tables[m] : t;
        if (a->models[m].design)
            ok = diagnostics_validate(s, a->models[m].design, rows, errors) && ok;
    }
    ok = validate_checks(a, errors) && ok;
    ok = build_points(a, s, errors) && ok;
    *complete = ok;
    return a;
}

/* Duan (1983, JASA 78): E[y | x] = b^(x'β) · mean_i b^(e_i) for a response
   modelled as log_b y, whatever the error distribution. */
static double smearing_factor(const spec *s, const analysis_model *am)
{
    const spec_derive *derive = spec_find_derive(s, am->design->response->name);
    if (!derive || (derive->transform != SPEC_DERIVE_LOG && derive->transform != SPEC_DERIVE_LOG10))
        return NAN;
    const gsl_vector *e = am->fit->residuals;
    long double sum = 0.0L;
    for (size_t i = 0; i < e->size; i++) {
        double r = gsl_vector_get(e, i);
        sum += derive->transform == SPEC_DERIVE_LOG ? expl(r) : powl(10.0L, r);
    }
    return e->size ? (double)(sum / (long double)e->size) : NAN;
}

/* Classical errors under a violated independence or constant-variance
   verdict: the tests again under the covariance that the violation calls
   for, so that the report can give both. */
static void find_caveat(analysis_model *am)
{
    const fit_result *f = am->fit;
    const diagnostics *g = am->diagnostics;
    am->caveat_kind = SPEC_ERRORS_CLASSICAL;
    am->caveat_overall = (fit_wald){NAN, NAN, NAN, NAN};
    if (f->errors != SPEC_ERRORS_CLASSICAL || !g || !(f->df_residual > 0))
        return;
    if (g->verdicts[DIAG_INDEPENDENCE].verdict == DIAG_VIOLATED && f->hac_defined) {
        am->caveat_kind = SPEC_ERRORS_HAC;
        am->caveat_assumption = DIAG_INDEPENDENCE;
    } else if (g->verdicts[DIAG_CONSTANT_VARIANCE].verdict == DIAG_VIOLATED && f->hc_defined) {
        am->caveat_kind = SPEC_ERRORS_HC3;
        am->caveat_assumption = DIAG_CONSTANT_VARIANCE;
    } else {
        return;
    }
    const design *d = am->design;
    if (d->n_terms > 0) {
        am->caveat_term_tests = xcalloc(d->n_terms, sizeof(fit_term_test));
        am->caveat_sequential_tests = xcalloc(d->n_terms, sizeof(fit_term_test));
        fit_wald_terms(d, f, am->caveat_kind, am->caveat_term_tests,
                       am->caveat_sequential_tests);
    }
    am->caveat_overall = fit_wald_overall(d, f, am->caveat_kind);
}

void analysis_fit(analysis *a)
{
    for (size_t m = 0; m < a->n_models; m++) {
        analysis_model *am = &a->models[m];
        stage_begin("fit %s", am->design->model->id);
        am->fit = fit_new(am->design, a->level);
        am->pushdown = pushdown_new(a->spec, am->design, am->fit);
        am->readings = fit_readings_new(am->design, am->fit);
        stage_begin("diagnostics %s", am->design->model->id);
        am->diagnostics = diagnostics_new(am->design, am->fit, a->table, a->alpha);
        stage_begin("checks, predictions, comparisons");
        find_caveat(am);
        am->smearing = smearing_factor(a->spec, am);
    }
    evaluate_checks(a);
    predict_and_compare(a, a->spec);
}

analysis *analysis_new(const spec *s, const data_table *t, error_list *errors)
{
    bool complete;
    analysis *a = analysis_prepare(s, t, NULL, NULL, &complete, errors);
    if (!complete) {
        analysis_free(a);
        return NULL;
    }
    analysis_fit(a);
    return a;
}

void analysis_free(analysis *a)
{
    if (!a)
        return;
    free(a->checks);
    for (size_t m = 0; m < a->n_models; m++) {
        diagnostics_free(a->models[m].diagnostics);
        fit_readings_free(a->models[m].readings);
        free(a->models[m].caveat_term_tests);
        free(a->models[m].caveat_sequential_tests);
        for (size_t k = 0; k < a->models[m].n_predictions; k++)
            design_point_free(a->models[m].predictions[k].point);
        free(a->models[m].predictions);
        fit_free(a->models[m].fit);
        pushdown_free(a->models[m].pushdown);
        design_free(a->models[m].design);
    }
    free(a->models);
    free(a->comparisons);
    free(a);
}
