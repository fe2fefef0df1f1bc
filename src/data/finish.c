/*
 * finish.c — after the rows are read: the bound on the levels of declared
 * categories, the final order of each category's levels, and scaffold's
 * adjustments.
 */
#include <stdlib.h>
#include <string.h>

#include "loader.h"

/* ---- after the rows -------------------------------------------------------- */

static bool filter_uses(const spec_filter *f, const char *name)
{
    if (f->kind == SPEC_FILTER_COMPARE)
        return strcmp(f->column, name) == 0;
    for (size_t i = 0; i < f->n_children; i++)
        if (filter_uses(&f->children[i], name))
            return true;
    return false;
}

/* The model that names column name (or NULL); *filtered when a where
   filter does. */
static const spec_model *model_using(const spec *s, const char *name, bool *filtered)
{
    *filtered = s->where && filter_uses(s->where, name);
    for (size_t m = 0; m < s->n_models; m++) {
        const spec_model *model = &s->models[m];
        if (model->broken) /* a spec error inside it was reported */
            continue;
        bool uses = strcmp(model->response, name) == 0 ||
                    (model->weights && strcmp(model->weights, name) == 0);
        for (size_t i = 0; i < model->n_terms; i++)
            for (size_t k = 0; k < model->terms[i].n_columns; k++)
                uses = uses || strcmp(model->terms[i].columns[k], name) == 0;
        if (uses)
            return model;
    }
    return NULL;
}

/* A declared category used by a model or a filter may have at most
   DATA_MAX_LEVELS levels; one nothing uses (an identifier kept as text)
   may have any number. */
bool loader_check_level_bound(loader *ld)
{
    bool ok = true;
    for (size_t j = 0; j < ld->n_columns; j++) {
        column_state *st = &ld->states[j];
        bool filtered;
        if (st->numeric || st->inferred || st->n_levels <= DATA_MAX_LEVELS)
            continue;
        const spec_model *model = model_using(ld->s, st->column->name, &filtered);
        if (!model && !filtered)
            continue;
        buf user;
        buf_init(&user);
        if (model)
            buf_printf(&user, "model '%s' uses", model->id);
        else
            buf_puts(&user, "where filters on");
        error_at(ld->errors, ld->s->path, st->declared->at,
                 "column '%s' is declared a category and %s it, but it has %zu different "
                 "values, more than the %d a category may have; if it identifies rows, leave "
                 "it out of the models",
                 st->column->name, user.data, st->n_levels, DATA_MAX_LEVELS);
        buf_free(&user);
        ok = false;
    }
    return ok;
}

typedef struct {
    const char *name;
    int32_t code;
} level_entry;

static int compare_level_entries(const void *a, const void *b)
{
    return strcmp(((const level_entry *)a)->name, ((const level_entry *)b)->name);
}

/* Sets the column's levels (declared order, else byte order) and makes
   the row codes index them. */
void loader_finish_levels(column_state *st, size_t n_rows)
{
    data_column *column = st->column;
    size_t n = st->n_levels;
    column->levels = xmalloc((n ? n : 1) * sizeof(char *));
    column->n_levels = n;
    if (st->declared && st->declared->levels) {
        for (size_t i = 0; i < n; i++)
            column->levels[i] = xstrdup(st->declared->levels[i]);
        return;
    }
    level_entry *entries = xmalloc((n ? n : 1) * sizeof *entries);
    for (uint32_t e = 0; e < st->set.count; e++)
        if (st->entry_codes[e] >= 0)
            entries[st->entry_codes[e]] = (level_entry){level_set_name(&st->set, e),
                                                        st->entry_codes[e]};
    qsort(entries, n, sizeof *entries, compare_level_entries);
    int32_t *rank = xmalloc((n ? n : 1) * sizeof(int32_t));
    for (size_t i = 0; i < n; i++) {
        column->levels[i] = xstrdup(entries[i].name);
        rank[entries[i].code] = (int32_t)i;
    }
    bool identity = true;
    for (size_t i = 0; i < n; i++)
        identity = identity && rank[i] == (int32_t)i;
    for (size_t row = 0; !identity && row < n_rows; row++)
        if (column->codes[row] >= 0)
            column->codes[row] = rank[column->codes[row]];
    free(rank);
    free(entries);
}

/* DATA_LOAD_SCAFFOLD: integers beyond 2^53 make an inferred column a
   category (re-read in full); missing words of numeric columns are
   collected for the table. */
void loader_scaffold_adjust(loader *ld)
{
    data_table *t = ld->t;
    for (size_t j = 0; j < ld->n_columns; j++) {
        column_state *st = &ld->states[j];
        if (st->numeric && st->deferred == DEFER_BIG_INTEGER) {
            loader_switch_to_category(ld, st, t->n_rows);
            st->column->big_integers = true;
        }
        if (!st->numeric)
            continue;
        for (size_t i = 0; i < st->n_pending; i++) {
            bool known = false;
            for (size_t k = 0; k < t->n_suggested_missing; k++)
                known = known || strcmp(t->suggested_missing[k], st->pending[i]) == 0;
            if (known)
                continue;
            t->suggested_missing = xrealloc(t->suggested_missing,
                                            (t->n_suggested_missing + 1) * sizeof(char *));
            t->suggested_missing[t->n_suggested_missing++] = xstrdup(st->pending[i]);
        }
    }
}

