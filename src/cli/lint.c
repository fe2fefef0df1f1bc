/*
 * lint.c — fitproof lint: runs the stages a build runs up to the designs
 * (spec, the exporters and page template the report asks for, data, each
 * model's design, the checks, prediction rows and the values the narrative
 * cites) and stops before fitting, so that every
 * error a build would report for the spec and the data is reported, and
 * nothing is computed or written.
 *
 * Each design is built on a few rows only (up to LINT_ROWS rows complete
 * in the model's columns), so that checking a model of a large file costs
 * neither the time nor the memory of its full design matrix: the checks a
 * design makes (columns, kinds, levels, terms) depend on the columns, not
 * on the number of rows.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../narrate/narrate.h"
#include "cli.h"

#define LINT_ROWS 1000

static bool cell_missing(const data_column *c, size_t row)
{
    return c->kind == DATA_NUMERIC ? isnan(c->numbers[row]) : c->codes[row] < 0;
}

/* Whether row has a value in every column the model names (columns the
   table lacks are left for the design to report). */
static bool row_complete(const data_table *t, const spec_model *m, size_t row)
{
    const data_column *c = data_find(t, m->response);
    if (c && cell_missing(c, row))
        return false;
    c = m->weights ? data_find(t, m->weights) : NULL;
    if (c && cell_missing(c, row))
        return false;
    for (size_t i = 0; i < m->n_terms; i++)
        for (size_t k = 0; k < m->terms[i].n_columns; k++) {
            c = data_find(t, m->terms[i].columns[k]);
            if (c && cell_missing(c, row))
                return false;
        }
    return true;
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

/* Builds model m's design on up to LINT_ROWS complete rows (or on the
   whole table when no row is complete, so that the design says so). The
   view the design reads is left in *view, for the caller to free. */
static design *lint_design(const spec *s, const spec_model *m, const data_table *t,
                           data_table **view, error_list *errors)
{
    size_t rows[LINT_ROWS], n = 0;
    for (size_t row = 0; row < t->n_rows && n < LINT_ROWS; row++)
        if (row_complete(t, m, row))
            rows[n++] = row;
    *view = n ? view_new(t, rows, n) : NULL;
    return design_new(s, m, *view ? *view : t, errors);
}

/* Every model's design, then what a build checks before fitting: the
   diagnostics' columns, the checks, the prediction rows and the values the
   narrative cites. */
static bool lint_models(const spec *s, const data_table *t, error_list *errors)
{
    size_t n = s->n_models;
    design **designs = xcalloc(n ? n : 1, sizeof *designs);
    data_table **views = xcalloc(n ? n : 1, sizeof *views);
    bool ok = true;
    for (size_t m = 0; m < n; m++) {
        designs[m] = lint_design(s, &s->models[m], t, &views[m], errors);
        ok = ok && designs[m];
    }
    analysis *a = NULL;
    if (ok)
        a = analysis_prepare(s, t, designs, errors); /* takes the designs */
    else
        for (size_t m = 0; m < n; m++)
            design_free(designs[m]);
    ok = a && narrate_check_references(a, errors);
    analysis_free(a);
    for (size_t m = 0; m < n; m++)
        view_free(views[m]);
    free(views);
    free(designs);
    return ok;
}

static void print_summary(const spec *s, const data_table *t)
{
    size_t categories = 0;
    for (size_t j = 0; j < t->n_columns; j++)
        categories += t->columns[j].kind == DATA_CATEGORY;
    printf("fitproof: %s is ready to build: %zu row%s of %s", s->path, t->n_rows,
           t->n_rows == 1 ? "" : "s", s->data.path);
    if (s->where)
        printf(" (%zu of %zu removed by where)", t->n_removed, t->rows_read);
    printf(", %zu column%s (%zu numeric, %zu categor%s), %zu model%s\n", t->n_columns,
           t->n_columns == 1 ? "" : "s", t->n_columns - categories, categories,
           categories == 1 ? "y" : "ies", s->n_models, s->n_models == 1 ? "" : "s");
}

int command_lint(const char *spec_path)
{
    error_list errors;
    error_list_init(&errors);
    spec *s = spec_load(spec_path, &errors);
    bool ready = s && pipeline_check_before_computing(s, &errors);
    data_table *t = s ? data_load_with(s, DATA_LOAD_NO_DIGEST, &errors) : NULL;
    bool ok = t && lint_models(s, t, &errors) && ready;
    if (ok)
        print_summary(s, t);
    error_list_print(&errors);
    data_table_free(t);
    spec_free(s);
    error_list_free(&errors);
    return ok ? EXIT_OK : EXIT_USER_ERROR;
}
