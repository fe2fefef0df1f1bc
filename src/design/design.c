/*
 * design.c — turns a model's terms into design-matrix columns.
 *
 * Treatment coding: a category with levels L0 (reference), L1, … Lk-1
 * contributes k-1 indicator columns 1[x = Li]. An interaction contributes
 * the products of its components' columns (numeric × indicator, and so on),
 * in the order the components are written. A polynomial term contributes
 * x, x², …, x^degree (raw powers; the solver scales columns, so their very
 * different magnitudes do not cost accuracy).
 */
#include "design.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* The columns one component of a term contributes, before products. */
typedef struct {
    design_part parts[64];
    size_t count;
} factor_list;

static void suggest_column(buf *out, const data_table *t, const char *name)
{
    const char **names = xmalloc((t->n_columns ? t->n_columns : 1) * sizeof(char *));
    for (size_t j = 0; j < t->n_columns; j++)
        names[j] = t->columns[j].name;
    const char *close = closest_name(name, names, t->n_columns);
    free(names);
    if (close) {
        buf_printf(out, "; did you mean '%s'?", close);
        return;
    }
    buf_puts(out, "; the columns are");
    for (size_t j = 0; j < t->n_columns && j < 12; j++)
        buf_printf(out, "%s '%s'", j ? "," : "", t->columns[j].name);
    if (t->n_columns > 12)
        buf_puts(out, ", …");
}

static const data_column *lookup_column(const spec *s, const data_table *t,
                                        const char *name, src_mark at, error_list *errors)
{
    const data_column *column = data_find(t, name);
    if (!column) {
        buf hint;
        buf_init(&hint);
        suggest_column(&hint, t, name);
        error_at(errors, s->path, at, "column '%s' is not in the data file%s", name,
                   hint.data);
        buf_free(&hint);
    }
    return column;
}

static bool factors_of(const spec *s, const spec_term *term, size_t which,
                       const data_table *t, factor_list *out, error_list *errors)
{
    const data_column *column =
        lookup_column(s, t, term->columns[which], term->column_at[which], errors);
    out->count = 0;
    if (!column)
        return false;
    if (term->kind == SPEC_TERM_POLYNOMIAL) {
        if (column->kind != DATA_NUMERIC) {
            error_at(errors, s->path, term->column_at[which],
                       "a polynomial needs a numeric column, but '%s' is a category",
                       column->name);
            return false;
        }
        for (int k = 1; k <= term->degree; k++)
            out->parts[out->count++] = (design_part){column, NULL, -1, k};
        return true;
    }
    if (column->kind == DATA_NUMERIC) {
        out->parts[out->count++] = (design_part){column, NULL, -1, 1};
        return true;
    }
    if (column->n_levels < 2) {
        error_at(errors, s->path, term->column_at[which],
                   "category '%s' has %zu level%s in the data; a category term needs "
                   "at least two",
                   column->name, column->n_levels, column->n_levels == 1 ? "" : "s");
        return false;
    }
    if (column->n_levels - 1 > sizeof out->parts / sizeof out->parts[0]) {
        error_at(errors, s->path, term->column_at[which],
                   "category '%s' has %zu levels, more than fitproof codes in one term "
                   "(%zu); merge rare levels first",
                   column->name, column->n_levels,
                   sizeof out->parts / sizeof out->parts[0] + 1);
        return false;
    }
    for (size_t level = 0; level < column->n_levels; level++)
        if (level != column->reference)
            out->parts[out->count++] = (design_part){column, column->levels[level], (int32_t)level, 1};
    return true;
}

static char *part_label(const design_part *part)
{
    buf label;
    buf_init(&label);
    if (part->level)
        buf_printf(&label, "%s = %s", part->column->name, part->level);
    else if (part->power > 1)
        buf_printf(&label, "%s^%d", part->column->name, part->power);
    else
        buf_puts(&label, part->column->name);
    return buf_detach(&label);
}

static void add_coef(design *d, size_t *capacity, size_t term, const design_part *parts,
                     size_t n_parts)
{
    xgrow((void **)&d->coefs, capacity, d->n_coefs + 1, sizeof(design_coef));
    design_coef *coef = &d->coefs[d->n_coefs++];
    coef->term = term;
    coef->n_parts = n_parts;
    coef->parts = xmalloc((n_parts ? n_parts : 1) * sizeof(design_part));
    buf label;
    buf_init(&label);
    if (n_parts == 0)
        buf_puts(&label, "(intercept)");
    for (size_t i = 0; i < n_parts; i++) {
        coef->parts[i] = parts[i];
        char *piece = part_label(&parts[i]);
        buf_printf(&label, "%s%s", i ? " × " : "", piece);
        free(piece);
    }
    coef->label = buf_detach(&label);
}

