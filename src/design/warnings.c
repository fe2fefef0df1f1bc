/*
 * warnings.c — likely mistakes in a model's terms that do not stop a
 * build, said as warnings located in the spec (see design_warnings).
 *
 * Common practice, no source, for the thresholds: a column is read as a
 * row identifier when it is named like one (…id, …_ID) and holds distinct
 * whole numbers, or when, over at least WARN_MIN_ROWS rows, it counts
 * up by one from row to row; order_by has "many ties" when more than a
 * tenth of the rows share their value with an earlier row; a category has
 * "a level per row" when it has as many levels as rows with a value.
 * An interaction without its main effects breaks the marginality
 * principle (J. A. Nelder, "A reformulation of linear models", JRSS A 140,
 * 1977): its coefficients then change with the coding or origin of the
 * columns left out.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "design.h"
#include "../util/sort.h"

#define WARN_MIN_ROWS 20

static bool named_like_identifier(const char *name)
{
    size_t n = strlen(name);
    if (n < 2 || !(strcmp(name + n - 2, "id") == 0 || strcmp(name + n - 2, "ID") == 0 ||
                   strcmp(name + n - 2, "Id") == 0))
        return false;
    /* "id", "unit_id", "unitID", "UnitId"; not "paid" or "acid" */
    return n == 2 || name[n - 3] == '_' || name[n - 3] == '-' || name[n - 3] == ' ' ||
           name[n - 2] == 'I';
}

/* The column's values with a value, sorted; *n of them. Caller frees. */
static double *sorted_values(const data_column *c, const data_table *t, size_t *n)
{
    double *values = xmalloc((t->n_rows ? t->n_rows : 1) * sizeof(double));
    *n = 0;
    for (size_t row = 0; row < t->n_rows; row++)
        if (!isnan(c->numbers[row]))
            values[(*n)++] = c->numbers[row];
    sort_doubles(values, *n);
    return values;
}

static bool looks_like_identifier(const data_column *c, const data_table *t)
{
    if (c->kind != DATA_NUMERIC || c->derive)
        return false;
    bool counts_up = t->n_rows >= WARN_MIN_ROWS;
    for (size_t row = 0; row < t->n_rows && counts_up; row++)
        counts_up = c->numbers[row] == c->numbers[0] + (double)row;
    if (counts_up)
        return true;
    if (!named_like_identifier(c->name))
        return false;
    size_t n;
    double *values = sorted_values(c, t, &n);
    bool distinct_integers = n > 1;
    for (size_t i = 0; i < n && distinct_integers; i++)
        distinct_integers =
            values[i] == floor(values[i]) && (i == 0 || values[i] != values[i - 1]);
    free(values);
    return distinct_integers;
}

static void identifier_warning(const spec *s, const spec_term *term, size_t k,
                               const data_column *c, error_list *w)
{
    warning_at(
        w, s->path, term->column_at[k],
        "column '%s' looks like a row identifier (a different whole number on every "
        "row); as a predictor it fits a trend over those numbers: leave it out of the "
        "terms unless that is meant",
        c->name);
}

/* Whether model m has column name as a main effect or a polynomial. */
static bool has_main_effect(const spec_model *m, const char *name)
{
    for (size_t i = 0; i < m->n_terms; i++)
        if (m->terms[i].kind != SPEC_TERM_INTERACTION &&
            strcmp(m->terms[i].columns[0], name) == 0)
            return true;
    return false;
}

static void interaction_warnings(const spec *s, const spec_model *m, const spec_term *term,
                                 error_list *w)
{
    for (size_t k = 0; k < term->n_columns; k++) {
        if (has_main_effect(m, term->columns[k]))
            continue;
        warning_at(
            w, s->path, term->column_at[k],
            "model '%s' has an interaction with '%s' but not '%s' on its own, so the "
            "interaction's coefficients depend on how '%s' is coded or where its zero "
            "lies: add '%s' as a term, unless leaving it out is meant",
            m->id, term->columns[k], term->columns[k], term->columns[k], term->columns[k]);
    }
}

static void level_per_row_warning(const spec *s, const spec_term *term, size_t k,
                                  const data_column *c, const data_table *t, error_list *w)
{
    size_t with_value = t->n_rows - c->n_missing;
    if (c->kind != DATA_CATEGORY || c->n_levels < 3 || c->n_levels < with_value)
        return;
    warning_at(
        w, s->path, term->column_at[k],
        "category '%s' has a level for every row (%zu levels, %zu rows with a value), "
        "so each row gets its own coefficient and the model can only repeat the data: "
        "leave it out, or group its levels",
        c->name, c->n_levels, with_value);
}

/* Rows that share their order_by value with an earlier row. */
static size_t order_ties(const data_column *c, const data_table *t, size_t *n)
{
    if (c->kind == DATA_CATEGORY) {
        *n = t->n_rows - c->n_missing;
        return *n > c->n_levels ? *n - c->n_levels : 0;
    }
    double *values = sorted_values(c, t, n);
    size_t ties = 0;
    for (size_t i = 1; i < *n; i++)
        ties += values[i] == values[i - 1];
    free(values);
    return ties;
}

static void order_by_warning(const spec *s, const spec_model *m, const data_table *t,
                             error_list *w)
{
    const data_column *c = m->order_by ? data_find(t, m->order_by) : NULL;
    if (!c)
        return;
    size_t n, ties = order_ties(c, t, &n);
    if (n < 2 || ties * 10 <= n)
        return;
    warning_at(w, s->path, m->order_by_at,
               "order_by '%s' gives %zu of %zu rows the same value as an earlier row; rows "
               "with equal values keep their order in the file, and the independence check "
               "reads that order: order by a column that places every row (a time or a "
               "sequence number)",
               c->name, ties, n);
}

void design_warnings(const spec *s, const spec_model *m, const data_table *t,
                     error_list *warnings)
{
    for (size_t i = 0; i < m->n_terms; i++) {
        const spec_term *term = &m->terms[i];
        if (term->kind == SPEC_TERM_INTERACTION)
            interaction_warnings(s, m, term, warnings);
        for (size_t k = 0; k < term->n_columns; k++) {
            const data_column *c = data_find(t, term->columns[k]);
            if (!c)
                continue;
            if (term->kind != SPEC_TERM_INTERACTION && looks_like_identifier(c, t))
                identifier_warning(s, term, k, c, warnings);
            if (term->kind == SPEC_TERM_MAIN)
                level_per_row_warning(s, term, k, c, t, warnings);
        }
    }
    order_by_warning(s, m, t, warnings);
}
