/*
 * front.c — everything a build refuses before it fits, checked in one
 * round: the spec (even one with errors: the parts without errors are
 * checked on), the exporters and page template the report asks for, the
 * data, each model's design, the checks, prediction rows and the values
 * the narrative cites. lint runs exactly this and stops; build runs it
 * before computing, so the two refuse the same specs with the same words.
 *
 * Each design is built on a few rows only (up to FRONT_ROWS rows complete
 * in the model's columns, plus every complete row a whole-file check
 * needs: a weight that is not positive, the first row of each level of a
 * category), so that checking a model of a large file costs neither the
 * time nor the memory of its full design matrix: the checks a design
 * makes depend on the columns and those rows, not on the number of rows.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../analysis/analysis.h"
#include "../narrate/narrate.h"
#include "cli.h"

#define FRONT_ROWS 1000

static bool cell_missing(const data_column *c, size_t row)
{
    return c->kind == DATA_NUMERIC ? isnan(c->numbers[row]) : c->codes[row] < 0;
}

/* The columns model m names that the table has (the design reports the
   others). Caller frees. */
static const data_column **model_columns(const data_table *t, const spec_model *m,
                                         size_t *n)
{
    size_t capacity = 2;
    for (size_t i = 0; i < m->n_terms; i++)
        capacity += m->terms[i].n_columns;
    const data_column **columns = xmalloc(capacity * sizeof *columns);
    *n = 0;
    const data_column *c = data_find(t, m->response);
    if (c)
        columns[(*n)++] = c;
    c = m->weights ? data_find(t, m->weights) : NULL;
    if (c)
        columns[(*n)++] = c;
    for (size_t i = 0; i < m->n_terms; i++)
        for (size_t k = 0; k < m->terms[i].n_columns; k++)
            if ((c = data_find(t, m->terms[i].columns[k])))
                columns[(*n)++] = c;
    return columns;
}

/* A table sharing t's columns but holding only the given rows (copies). */
static data_table *view_new(const data_table *t, const size_t *rows, size_t n)
{
    data_table *v = xcalloc(1, sizeof *v);
    *v = *t;
    v->n_rows = n;
    v->columns = xmalloc(t->n_columns * sizeof *v->columns);
    v->lines = xmalloc((n ? n : 1) * sizeof(uint32_t));
    for (size_t i = 0; i < n; i++)
        v->lines[i] = t->lines[rows[i]];
    for (size_t j = 0; j < t->n_columns; j++) {
        const data_column *c = &t->columns[j];
        data_column *copy = &v->columns[j];
        *copy = *c;
        copy->numbers = c->numbers ? xmalloc((n ? n : 1) * sizeof(double)) : NULL;
        copy->codes = c->codes ? xmalloc((n ? n : 1) * sizeof(int32_t)) : NULL;
        for (size_t i = 0; i < n; i++) {
            if (c->numbers)
                copy->numbers[i] = c->numbers[rows[i]];
            if (c->codes)
                copy->codes[i] = c->codes[rows[i]];
        }
    }
    return v;
}

static void view_free(data_table *v)
{
    if (!v)
        return;
    for (size_t j = 0; j < v->n_columns; j++) {
        free(v->columns[j].numbers);
        free(v->columns[j].codes);
    }
    free(v->columns);
    free(v->lines);
    free(v);
}

/* The columns the diagnostics need a value in on every row the model uses
   (order_by, variance_columns) that the table has; *n of them. Caller
   frees. */
static const data_column **diagnostic_columns(const data_table *t, const spec_model *m,
                                              size_t *n)
{
    const data_column **columns = xmalloc((m->n_variance_columns + 1) * sizeof *columns);
    *n = 0;
    const data_column *c = m->order_by ? data_find(t, m->order_by) : NULL;
    if (c)
        columns[(*n)++] = c;
    for (size_t k = 0; k < m->n_variance_columns; k++)
        if ((c = data_find(t, m->variance_columns[k])))
            columns[(*n)++] = c;
    return columns;
}

/* The rows model m's design is checked on: the first FRONT_ROWS complete
   rows, every complete row whose weight is not positive, the first
   complete row of each level of each category the model uses (sum coding
   depends on which levels have rows), and the first complete row missing
   a value the diagnostics need. Caller frees. */