/* Adds the coefficients of one term: the product of its factor lists. */
static bool add_term(design *d, size_t *capacity, const spec *s, size_t term_index,
                     const data_table *t, error_list *errors)
{
    const spec_term *term = &d->model->terms[term_index];
    factor_list lists[3];
    bool ok = true;
    for (size_t i = 0; i < term->n_columns; i++)
        ok = factors_of(s, term, i, t, &lists[i], errors) && ok;
    if (!ok)
        return false;
    size_t index[3] = {0, 0, 0};
    for (;;) {
        design_part parts[3];
        for (size_t i = 0; i < term->n_columns; i++)
            parts[i] = lists[i].parts[index[i]];
        if (term->kind == SPEC_TERM_POLYNOMIAL)
            add_coef(d, capacity, term_index, &parts[0], 1);
        else
            add_coef(d, capacity, term_index, parts, term->n_columns);
        if (term->kind == SPEC_TERM_POLYNOMIAL) {
            if (++index[0] == lists[0].count)
                return true;
            continue;
        }
        /* Odometer over the components, last one fastest. */
        size_t i = term->n_columns;
        while (i > 0) {
            i--;
            if (++index[i] < lists[i].count)
                break;
            index[i] = 0;
            if (i == 0)
                return true;
        }
    }
}

static long double part_value(const design_part *part, size_t row)
{
    if (part->level)
        return part->column->codes[row] == part->code;
    long double x = part->column->numbers[row];
    long double value = x;
    for (int k = 1; k < part->power; k++)
        value *= x;
    return value;
}

long double design_entry(const design *d, size_t i, size_t c)
{
    size_t row = d->used_rows[i];
    long double value = 1.0L;
    for (size_t k = 0; k < d->coefs[c].n_parts; k++)
        value *= part_value(&d->coefs[c].parts[k], row);
    return value;
}

static bool row_is_missing(const data_column *column, size_t row)
{
    return column->kind == DATA_NUMERIC ? isnan(column->numbers[row])
                                        : column->codes[row] < 0;
}

static bool row_complete(const design *d, size_t row)
{
    if (row_is_missing(d->response, row))
        return false;
    for (size_t c = 0; c < d->n_coefs; c++)
        for (size_t i = 0; i < d->coefs[c].n_parts; i++)
            if (row_is_missing(d->coefs[c].parts[i].column, row))
                return false;
    return true;
}

static void fill_matrix(design *d, const data_table *t)
{
    size_t *used = xmalloc((t->n_rows ? t->n_rows : 1) * sizeof(size_t));
    d->dropped_lines = xmalloc((t->n_rows ? t->n_rows : 1) * sizeof(uint32_t));
    for (size_t row = 0; row < t->n_rows; row++) {
        if (row_complete(d, row))
            used[d->n_used++] = row;
        else
            d->dropped_lines[d->n_dropped++] = t->lines[row];
    }
    d->used_rows = used;
    if (d->n_used == 0 || d->n_coefs == 0)
        return;
    d->x = gsl_matrix_alloc(d->n_used, d->n_coefs);
    d->y = gsl_vector_alloc(d->n_used);
    for (size_t i = 0; i < d->n_used; i++) {
        size_t row = used[i];
        gsl_vector_set(d->y, i, d->response->numbers[row]);
        for (size_t c = 0; c < d->n_coefs; c++)
            gsl_matrix_set(d->x, i, c, (double)design_entry(d, i, c));
    }
}

static bool check_response(design *d, const spec *s, const data_table *t, error_list *errors)
{
    const spec_model *m = d->model;
    d->response = lookup_column(s, t, m->response, m->response_at, errors);
    if (!d->response)
        return false;
    if (d->response->kind != DATA_NUMERIC) {
        error_at(errors, s->path, m->response_at,
                   "the response '%s' must be numeric, but the data make it a category; "
                   "fix the non-numeric values or choose a numeric column",
                   m->response);
        return false;
    }
    for (size_t i = 0; i < m->n_terms; i++)
        for (size_t k = 0; k < m->terms[i].n_columns; k++)
            if (strcmp(m->terms[i].columns[k], m->response) == 0) {
                error_at(errors, s->path, m->terms[i].column_at[k],
                           "the response '%s' cannot also be a term of its own model",
                           m->response);
                return false;
            }
    return true;
}

design *design_new(const spec *s, const spec_model *m, const data_table *t, error_list *errors)
{
    size_t errors_before = errors->count;
    design *d = xcalloc(1, sizeof *d);
    d->model = m;
    size_t capacity = 0;
    bool ok = check_response(d, s, t, errors);
    if (m->intercept)
        add_coef(d, &capacity, SIZE_MAX, NULL, 0);
    for (size_t i = 0; i < m->n_terms; i++)
        ok = add_term(d, &capacity, s, i, t, errors) && ok;
    if (ok && d->n_coefs == 0)
        error_at(errors, s->path, m->at,
                   "model '%s' has no intercept and no terms; add a term", m->id);
    if (!ok || errors->count > errors_before) {
        design_free(d);
        return NULL;
    }
    fill_matrix(d, t);
    if (d->n_used == 0) {
        error_at(errors, s->path, m->at,
                   "model '%s' has no complete rows: every row misses a value in a "
                   "column it uses",
                   m->id);
        design_free(d);
        return NULL;
    }
    return d;
}

void design_free(design *d)
{
    if (!d)
        return;
    for (size_t c = 0; c < d->n_coefs; c++) {
        free(d->coefs[c].label);
        free(d->coefs[c].parts);
    }
    free(d->coefs);
    gsl_matrix_free(d->x);
    gsl_vector_free(d->y);
    gsl_vector_free(d->weights);
    free(d->dropped_lines);
    free(d->used_rows);
    free(d);
}
