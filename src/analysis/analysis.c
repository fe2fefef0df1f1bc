/*
 * analysis.c — runs design and fit for each model in spec order. All
 * designs are built before any fit, so that every spec error is reported
 * before any computing starts.
 */
#include "analysis.h"

#include <stdlib.h>

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
    }
    if (!ok) {
        analysis_free(a);
        return NULL;
    }
    for (size_t m = 0; m < a->n_models; m++)
        a->models[m].fit = fit_new(a->models[m].design, a->level);
    return a;
}

void analysis_free(analysis *a)
{
    if (!a)
        return;
    for (size_t m = 0; m < a->n_models; m++) {
        fit_free(a->models[m].fit);
        design_free(a->models[m].design);
    }
    free(a->models);
    free(a);
}