static size_t *view_rows(const data_table *t, const spec_model *m, size_t *n)
{
    size_t n_columns, n_needed;
    const data_column **columns = model_columns(t, m, &n_columns);
    const data_column **needed = diagnostic_columns(t, m, &n_needed);
    bool *needed_seen = xcalloc(n_needed + 1, sizeof(bool));
    const data_column *weight = m->weights ? data_find(t, m->weights) : NULL;
    bool **seen = xcalloc(n_columns ? n_columns : 1, sizeof *seen);
    for (size_t k = 0; k < n_columns; k++)
        if (columns[k]->kind == DATA_CATEGORY)
            seen[k] = xcalloc(columns[k]->n_levels + 1, sizeof(bool));
    size_t capacity = 0, count = 0;
    size_t *rows = NULL;
    for (size_t row = 0; row < t->n_rows; row++) {
        bool complete = true;
        for (size_t k = 0; k < n_columns && complete; k++)
            complete = !cell_missing(columns[k], row);
        if (!complete)
            continue;
        bool take = count < FRONT_ROWS;
        if (weight && weight->kind == DATA_NUMERIC &&
            !(isfinite(weight->numbers[row]) && weight->numbers[row] > 0))
            take = true;
        for (size_t k = 0; k < n_columns; k++)
            if (seen[k] && !seen[k][columns[k]->codes[row]]) {
                seen[k][columns[k]->codes[row]] = true;
                take = true;
            }
        for (size_t k = 0; k < n_needed; k++)
            if (!needed_seen[k] && cell_missing(needed[k], row)) {
                needed_seen[k] = true;
                take = true;
            }
        if (take) {
            xgrow((void **)&rows, &capacity, count + 1, sizeof *rows);
            rows[count++] = row;
        }
    }
    for (size_t k = 0; k < n_columns; k++)
        free(seen[k]);
    free(seen);
    free(columns);
    free(needed);
    free(needed_seen);
    *n = count;
    return rows;
}

/* Builds model m's design on its view rows (or on the whole table when no
   row is complete, so that the design says so). The view the design reads
   is left in *view, for the caller to free. */
static design *front_design(const spec *s, const spec_model *m, const data_table *t,
                            data_table **view, error_list *errors)
{
    size_t n;
    size_t *rows = view_rows(t, m, &n);
    *view = n ? view_new(t, rows, n) : NULL;
    free(rows);
    return design_new(s, m, *view ? *view : t, errors);
}

/* Every sound model's design, then what a build checks before fitting: the
   diagnostics' columns, the checks, the prediction rows and the values the
   narrative cites (when the parts of the spec they read are sound; a
   model that is broken or whose design failed is left out of them). */
static bool front_models(const spec *s, const data_table *t, error_list *errors)
{
    size_t n = s->n_models;
    design **designs = xcalloc(n ? n : 1, sizeof *designs);
    data_table **views = xcalloc(n ? n : 1, sizeof *views);
    bool ok = true;
    for (size_t m = 0; m < n; m++) {
        if (s->models[m].broken)
            continue;
        designs[m] = front_design(s, &s->models[m], t, &views[m], errors);
        ok = ok && designs[m];
        if (designs[m])
            design_warnings(s, &s->models[m], t, errors);
    }
    /* Checks, predictions and narrative naming a broken or unknown model
       skip it (its error is said); checks or report sections that could
       not be read leave nothing sound to check. */
    if (s->broken & (SPEC_BROKEN_OUTPUTS | SPEC_BROKEN_REPORT)) {
        for (size_t m = 0; m < n; m++)
            design_free(designs[m]);
        ok = false;
    } else {
        bool complete;
        analysis *a = analysis_prepare(s, t, designs, (const data_table *const *)views,
                                       &complete, errors); /* takes the designs */
        ok = narrate_check_references(a, errors) && complete && ok;
        analysis_free(a);
    }
    for (size_t m = 0; m < n; m++)
        view_free(views[m]);
    free(views);
    free(designs);
    return ok;
}

bool pipeline_check(const spec *s, unsigned data_flags, char **html_template,
                    data_table **table, error_list *errors)
{
    *html_template = NULL;
    *table = NULL;
    size_t errors_before = errors->count + errors->suppressed;
    bool ok = s->broken == 0;
    if (s->broken & SPEC_BROKEN_HEAD)
        return false; /* another version of the language: read no further */
    if (!(s->broken & SPEC_BROKEN_REPORT))
        ok = pipeline_before_computing(s, html_template, errors) && ok;
    data_table *t = NULL;
    if (!(s->broken & SPEC_BROKEN_DATA))
        t = data_load_with(s, data_flags, errors);
    ok = t && front_models(s, t, errors) && ok;
    ok = ok && errors->count + errors->suppressed == errors_before; /* warnings under --strict */
    if (!ok) {
        data_table_free(t);
        free(*html_template);
        *html_template = NULL;
        return false;
    }
    *table = t;
    return true;
}
