/*
 * analysis.c — runs design, fit and diagnostics for each model in spec
 * order, then evaluates the spec's checks. All designs are built (and what
 * the diagnostics and checks need of the spec validated) before any fit,
 * so that every spec error is reported before any computing starts.
 */
#include "analysis.h"

#include <stdlib.h>

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
        if (am)
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

analysis *analysis_new(const spec *s, const data_table *t, error_list *errors)
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
        a->models[m].design = design_new(s, &s->models[m], t, errors);
        ok = ok && a->models[m].design;
        /* ---- diagnostics: order_by and variance_columns ---- */
        if (a->models[m].design)
            ok = diagnostics_validate(s, a->models[m].design, t, errors) && ok;
    }
    ok = ok && validate_checks(a, errors);
    if (!ok) {
        analysis_free(a);
        return NULL;
    }
    for (size_t m = 0; m < a->n_models; m++) {
        analysis_model *am = &a->models[m];
        am->fit = fit_new(am->design, a->level);
        am->diagnostics = diagnostics_new(am->design, am->fit, t, a->alpha);
    }
    evaluate_checks(a);
    return a;
}

void analysis_free(analysis *a)
{
    if (!a)
        return;
    free(a->checks);
    for (size_t m = 0; m < a->n_models; m++) {
        diagnostics_free(a->models[m].diagnostics);
        fit_free(a->models[m].fit);
        design_free(a->models[m].design);
    }
    free(a->models);
    free(a);
}
