/*
 * analysis.c — runs design and fit for each model in spec order. All
 * designs are built before any fit, so that every spec error is reported
 * before any computing starts.
 */
#include "analysis.h"

#include <stdlib.h>
#include <string.h>

static analysis_model *find_model(analysis *a, const char *id)
{
    for (size_t m = 0; m < a->n_models; m++)
        if (strcmp(a->models[m].model->id, id) == 0)
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
    }
    ok = build_points(a, s, errors) && ok;
    if (!ok) {
        analysis_free(a);
        return NULL;
    }
    for (size_t m = 0; m < a->n_models; m++)
        a->models[m].fit = fit_new(a->models[m].design, a->level);
    predict_and_compare(a, s);
    return a;
}

void analysis_free(analysis *a)
{
    if (!a)
        return;
    for (size_t m = 0; m < a->n_models; m++) {
        for (size_t k = 0; k < a->models[m].n_predictions; k++)
            design_point_free(a->models[m].predictions[k].point);
        free(a->models[m].predictions);
        fit_free(a->models[m].fit);
        design_free(a->models[m].design);
    }
    free(a->models);
    free(a->comparisons);
    free(a);
}
